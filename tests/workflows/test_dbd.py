"""The DBD scenario workflow against hand computations, conservation laws and the ranges
reported for real reactors.

Runs use few filaments to stay quick; what they check does not depend on the count.
"""

import copy
import math

import numpy as np
import pytest

from plasmazero.data.scenario import validate_scenario
from plasmazero.data.errors import InputError
from plasmazero.data.yamlio import read_yaml
from plasmazero.workflows import analysis, dbd, reactor
from plasmazero.workflows.examples import example_path


def _scenario(name, **changes):
    doc = copy.deepcopy(dict(read_yaml(example_path(name))))
    for path, value in changes.items():
        keys = path.split(".")
        node = doc
        for k in keys[:-1]:
            node = node[k]
        node[keys[-1]] = value
    return validate_scenario(doc, example_path(name))


@pytest.fixture(scope="module")
def co2_run():
    sc = _scenario("co2_splitting", **{"discharge.pulses": 8})
    return dbd.run(dbd.prepare(sc, example_path("co2_splitting")))


def test_residence_time_and_sei_by_hand():
    # coaxial gap volume pi((r+g)^2 - r^2) L, tau = V/Q at inlet conditions (plug flow; common practice)
    sc = _scenario("co2_splitting")
    r, g, L = 0.01, 1e-3, 0.05
    V = math.pi * ((r + g) ** 2 - r**2) * L
    Q = 50e-6 / 60 * (300 / 273.15) * (101325 / 1e5)
    assert reactor.residence_time_s(sc) == pytest.approx(V / Q, rel=1e-12)
    # 1 kJ/L and eV/molecule definitions (common practice): P / Q_std and P / (Q_std n_std e)
    P = 10.0
    kJ_L, eV = reactor.sei(P, sc["feed"])
    assert kJ_L == pytest.approx(P / (50e-3 / 60) / 1e3, rel=1e-12)
    n_std = 101325 / (1.380649e-23 * 273.15)
    assert eV == pytest.approx(P / (50e-6 / 60 * n_std) / 1.602176634e-19, rel=1e-12)


def test_energy_bookkeeping_and_conservation(co2_run):
    s = analysis.summary(co2_run)
    # the energy given to the parcel equals the specific energy input (design requirement)
    assert s["energy_deposited_J_m3"] == pytest.approx(s["energy_input_J_m3"], rel=1e-6)
    # the split adds up to what was deposited (Boltzmann power balance, residual < 1e-6)
    assert sum(co2_run.energy_split_J_m3.values()) == pytest.approx(s["energy_deposited_J_m3"], rel=1e-5)
    # elements per parcel conserved with gas expansion (molar-flow bookkeeping)
    assert s["element_balance_error"] < 1e-8
    assert s["expansion_factor"] > 1.0          # CO2 -> CO + 1/2 O2 adds molecules
    assert s["quasi_neutrality"] < 1e-3


def test_pure_co2_in_the_range_of_dbd_reactors(co2_run):
    s = analysis.summary(co2_run)
    # DBD CO2 splitting at a few eV/molecule: conversion of a few to ~30 %, energy efficiency
    # of a few to ~15 % (ranges of the CO2-conversion reviews, e.g. Chem. Soc. Rev. 46 (2017)
    # 5805, recalled from memory; common practice: DBDs stay below ~15 % efficiency)
    assert 0.01 < s["conversion"]["CO2"] < 0.35
    assert 0.01 < s["energy_efficiency"] < 0.2
    # carbon goes to CO (common practice: CO is the only significant carbon product)
    assert s["selectivity"]["C"]["CO"] > 0.95
    # vibrational excitation takes a large share near 100 Td (Fridman 2008, Plasma Chemistry, ch. 5)
    assert s["energy_split_fraction"]["vibrational"] > 0.1


def test_zero_power_changes_nothing():
    sc = _scenario("co2_splitting", **{"power": {"absorbed_W": 0.0}, "discharge.pulses": 3})
    res = dbd.run(dbd.prepare(sc, example_path("co2_splitting")))
    s = analysis.summary(res)
    assert s["conversion"]["CO2"] == pytest.approx(0.0, abs=1e-12)
    assert res.energy_deposited_J_m3 == pytest.approx(0.0, abs=1e-20)   # J/m3: nothing
    assert np.all(res.electron_density_m3 < 1e7)   # m^-3: at the absolute tolerance (1e6 m^-3) of the solver


