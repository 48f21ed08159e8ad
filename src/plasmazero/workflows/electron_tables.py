"""Electron coefficient tables for the kinetics, computed from the gas composition.

The kinetics needs, for the electron-impact processes of a mechanism, rate coefficients
versus E/N (local field approximation). They come from the two-term Boltzmann solver
(:mod:`plasmazero.physics.boltzmann`) for the *current* composition of the gas:

* the gases of the mechanism's cross-section files are the collision partners; the mole
  fraction of each is the density of that species plus its excited states
  (``state_of``) over the density of all partners (species without cross sections,
  such as O, H or O3, do not enter the electron energy balance; their share is reported as
  ``uncovered_fraction``);
* where an excitation process has a superelastic reverse and the mechanism tracks its
  upper state as a species, the population of that state enters the Boltzmann equation
  as the excited fraction of the process (so vibrationally hot CO2 heats the electrons).

A table is rebuilt when the partner fractions drift (see :func:`partner_drift`); the
discharge workflow does this between filaments.
"""

from __future__ import annotations

import math

import numpy as np

from plasmazero.numerics.electrons import ElectronTable
from plasmazero.physics.boltzmann import build_mixture, solve_swarm
from plasmazero.physics.boltzmann.constants import BOLTZMANN_EV_K, GAMMA_M_S_EV
from plasmazero.physics.boltzmann.grid import cumulative_u_sigma

#: E/N grid of a table: zero field plus this log-spaced range, Td (extra fields are added)
TABLE_E_N_TD = np.concatenate([[0.0], np.logspace(-1.0, 3.0, 21)])
#: upper-state fraction below which superelastic collisions are left out of the EEDF
#: (their rate coefficients are still computed from the EEDF by detailed balance). Solving
#: with superelastic terms costs about 20 times more per point; a population of 1e-4
#: changes the EEDF by far less than the cross sections' uncertainty (choice of this code).
SUPERELASTIC_IN_EEDF_FRACTION = 1e-4
#: mole fraction given to collision partners that are absent, so their processes get rates
TRACE_FRACTION = 1e-9


def partner_map(loaded, compiled):
    """Describe how kinetic species feed the Boltzmann mixture.

    Returns
    -------
    dict with
        ``gases``: tuple of gas names (one per cross-section set, in file order);
        ``members``: {gas: int array of species indices counted as that gas (itself and its states)};
        ``upper``: {process id: species index of the upper state of a superelastic process};
        ``sets``: the CrossSectionSet of each gas.
    """
    sets = tuple(compiled.cross_sections)
    index = compiled.species_index or {s: i for i, s in enumerate(compiled.species)}
    parent = {sp.name: sp.state_of for sp in loaded.species}
    gases, members = [], {}
    for xs in sets:
        if xs.gas not in index:
            continue
        gases.append(xs.gas)
        members[xs.gas] = np.array([index[name] for name in compiled.species
                                    if name == xs.gas or parent.get(name) == xs.gas], dtype=np.int64)
    upper = {}
    for reaction in loaded.reactions:
        if reaction.rate.kind != "electron_impact":
            continue
        pid = reaction.rate.params["process"]
        if pid.endswith(":reverse"):
            continue
        states = [name for name, _ in reaction.products if parent.get(name)]
        gas_reactants = [name for name, _ in reaction.reactants if name in members]
        if len(states) == 1 and gas_reactants and parent[states[0]] == gas_reactants[0]:
            upper[pid] = index[states[0]]
    return {"gases": tuple(gases), "members": members, "upper": upper,
            "electron": int(compiled.electron_index),
            "sets": {xs.gas: xs for xs in sets if xs.gas in members}}


def partner_fractions(pmap, y_m3):
    """Mole fractions of the collision partners (normalised over them) and the uncovered share.

    Returns
    -------
    (fractions: dict gas -> fraction, excited: dict process id -> upper-state fraction,
    uncovered_fraction: float)
    """
    totals = {g: float(np.sum(y_m3[idx])) for g, idx in pmap["members"].items()}
    covered = sum(totals.values())
    if not covered > 0.0:
        raise ValueError("no collision partner of the cross-section files is present in the gas")
    fractions = {g: v / covered for g, v in totals.items()}
    excited = {}
    for pid, i in pmap["upper"].items():
        gas = next(g for g, idx in pmap["members"].items() if i in idx)
        excited[pid] = float(y_m3[i]) / totals[gas] if totals[gas] > 0 else 0.0
    heavy = float(np.sum(y_m3)) - (float(y_m3[pmap["electron"]]) if pmap["electron"] >= 0 else 0.0)
    return fractions, excited, max(0.0, 1.0 - covered / heavy)


def partner_drift(reference, fractions):
    """Largest absolute change of a partner mole fraction between two compositions."""
    names = set(reference) | set(fractions)
    return max(abs(reference.get(n, 0.0) - fractions.get(n, 0.0)) for n in names)


