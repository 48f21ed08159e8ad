"""From a validated scenario to the numbers of the plasma zone: volume, flow, residence
time, gas density, power and specific energy input, capacitances and surface losses.

All functions take the normalised scenario mapping of
:func:`plasmazero.data.scenario.validate_scenario` and return SI values.
"""

from __future__ import annotations

import math

from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.scenario import STANDARD_P_PA, STANDARD_T_K
from plasmazero.physics import discharge, transport
from plasmazero.physics.constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C

#: Secondary-emission coefficient of the Townsend breakdown criterion when none is given
#: (order of magnitude for dielectric surfaces; common practice, no source).
DEFAULT_SECONDARY_EMISSION = 0.01

#: Lennard-Jones collision diameters, m, used as hard-sphere diameters for the diffusion of
#: radicals to pellet surfaces. Values from memory of the tables of Hirschfelder, Curtiss &
#: Bird (1954) and Poling, Prausnitz & O'Connell (2001), Appendix B; atoms and radicals
#: without a tabulated value (O3, atoms, radicals) take DEFAULT_DIAMETER_M (an order-of-magnitude
#: choice of this code, no source).
COLLISION_DIAMETER_M = {
    "H2": 2.827e-10, "O2": 3.467e-10, "N2": 3.798e-10, "CO": 3.690e-10, "CO2": 3.941e-10,
    "H2O": 2.641e-10, "Ar": 3.542e-10, "He": 2.551e-10, "CH4": 3.758e-10,
    "CH3OH": 3.626e-10,
}
DEFAULT_DIAMETER_M = 3.0e-10
#: Lennard-Jones well depths epsilon/k, K, of the same table as COLLISION_DIAMETER_M
#: (Poling, Prausnitz & O'Connell 2001, Appendix B, from memory), for the collision
#: integral of the thermal-conductivity estimate; gases without a value count as rigid
#: spheres (Omega = 1)
LJ_EPSILON_K = {
    "H2": 59.7, "O2": 106.7, "N2": 71.4, "CO": 91.7, "CO2": 195.2, "H2O": 809.1, "Ar": 93.3,
    "He": 10.22, "CH4": 148.6, "CH3OH": 481.8,
}

ATOMIC_MASS_AMU = {"H": 1.008, "C": 12.011, "O": 15.999, "N": 14.007, "Ar": 39.948,
                   "He": 4.0026, "E": 5.48579909e-4}


def gas_density_m3(pressure_Pa, T_K):
    """Ideal-gas number density n = p / (k T), m^-3."""
    return pressure_Pa / (BOLTZMANN_J_K * T_K)


def discharge_volume_m3(reactor):
    """Volume of the discharge gap, m^3 (before subtracting packing)."""
    geometry = reactor["geometry"]
    if geometry == "volume":
        return reactor["volume_m3"]
    if geometry == "planar":
        return reactor["gap_m"] * reactor["length_m"] * reactor["width_m"]
    r_in = 0.5 * reactor["inner_diameter_m"]
    r_out = r_in + reactor["gap_m"]
    return math.pi * (r_out**2 - r_in**2) * reactor["length_m"]


def electrode_area_m2(reactor):
    """Area of the gap face that the dielectric covers, m^2 (outer face for coaxial)."""
    geometry = reactor["geometry"]
    if geometry == "volume":
        return reactor["volume_m3"] / reactor["gap_m"]
    if geometry == "planar":
        return reactor["length_m"] * reactor["width_m"]
    return math.pi * (reactor["inner_diameter_m"] + 2 * reactor["gap_m"]) * reactor["length_m"]


def gas_volume_m3(reactor):
    """Volume the gas occupies in the discharge zone: the gap times the bed porosity."""
    bed = reactor.get("packed_bed")
    return discharge_volume_m3(reactor) * (bed["porosity"] if bed else 1.0)


def actual_flow_m3_s(feed):
    """Volumetric flow at the reactor's pressure and inlet temperature, m^3/s."""
    return feed["flow_std_m3_s"] * (feed["temperature_K"] / STANDARD_T_K) * (STANDARD_P_PA / feed["pressure_Pa"])


def molecule_flow_1_s(feed):
    """Feed flow in molecules per second (from the standard flow)."""
    return feed["flow_std_m3_s"] * gas_density_m3(STANDARD_P_PA, STANDARD_T_K)