def test_co2_h2_products_and_bed_feed():
    sc = _scenario("co2_h2_packed_bed_demo", **{"discharge.pulses": 6})
    res = dbd.run(dbd.prepare(sc, example_path("co2_h2_packed_bed_demo")))
    s = analysis.summary(res)
    sel_c, sel_o = s["selectivity"]["C"], s["selectivity"]["O"]
    # CO the main carbon product, H2O the main oxygen product, methanol a small share
    # (common practice: plasma alone is poorly selective to methanol)
    assert max(sel_c, key=sel_c.get) == "CO"
    assert max(sel_o, key=sel_o.get) in ("H2O", "CO")
    assert sel_o["H2O"] > 0.1
    assert sel_c.get("CH3OH", 0.0) < 0.05
    bed = analysis.bed_feed(res)
    rows = {r["species"]: r for r in bed["rows"]}
    assert sum(r["mole_fraction"] for r in bed["rows"]) == pytest.approx(1.0, rel=1e-12)
    # kinetic-theory flux n v/4 with v = sqrt(8kT/(pi m)) (common practice)
    h = rows["H"]
    v = math.sqrt(8 * 1.380649e-23 * 350 / (math.pi * 1.008 * 1.66053906660e-27))
    assert h["flux_m2_s"] == pytest.approx(h["density_m3"] * v / 4, rel=1e-9)
    assert h["partial_pressure_Pa"] == pytest.approx(h["mole_fraction"] * 1e5, rel=1e-12)
    assert "packed bed" in bed["where"]
    p = analysis.pathways(res, "CO")
    assert p["production"] and p["production"][0]["percent"] <= 100.0
    assert sum(r["percent"] for r in p["production"]) <= 100.0 + 1e-9


def test_self_sustaining_field_from_townsend_criterion():
    # (alpha - eta) d = ln(1 + 1/gamma) (Townsend criterion; Raizer 1991): computed field
    # reproduces the criterion on the swarm table it came from
    sc = _scenario("co2_splitting")
    setup = dbd.prepare(sc, example_path("co2_splitting"))
    assert 80.0 < setup.breakdown_E_N_Td < 200.0   # above the CO2 critical field ~85 Td (Dutton 1975, from memory)


def test_feed_species_missing_from_mechanism_is_one_line_error():
    sc = _scenario("co2_splitting", **{"feed.mole_fractions": {"CO2": 0.5, "Xe": 0.5}})
    with pytest.raises(InputError, match="feed.mole_fractions.Xe: species not in mechanism"):
        dbd.prepare(sc, example_path("co2_splitting"))


def test_ozone_generator_yield_and_concentration():
    # Oxygen-fed DBD ozone generators (Kogelschatz 2003, Plasma Chem. Plasma Process. 23, 1,
    # from memory): concentrations of a few wt% (tens of g/m3) at energy yields of the order of
    # 100-200 g/kWh in large generators, with a theoretical limit near 1200 g/kWh. The model keeps
    # the gas at 310 K (no filament heating, no e + O3 cross section), so it sits above the
    # practical yields; the band checks the order of magnitude: 100-800 g/kWh, 5-300 g/m3.
    sc = _scenario("ozone_generator", **{"power": {"sei_kJ_L": 0.5}, "discharge.pulses": 10})
    res = dbd.run(dbd.prepare(sc, example_path("ozone_generator")))
    i = res.species.index("O3")
    o3_per_inlet_m3 = analysis.molar_amounts(res, len(res.times_s) - 1)[i]
    g_per_kWh = o3_per_inlet_m3 * 47.998 / 6.02214076e23 / (res.setup.energy_density_J_m3 / 3.6e6)
    x = res.densities_m3[-1, i] / res.densities_m3[-1].sum()
    g_per_m3_stp = x * 101325 / (1.380649e-23 * 273.15) * 47.998 / 6.02214076e23
    assert 100.0 < g_per_kWh < 800.0, g_per_kWh
    assert 5.0 < g_per_m3_stp < 300.0, g_per_m3_stp


@pytest.fixture(scope="module")
def co2_heated():
    """Pure CO2 with the gas energy equation, adiabatic (no wall loss) and with conduction."""
    runs = {}
    for key, extra in (("adiabatic", {"heat_loss_W_m3_K": 0.0}), ("conduction", {})):
        sc = _scenario("co2_splitting", **{"discharge.pulses": 6,
                                            "gas_temperature": {"mode": "energy_equation", **extra}})
        runs[key] = dbd.run(dbd.prepare(sc, example_path("co2_splitting")))
    return runs


def _parcel_enthalpy_J(result, row):
    from plasmazero.physics.thermo import h_RT
    mech = result.setup.compiled
    T = float(result.gas_temperature_K[row])
    h = np.empty(len(mech.species))
    h_RT(mech.nasa7_coeffs, mech.nasa7_T_K, mech.energy_shift_J_mol, T, h)
    return float(np.sum(h * 1.380649e-23 * T * result.densities_m3[row]) * result.expansion_factor[row])


