"""Figures of merit, the bed feed and reaction pathways of a discharge run.

All bookkeeping is per parcel of inlet gas (molar flows), not per density: a density
n_i(t) times the parcel's expansion factor phi(t) = V(t)/V0 is proportional to the molar
flow of species i at that point of the reactor (Pinhao et al. 2016, Int. J. Hydrogen
Energy 41, 9245, on why densities alone mislead when the number of moles changes).

Definitions
-----------
conversion of feed species r
    X_r = 1 - F_r,out / F_r,in, with excited states of r counted as r.
selectivity of product p on element E (C, H, O)
    S_p,E = a_E,p dF_p / sum_r a_E,r (F_r,in - F_r,out): the share of the converted atoms
    of E that ended in p (products: every species that is not a feed species or a state
    of one; ions and radicals included).
yield of p on element E
    Y_p,E = a_E,p F_p,out / sum_r a_E,r F_r,in.
energy efficiency
    eta = [sum_i (F_i,out - F_i,in) h_i(T_gas)] / P: the chemical enthalpy the discharge
    stored in the gas per energy deposited (for pure CO2 splitting this is the usual
    Delta_r H(CO2 -> CO + 1/2 O2) times the converted flow over the power); excited
    states carry their excitation energy, as their enthalpy does.
energy cost
    the deposited energy per converted molecule of each feed species, eV.
"""

from __future__ import annotations

import math
import re

import numpy as np

from plasmazero.physics.constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, EV_K
from plasmazero.physics.thermo import h_RT
from plasmazero.physics.transport import impingement_flux_m2_s

from . import reactor as rx

SELECTIVITY_ELEMENTS = ("C", "H", "O")
_VIBRATIONAL = re.compile(r"\(v\d+\)$")


def _parents(result):
    loaded = result.setup.loaded
    parent = {sp.name: (sp.state_of or sp.name) for sp in loaded.species}
    return parent


def _zone_end(result, zone):
    rows = np.nonzero(result.zone == zone)[0]
    return int(rows[-1]) if rows.size else None


def molar_amounts(result, row):
    """Molecules per m^3 of inlet gas at output row ``row``: n_i(t) phi(t)."""
    return result.densities_m3[row] * result.expansion_factor[row]


def _lumped(result, amounts):
    """Amounts with excited states added to their parent species."""
    parent = _parents(result)
    out = {}
    for name, a in zip(result.species, amounts):
        key = parent.get(name, name)
        out[key] = out.get(key, 0.0) + float(a)
    return out


def element_counts(result):
    """{species: {element: count}} of the mechanism."""
    return {sp.name: dict(sp.composition) for sp in result.setup.loaded.species}