def residence_time_s(scenario):
    """Time the gas spends in the discharge zone, tau = V_gas / Q (plug flow, inlet conditions)."""
    return gas_volume_m3(scenario["reactor"]) / actual_flow_m3_s(scenario["feed"])


def capacitances_F(reactor):
    """(dielectric capacitance, gap capacitance), F, of the reactor.

    The gap is filled with gas (relative permittivity 1; a packed bed's pellets raise the
    gap capacitance, which this estimate neglects: give ``capacitance_F`` if known).
    """
    diel = reactor["dielectric"]
    area = electrode_area_m2(reactor)
    if reactor["geometry"] == "coaxial":
        r_in = 0.5 * reactor["inner_diameter_m"]
        r_gap = r_in + reactor["gap_m"]
        c_gap = discharge.coaxial_capacitance_F(reactor["length_m"], r_in, r_gap, 1.0)
        if "capacitance_F" in diel:
            return diel["capacitance_F"], c_gap
        c_d = discharge.coaxial_capacitance_F(reactor["length_m"], r_gap, r_gap + diel["thickness_m"],
                                              diel["relative_permittivity"])
        return c_d, c_gap
    c_gap = discharge.planar_capacitance_F(area, reactor["gap_m"], 1.0)
    if "capacitance_F" in diel:
        return diel["capacitance_F"], c_gap
    return discharge.planar_capacitance_F(area, diel["thickness_m"], diel["relative_permittivity"]), c_gap


def absorbed_power_W(scenario, breakdown_E_N_Td=None, file=None):
    """Power absorbed by the discharge, W, from whichever way the scenario gives it.

    ``sei_kJ_L`` is per standard litre of feed; ``sei_eV_per_molecule`` per feed
    molecule; ``applied`` uses Manley's equation
    (:func:`plasmazero.physics.discharge.manley_power_W`) with the burning voltage given,
    or U_b = (E/N)_b N d from ``breakdown_E_N_Td``.
    """
    power, feed = scenario["power"], scenario["feed"]
    if "absorbed_W" in power:
        return power["absorbed_W"]
    if "sei_kJ_L" in power:
        return power["sei_kJ_L"] * 1e3 * feed["flow_std_m3_s"] * 1e3
    if "sei_eV_per_molecule" in power:
        return power["sei_eV_per_molecule"] * ELEMENTARY_CHARGE_C * molecule_flow_1_s(feed)
    applied = power["applied"]
    c_d, c_g = capacitances_F(scenario["reactor"])
    u_b = applied.get("burning_voltage_V")
    if u_b is None:
        if breakdown_E_N_Td is None:
            raise InputError([format_problem(file, "power.applied.burning_voltage_V",
                                             "not given and no breakdown field could be computed")])
        N = gas_density_m3(feed["pressure_Pa"], scenario["gas_temperature"].get("temperature_K", feed["temperature_K"]))
        u_b = discharge.burning_voltage_V(breakdown_E_N_Td, N, scenario["reactor"]["gap_m"])
    p = discharge.manley_power_W(applied["amplitude_V"], applied["frequency_Hz"], u_b, c_d, c_g)
    return p


def sei(power_W, feed):
    """Specific energy input: (kJ per standard litre, eV per feed molecule)."""
    kJ_L = power_W / (feed["flow_std_m3_s"] * 1e3) / 1e3
    eV = power_W / molecule_flow_1_s(feed) / ELEMENTARY_CHARGE_C
    return kJ_L, eV


def species_mass_amu(composition):
    """Molecular mass, amu, from an element composition (standard atomic weights, IUPAC)."""
    return sum(ATOMIC_MASS_AMU.get(el, float("nan")) * n for el, n in composition.items())