def build_table(pmap, compiled, fractions, excited, T_gas_K, extra_E_N_Td=()):
    """Solve the Boltzmann equation on the table grid for one composition.

    Parameters
    ----------
    pmap : dict
        From :func:`partner_map`.
    compiled : CompiledMechanism
        Its ``electron_processes`` fix the columns of the table.
    fractions, excited : dict
        From :func:`partner_fractions`.
    T_gas_K : float
        Gas temperature, K.
    extra_E_N_Td : sequence of float
        Fields to include exactly (the filament field), so that the kinetics at those
        fields uses solver values, not interpolated ones.

    Returns
    -------
    (ElectronTable, SwarmTable)
    """
    # absent partners enter as a trace (1e-9) so that their processes still get rate
    # coefficients (a trace does not change the EEDF)
    parts = [(pmap["sets"][g], max(fractions.get(g, 0.0), TRACE_FRACTION)) for g in pmap["gases"]]
    total = sum(x for _, x in parts)
    parts = [(xs, x / total) for xs, x in parts]
    mixture = build_mixture(parts)
    grid = np.unique(np.concatenate([TABLE_E_N_TD, np.asarray(extra_E_N_Td, dtype=float)]))
    present = set(mixture.process_ids) | {p.id for p in mixture.processes}
    populations = thermal_populations(mixture, T_gas_K, tracked=excited)
    populations.update({pid: v for pid, v in excited.items()
                        if pid in present and mixture.weight_ratios[mixture.index(pid)] > 0})
    excited_in = {pid: min(v, 0.999) for pid, v in populations.items()
                  if v >= SUPERELASTIC_IN_EEDF_FRACTION}
    swarm = solve_swarm(mixture, grid, T_gas_K, excited_fractions=excited_in or None)
    columns = []
    for pid in compiled.electron_processes:
        try:
            k = _column(swarm.rate_coefficients_m3_s, pid, pmap)
        except KeyError:
            if not pid.endswith(":reverse"):
                raise
            k = reverse_rate_coefficients(mixture.processes[mixture.index(pid[:-8])], swarm)
        columns.append(k)
    k_table = np.column_stack(columns) if columns else np.zeros((grid.size, 0))
    table = ElectronTable(E_N_Td=grid, k_m3_s=np.maximum(k_table, 0.0),
                          mean_energy_eV=swarm.mean_energy_eV,
                          drift_velocity_m_s=np.where(grid > 0, swarm.drift_velocity_m_s, 0.0),
                          processes=tuple(compiled.electron_processes),
                          mole_fractions=dict(fractions))
    return table, swarm


def thermal_populations(mixture, T_gas_K, tracked=()):
    """Boltzmann populations at the gas temperature of the excited levels the kinetics does
    not track (rotational and vibrational levels of the cross-section sets): {process id: p}.

    p_k = g_k exp(-u_k / k T) / Z with Z = 1 + sum over the gas's levels with a weight ratio
    (the same rule as ``excited_fractions="boltzmann"`` of the solver). Levels in ``tracked``
    get their populations from the kinetics instead and are left out here.
    """
    kT = BOLTZMANN_EV_K * T_gas_K
    out = {}
    if kT <= 0:
        return out
    for g in range(len(mixture.gases)):
        sel = [i for i in range(len(mixture.process_ids))
               if mixture.process_gas[i] == g and mixture.weight_ratios[i] > 0]
        w = {i: mixture.weight_ratios[i] * math.exp(-mixture.thresholds_eV[i] / kT) for i in sel}
        z = 1.0 + sum(w.values())
        for i, wi in w.items():
            pid = mixture.process_ids[i]
            if pid not in tracked and mixture.processes[i].id not in tracked:
                out[pid] = wi / z
    return out


def reverse_rate_coefficients(process, swarm):
    """Superelastic rate coefficients, m^3/s, of an excitation for each EEDF of a table.

    Detailed balance (Klein & Rosseland 1921, Z. Phys. 4, 46): sigma_rev(u) =
    (g_l/g_u) (u + e_k)/u sigma(u + e_k), so k_rev = gamma (g_l/g_u) int (u + e_k)
    sigma(u + e_k) F(u) du, integrated exactly over the cells like the solver's own rates.
    """
    out = np.empty(len(swarm.E_N_Td))
    for i in range(out.size):
        u = swarm.energy_eV[i]
        du = u[1] - u[0]
        faces = np.concatenate(([u[0] - 0.5 * du], u + 0.5 * du))
        c = np.diff(cumulative_u_sigma(process, np.maximum(faces, 0.0) + process.threshold_eV))
        out[i] = GAMMA_M_S_EV / process.weight_ratio * float(np.sum(c * swarm.eedf_eV_m3_2[i]))
    return out


def _column(rates, pid, pmap):
    """Rate-coefficient array of mechanism process ``pid`` in a solver table."""
    if pid in rates:
        return np.asarray(rates[pid], dtype=float)
    base, _, rev = pid.partition(":")
    for gas in pmap["gases"]:
        key = f"{gas}/{base}" + (":" + rev if rev else "")
        if key in rates:
            return np.asarray(rates[key], dtype=float)
    raise KeyError(f"process {pid!r} is not in the Boltzmann table")