def summary(result):
    """The figures of merit of a run as a plain dict (JSON-ready; SI unless the key says)."""
    setup = result.setup
    feed = setup.scenario["feed"]["mole_fractions"]
    end = _zone_end(result, 0)
    a_in = _lumped(result, molar_amounts(result, 0))
    a_out = _lumped(result, molar_amounts(result, end))
    comp = element_counts(result)
    electron = setup.loaded.electron
    reactants = [s for s, x in feed.items() if x > 0]
    conversion = {r: 1.0 - a_out.get(r, 0.0) / a_in[r] for r in reactants}
    converted = {r: a_in[r] - a_out.get(r, 0.0) for r in reactants}
    selectivity, yields = {}, {}
    for el in SELECTIVITY_ELEMENTS:
        denom_conv = sum(comp[r].get(el, 0) * converted[r] for r in reactants)
        denom_feed = sum(comp[r].get(el, 0) * a_in[r] for r in reactants)
        if denom_feed <= 0:
            continue
        sel, yl = {}, {}
        for name, amount in a_out.items():
            if name in reactants or name == electron or comp.get(name, {}).get(el, 0) == 0:
                continue
            made = comp[name][el] * (amount - a_in.get(name, 0.0))
            yl[name] = comp[name][el] * amount / denom_feed
            sel[name] = made / denom_conv if denom_conv > 0 else math.nan
        selectivity[el] = dict(sorted(sel.items(), key=lambda kv: -abs(kv[1])))
        yields[el] = dict(sorted(yl.items(), key=lambda kv: -abs(kv[1])))
    T_t = gas_temperature_K(result)
    # energy efficiency from the enthalpy of the stream
    mech = setup.compiled
    T = setup.T_gas_K
    hrt = np.empty(len(mech.species))
    h_RT(mech.nasa7_coeffs, mech.nasa7_T_K, mech.energy_shift_J_mol, T, hrt)
    h_J = hrt * BOLTZMANN_J_K * T                      # per molecule
    d_amount = molar_amounts(result, end) - molar_amounts(result, 0)
    # species without thermo may be ignored when their change is below 1e-9 of the feed
    # (trace ions); otherwise the efficiency is not defined
    known = np.isfinite(h_J) | (np.abs(d_amount) <= 1e-9 * float(np.sum(molar_amounts(result, 0))))
    stored = float(np.sum(np.where(np.isfinite(h_J), h_J, 0.0) * d_amount))
    u = setup.energy_density_J_m3
    eta = stored / u if u > 0 and bool(np.all(known)) else math.nan
    cost = {r: (u / ELEMENTARY_CHARGE_C / converted[r] if converted[r] > 0 else math.nan) for r in reactants}
    # electrons in filaments
    pulse = result.in_pulse & (result.zone == 0)
    ne = result.electron_density_m3
    plasma = {
        "peak_electron_density_m3": float(ne[pulse].max()) if pulse.any() else 0.0,
        "mean_electron_density_in_pulses_m3": _time_mean(result.times_s, ne, pulse),
        "E_N_in_pulses_Td": float(setup.E_N_Td),
        "mean_electron_energy_in_pulses_eV": _time_mean(result.times_s, result.mean_energy_eV, pulse),
        "breakdown_E_N_Td": float(setup.breakdown_E_N_Td),
    }
    # element balance over the whole run
    elements = [e for e in setup.compiled.elements if e != "E"]
    counts = setup.compiled.element_counts
    first = molar_amounts(result, 0)
    last = molar_amounts(result, len(result.times_s) - 1)
    errors = []
    for k, el in enumerate(setup.compiled.elements):
        if el not in elements:
            continue
        tot0 = float(counts[k] @ first)
        if tot0 > 0:
            errors.append(abs(float(counts[k] @ last) - tot0) / tot0)
    total_split = sum(result.energy_split_J_m3.values())
    return {
        "scenario": setup.scenario.get("description", ""),
        "invented_scenario": bool(setup.scenario.get("invented", False)),
        "mechanism": setup.loaded.name,
        "power_W": setup.power_W,
        "sei_kJ_L": setup.sei_kJ_L,
        "sei_eV_per_molecule": setup.sei_eV_per_molecule,
        "residence_time_s": setup.residence_time_s,
        "gas_temperature_K": setup.T_gas_K,
        "gas_temperature_mode": setup.scenario["gas_temperature"]["mode"],
        "gas_temperature_exit_K": float(T_t[end]),
        "gas_temperature_max_K": float(T_t.max()),
        "pressure_Pa": setup.scenario["feed"]["pressure_Pa"],
        "pulses": int(len(setup.pulse_starts_s)) if setup.scenario["discharge"]["mode"] == "filaments" else 0,
        "conversion": conversion,
        "selectivity": selectivity,
        "yield": yields,
        "energy_efficiency": eta,
        "energy_cost_eV_per_converted_molecule": cost,
        "energy_deposited_J_m3": result.energy_deposited_J_m3,
        "energy_input_J_m3": u,
        "energy_split_fraction": {k: (v / total_split if total_split else 0.0)
                                  for k, v in result.energy_split_J_m3.items()},
        "plasma": plasma,
        "expansion_factor": float(result.expansion_factor[end]),
        "element_balance_error": max(errors) if errors else 0.0,
        "quasi_neutrality": result.quasi_neutrality,
        "table_rebuilds": result.table_rebuilds,
        "wall_time_s": result.wall_time_s,
    }


def gas_temperature_K(result):
    """Gas temperature at the output times, K (the fixed one when there is no energy equation)."""
    T = getattr(result, "gas_temperature_K", None)
    if T is None:
        return np.full(result.times_s.size, float(result.setup.T_gas_K))
    return np.asarray(T, dtype=float)


def _time_mean(t, values, mask):
    """Time average of ``values`` over the rows in ``mask`` (trapezoid over contiguous rows)."""
    if not mask.any():
        return 0.0
    w = np.zeros_like(t)
    dt = np.diff(t)
    both = mask[1:] & mask[:-1]
    w[1:] += np.where(both, 0.5 * dt, 0.0)
    w[:-1] += np.where(both, 0.5 * dt, 0.0)
    total = w.sum()
    return float(np.sum(w * values) / total) if total > 0 else float(np.mean(values[mask]))


def _species_masses(result):
    comp = element_counts(result)
    return np.array([rx.species_mass_amu(comp[s]) for s in result.species])