def surface_loss_terms(scenario, species, compositions, T_K, file=None):
    """First-order loss frequencies and loss products of a packed bed, SI.

    Each listed species is lost at nu = 1 / (Lambda^2/D + (V/A) 2 (2 - gamma)/(v gamma))
    (Chantry 1987) in the voids of the bed (:func:`plasmazero.physics.transport.packed_bed_void_geometry`),
    with D the hard-sphere diffusion coefficient in the feed mixture by Blanc's law
    (1/D = sum_j x_j / D_ij).

    Returns
    -------
    (loss_frequency_s (n_s,), loss_products (n_s, n_s)) as lists of lists, or (None, None)
    when there is no packed bed.
    """
    import numpy as np

    bed = scenario["reactor"].get("packed_bed")
    if not bed or not bed.get("surface_losses"):
        return None, None
    n = len(species)
    index = {s: i for i, s in enumerate(species)}
    nu = np.zeros(n)
    prod = np.zeros((n, n))
    lam, v_over_a = transport.packed_bed_void_geometry(bed["porosity"], bed["pellet_diameter_m"])
    feed = scenario["feed"]
    N = gas_density_m3(feed["pressure_Pa"], T_K)
    problems = []
    for k, loss in enumerate(bed["surface_losses"]):
        name = loss["species"]
        where = f"reactor.packed_bed.surface_losses[{k}]"
        if name not in index:
            problems.append(format_problem(file, where, f"species {name!r} is not in the mechanism"))
            continue
        for product in loss["products"]:
            if product not in index:
                problems.append(format_problem(file, f"{where}.products", f"species {product!r} is not in the mechanism"))
        m_i = species_mass_amu(compositions[name])
        inv_d = 0.0
        for gas, x in feed["mole_fractions"].items():
            if x <= 0 or gas not in compositions:
                continue
            d_ij = transport.hard_sphere_diffusion_m2_s(
                T_K, N, m_i, species_mass_amu(compositions[gas]),
                COLLISION_DIAMETER_M.get(name, DEFAULT_DIAMETER_M), COLLISION_DIAMETER_M.get(gas, DEFAULT_DIAMETER_M))
            inv_d += x / d_ij
        D = 1.0 / inv_d
        nu[index[name]] = transport.wall_loss_frequency_s(D, lam, v_over_a, loss["sticking"],
                                                          transport.mean_speed_m_s(T_K, m_i))
        for product, c in loss["products"].items():
            if product in index:
                prod[index[name], index[product]] += c
    if problems:
        raise InputError(problems)
    return nu, prod


def heat_loss_coefficient(scenario, compositions, cp_J_K, T_K):
    """Wall heat-transfer coefficient G (W m^-3 K^-1) and thermal conductivity (W/m/K).

    ``gas_temperature.heat_loss_W_m3_K`` when given; otherwise conduction,
    G = lambda / Lambda^2 (:func:`plasmazero.physics.transport.conduction_heat_loss_W_m3_K`),
    with Lambda = gap / pi between the electrodes (planar, and coaxial with a gap small
    against the radii), or the diffusion length of the voids in a packed bed (the pellets
    are the walls). lambda is ``gas_temperature.thermal_conductivity_W_m_K`` or the
    mole-fraction mean of the Eucken estimates (Lennard-Jones collision integral) of the
    feed gases at ``T_K``
    (:func:`plasmazero.physics.transport.eucken_thermal_conductivity_W_m_K`; a rough
    mixing rule, within the 10-20 % of the estimate itself for similar molecules, worse
    for H2 mixtures: give the measured value when it matters).

    Parameters
    ----------
    scenario : dict
        Validated scenario.
    compositions : dict
        Species -> element composition.
    cp_J_K : dict
        Feed species -> c_p per molecule at ``T_K``, J/K.
    T_K : float
        Feed temperature, K.
    """
    gas_t = scenario["gas_temperature"]
    feed = scenario["feed"]
    lam = gas_t.get("thermal_conductivity_W_m_K")
    if lam is None:
        lam = 0.0
        for gas, x in feed["mole_fractions"].items():
            if x > 0:
                eps = LJ_EPSILON_K.get(gas)
                omega = 1.0 if eps is None else transport.lennard_jones_omega22(T_K / eps)
                lam += x * transport.eucken_thermal_conductivity_W_m_K(
                    T_K, species_mass_amu(compositions[gas]),
                    COLLISION_DIAMETER_M.get(gas, DEFAULT_DIAMETER_M), cp_J_K[gas], omega)
    if "heat_loss_W_m3_K" in gas_t:
        return float(gas_t["heat_loss_W_m3_K"]), float(lam)
    bed = scenario["reactor"].get("packed_bed")
    if bed:
        length, _ = transport.packed_bed_void_geometry(bed["porosity"], bed["pellet_diameter_m"])
    else:
        length = scenario["reactor"]["gap_m"] / math.pi
    return transport.conduction_heat_loss_W_m3_K(lam, length), float(lam)