def test_energy_equation_first_law_and_conservation(co2_heated):
    res = co2_heated["adiabatic"]
    s = analysis.summary(res)
    # the energy given to the parcel is still the specific energy input
    assert s["energy_deposited_J_m3"] == pytest.approx(s["energy_input_J_m3"], rel=1e-6)
    # first law at constant pressure, adiabatic: the enthalpy per inlet volume rises by the
    # deposited energy (common practice, no source; thermo of the shipped NASA-7 tables)
    dH = _parcel_enthalpy_J(res, -1) - _parcel_enthalpy_J(res, 0)
    assert dH == pytest.approx(s["energy_deposited_J_m3"], rel=1e-4)
    assert s["element_balance_error"] < 1e-8
    # 2 eV per molecule, of which ~12 % stored as CO + 1/2 O2: the rest heats CO2
    # (c_p ~ 37 J/mol/K near 300-1000 K, NIST-JANAF, from memory) by several hundred kelvin
    assert s["gas_temperature_exit_K"] > 600.0
    assert s["gas_temperature_mode"] == "energy_equation"


def _thermal_conductivity_chemicals():
    """CO2 at 300 K: Perry's Handbook (8th ed.) Table 2-314 correlation, from the copy in
    the chemicals library (DIPPR equation 102)."""
    from chemicals import thermal_conductivity as tc
    from chemicals.dippr import EQ102
    tc._load_k_data()
    c = tc.k_data_Perrys_8E_2_314.loc["124-38-9"]
    return float(EQ102(300.0, *[float(c[k]) for k in ("C1", "C2", "C3", "C4")]))


def test_conduction_keeps_a_dbd_near_the_wall_temperature(co2_heated):
    # a 1 mm gap conducts the heat of each filament away within milliseconds, so between
    # filaments the gas returns to the wall: DBD gas stays within tens of kelvin of the
    # wall on average (Kogelschatz 2003, Plasma Chem. Plasma Process. 23, 1, from memory)
    res = co2_heated["conduction"]
    s = analysis.summary(res)
    assert s["gas_temperature_exit_K"] < 320.0
    assert s["gas_temperature_max_K"] > s["gas_temperature_exit_K"] + 20.0   # filaments heat
    assert s["element_balance_error"] < 1e-8
    # CO and O2 the main products, near the 2 : 1 of DBD CO2-splitting experiments (e.g.
    # Paulussen et al. 2010, Plasma Sources Sci. Technol. 19, 034015, from memory): the
    # filament heating destroys part of the ozone that a fixed 330 K keeps (4.5 : 1 there,
    # mechanisms/README.md); measured 2.7 : 1 with 40 filaments, see the assertion's value
    bed = {r["species"]: r["mole_fraction"] for r in analysis.bed_feed(res)["rows"]}
    assert 1.5 < bed["CO"] / bed["O2"] < 3.2, bed["CO"] / bed["O2"]
    setup = res.setup
    # the default loss: the Eucken estimate for CO2 at 300 K against Perry's table
    # (0.0166 W/m/K), within the 10-20 % known for Eucken's factor (measured: -2 %)
    assert setup.thermal_conductivity_W_m_K == pytest.approx(_thermal_conductivity_chemicals(), rel=0.15)
    assert setup.heat_loss_W_m3_K == pytest.approx(
        setup.thermal_conductivity_W_m_K * (math.pi / 1e-3) ** 2, rel=1e-12)


def test_energy_equation_keys_are_checked():
    with pytest.raises(InputError, match="gas_temperature.temperature_K"):
        _scenario("co2_splitting", gas_temperature={"mode": "energy_equation", "temperature_K": 350})
    with pytest.raises(InputError, match="gas_temperature.heat_loss_W_m3_K"):
        _scenario("co2_splitting", gas_temperature={"mode": "fixed", "heat_loss_W_m3_K": 1.0})


def test_bdf_method_gives_the_same_discharge_result(co2_run):
    # the same scenario integrated by the variable-order BDF (solver.method) instead of
    # RODAS4: the two independent methods agree to the accuracy asked (rtol 1e-5 each;
    # the BDF's global error is tens of times its rtol, so 1e-3 relative on the figures)
    sc = _scenario("co2_splitting", **{"discharge.pulses": 8, "solver.method": "bdf"})
    other = dbd.run(dbd.prepare(sc, example_path("co2_splitting")))
    a, b = analysis.summary(co2_run), analysis.summary(other)
    assert b["element_balance_error"] < 1e-8
    for key in ("energy_deposited_J_m3", "expansion_factor"):
        assert b[key] == pytest.approx(a[key], rel=1e-4), key
    conv_a = a["conversion"]["CO2"]
    conv_b = b["conversion"]["CO2"]
    assert conv_b == pytest.approx(conv_a, rel=1e-3)
    with pytest.raises(InputError, match="solver.method"):
        _scenario("co2_splitting", **{"solver.method": "euler"})