def bed_feed(result):
    """What reaches the catalyst, per species, SI plus bar (see the README's bed feed section).

    With a downstream transit (``bed.downstream_transit_s`` > 0) the bed sits after the
    discharge: the composition at the end of the transit. With a packed bed in the plasma
    and no transit: the time average over the discharge zone, with the peak during
    filaments beside it. Otherwise the composition at the discharge exit.

    Returns
    -------
    dict with ``where`` (text), ``rows`` (list of dicts: species, mole_fraction,
    partial_pressure_Pa, partial_pressure_bar, density_m3, flux_m2_s, peak_density_m3)
    and ``vibrational_temperatures_K`` {parent: T_vib}.
    """
    setup = result.setup
    sc = setup.scenario
    p = sc["feed"]["pressure_Pa"]
    T_t = gas_temperature_K(result)
    masses = _species_masses(result)
    in_zone = result.zone == 0
    if sc["bed"]["downstream_transit_s"] > 0:
        where = f"catalyst bed after {sc['bed']['downstream_transit_s']:g} s of afterglow downstream of the discharge"
        dens = result.densities_m3[-1]
        peak = dens
        T = float(T_t[-1])
    elif sc["reactor"].get("packed_bed"):
        where = "packed bed inside the discharge: time average over the discharge zone"
        dens = np.array([_time_mean(result.times_s, result.densities_m3[:, i], in_zone)
                         for i in range(len(result.species))])
        pulse = result.in_pulse & in_zone
        peak = result.densities_m3[pulse].max(axis=0) if pulse.any() else dens
        T = _time_mean(result.times_s, T_t, in_zone)
    else:
        where = "discharge exit"
        dens = result.densities_m3[_zone_end(result, 0)]
        peak = dens
        T = float(T_t[_zone_end(result, 0)])
    total = float(np.sum(dens))
    rows = []
    for i, name in enumerate(result.species):
        x = dens[i] / total
        rows.append({
            "species": name,
            "mole_fraction": float(x),
            "partial_pressure_Pa": float(x * p),
            "partial_pressure_bar": float(x * p / 1e5),
            "density_m3": float(dens[i]),
            "flux_m2_s": float(impingement_flux_m2_s(dens[i], T, masses[i])),
            "peak_density_m3": float(peak[i]),
        })
    rows.sort(key=lambda r: -r["mole_fraction"])
    return {"where": where, "temperature_K": T, "pressure_Pa": p, "rows": rows,
            "vibrational_temperatures_K": vibrational_temperatures(result, dens)}


def vibrational_temperatures(result, densities_m3):
    """T_vib of each parent with vibrational states, from its ground and lowest ladder state.

    Ladder states are those named ``<parent>(v<n>)`` (CO2(v1): the asymmetric stretch,
    H2(v1)). T_vib = E_1 / (k ln(n_0 / n_1)), E_1 the energy of the lowest such state (a Boltzmann distribution over the two; lumped levels are
    treated as single levels, degeneracies ignored: common practice, no source).
    """
    loaded = result.setup.loaded
    index = {s: i for i, s in enumerate(result.species)}
    lowest = {}
    for sp in loaded.species:
        if sp.state_of and sp.energy_eV > 0 and _VIBRATIONAL.search(sp.name):
            cur = lowest.get(sp.state_of)
            if cur is None or sp.energy_eV < cur[1]:
                lowest[sp.state_of] = (sp.name, sp.energy_eV)
    out = {}
    for parent, (state, energy) in lowest.items():
        n0, n1 = densities_m3[index[parent]], densities_m3[index[state]]
        if n0 > 0 and n1 > 0 and n0 > n1:
            out[parent] = float(energy * EV_K / math.log(n0 / n1))
    return out


def pathways(result, species, zone="discharge", top=10):
    """Reactions producing and consuming ``species``, ranked, with percentages.

    Parameters
    ----------
    zone : "discharge" or "downstream"
        Integrated rates of the discharge zone or of the downstream transit.

    Returns
    -------
    dict with ``production`` and ``consumption`` lists of
    {reaction, rate_m3 (molecules per m^3 of inlet gas), percent}, and the totals.
    """
    mech = result.setup.compiled
    R = result.integrated_rates_parcel_m3 if zone == "discharge" else result.integrated_rates_downstream_m3
    surface = result.surface_net_parcel_m3 if zone == "discharge" else None
    return rank_pathways(list(mech.species), list(result.reactions), mech.stoichiometry, R, surface,
                         species, zone, top)


def rank_pathways(species_names, reactions, stoichiometry, rates_m3, surface_m3, species, zone, top=10):
    """Pathways of ``species`` from arrays (also used on result files read without plasmazero objects).

    ``stoichiometry`` (n_s, n_r) products minus reactants, ``rates_m3`` (n_r,) integrated
    rates, ``surface_m3`` (n_s,) or None: net made or lost on a packed bed's surfaces.
    """
    if species not in species_names:
        raise KeyError(f"species {species!r} is not in the mechanism")
    i = species_names.index(species)
    contrib = np.asarray(stoichiometry)[i] * np.asarray(rates_m3)
    labels = list(reactions)
    if surface_m3 is not None and surface_m3[i] != 0.0:
        contrib = np.append(contrib, surface_m3[i])
        labels.append("surface of the packing (net)")
    out = {"species": species, "zone": zone}
    for kind, sign in (("production", 1.0), ("consumption", -1.0)):
        c = sign * contrib
        order = [j for j in np.argsort(-c) if c[j] > 0][:top]
        total = float(np.sum(c[c > 0]))
        out[f"{kind}_total_m3"] = total
        out[kind] = [{"reaction": labels[j], "rate_m3": float(c[j]),
                      "percent": 100.0 * float(c[j]) / total if total > 0 else 0.0} for j in order]
    return out
