"""Gas mixtures for the Boltzmann solver: flattened per-process arrays and level populations.

A :class:`Mixture` is built from cross-section sets (one per target gas, as read by
:func:`plasmazero.data.cross_sections.load_cross_sections`) and their mole fractions. All
processes of all gases are flattened into parallel arrays so that the operator can be
assembled without Python objects per process.

Process ids
-----------
Each process keeps the id written in its gas file. Where two files of one mixture use the
same id, both are qualified as ``"<gas>/<id>"`` so that every id of the mixture is unique.
Superelastic (reverse) processes are reported under ``"<id>:reverse"``.

Level populations
-----------------
Every process of a file is taken to start from the ground state of its gas. An excitation
with a ``weight_ratio`` (g_upper/g_lower) has a superelastic reverse whose target is the
upper level; the fraction ``p`` of the gas molecules in that level is given per process
(``excited_fractions={id: p}``) or from a Boltzmann factor at the gas temperature
(``"boltzmann"``: p_k = g_k exp(-u_k / k T_gas) / Z, Z = 1 + sum_k g_k exp(-u_k / k T_gas)
over the gas's processes with a weight ratio). Forward processes then act on the ground
fraction ``x (1 - sum_k p_k)``; momentum transfer acts on the whole gas ``x`` (the excited
molecules are given the elastic cross section of the ground state, an approximation).

References
----------
O. Klein and S. Rosseland, "Über Zusammenstöße zwischen Atomen und freien Elektronen",
Z. Phys. 4, 46 (1921) (detailed balance of superelastic collisions: the reverse cross
section is sigma_rev(u) = (g_lower/g_upper) (u + u_k)/u sigma(u + u_k)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from plasmazero.data.errors import InputError, format_problem

from .constants import AMU_KG, BOLTZMANN_EV_K, ELECTRON_MASS_KG
from .grid import integral_table, pack_tables

#: integer codes of the process kinds, as stored in :attr:`Mixture.kinds`
KIND_CODES = {
    "momentum_transfer": 0,
    "total_momentum_transfer": 1,
    "excitation": 2,
    "ionization": 3,
    "attachment": 4,
}
ELASTIC, TOTAL, EXCITATION, IONIZATION, ATTACHMENT = range(5)
#: grid operators kept per mixture by the solver (each ~1 MB at 500 cells and 40 processes)
OPERATOR_CACHE_SIZE = 16


@dataclass(frozen=True)
class Mixture:
    """A gas mixture as the Boltzmann solver sees it (flattened per-process arrays).

    Attributes
    ----------
    gases : tuple of str
        Gas names, one per cross-section set.
    gas_fractions : ndarray
        Mole fraction of each gas (sums to 1).
    gas_mass_ratios : ndarray
        Electron-to-target mass ratio m_e/M of each gas.
    files : tuple of str
        File each gas was read from ("" when the set was built in memory).
    process_ids : tuple of str
        Unique id of every process (see the module docstring).
    process_gas : ndarray of int
        Index into ``gases`` of every process.
    kinds : ndarray of int
        Kind code of every process (:data:`KIND_CODES`).
    thresholds_eV : ndarray
        Energy loss of every process, eV (0 for momentum transfer and attachment without threshold).
    fractions : ndarray
        Mole fraction of the target gas of every process.
    mass_ratios : ndarray
        m_e/M of the target of every process.
    weight_ratios : ndarray
        g_upper/g_lower of every process, 0 where there is no superelastic reverse.
    processes : tuple of plasmazero.data.cross_sections.Process
        The processes themselves (cross-section tables, sources).
    integral_tables : tuple of IntegralTable
        Cumulative integrals of u sigma of every process (:func:`.grid.integral_table`).
    packed_tables : tuple of ndarray
        The same, concatenated for the numba evaluation (:func:`.grid.pack_tables`).
    operator_cache : dict
        Grid operators already built for this mixture (E/N-independent; kept by the solver,
        at most :data:`OPERATOR_CACHE_SIZE` entries; not part of the record's identity).
    """

    gases: tuple
    gas_fractions: np.ndarray
    gas_mass_ratios: np.ndarray
    files: tuple
    process_ids: tuple
    process_gas: np.ndarray
    kinds: np.ndarray
    thresholds_eV: np.ndarray
    fractions: np.ndarray
    mass_ratios: np.ndarray
    weight_ratios: np.ndarray
    processes: tuple
    integral_tables: tuple
    packed_tables: tuple = field(default=(), compare=False, repr=False)
    operator_cache: dict = field(default_factory=dict, compare=False, repr=False)

    def index(self, process_id):
        """Index of a process given its mixture id or its file id (KeyError if absent or ambiguous)."""
        if process_id in self.process_ids:
            return self.process_ids.index(process_id)
        hits = [i for i, p in enumerate(self.processes) if p.id == process_id]
        if len(hits) == 1:
            return hits[0]
        raise KeyError(process_id)


def _is_number(value):
    return isinstance(value, (int, float, np.floating, np.integer)) and not isinstance(value, bool) \
        and math.isfinite(float(value))


def build_mixture(parts):
    """Build a :class:`Mixture` from cross-section sets and mole fractions.

    Parameters
    ----------
    parts : sequence of (CrossSectionSet, float)
        Each target gas with its mole fraction. Fractions must be >= 0 and add up to 1
        within 1e-6.

    Returns
    -------
    Mixture

    Raises
    ------
    InputError
        For an empty mixture, a negative or non-numeric fraction (naming the gas), a gas given
        twice, or fractions that do not add up to 1.
    """
    parts = list(parts)
    if not parts:
        raise InputError([format_problem(None, "mixture", "no gas given")])
    problems, seen = [], {}
    for xs, frac in parts:
        file = getattr(xs, "path", None)
        if not _is_number(frac) or float(frac) < 0.0:
            problems.append(format_problem(file, xs.gas, f"mole fraction {frac!r} is not a number >= 0"))
        if xs.gas in seen:
            problems.append(format_problem(file, xs.gas, f"gas given twice (also from {seen[xs.gas]})"))
        seen[xs.gas] = file
    if problems:
        raise InputError(problems)
    total = sum(float(f) for _, f in parts)
    if abs(total - 1.0) > 1e-6:
        listing = ", ".join(f"{xs.gas}={float(f):g}" for xs, f in parts)
        raise InputError([format_problem(None, "mixture", f"mole fractions add up to {total:.9g}, not 1 ({listing})")])

    all_ids = [p.id for xs, _ in parts for p in xs.processes]
    dup = {i for i in all_ids if all_ids.count(i) > 1}
    ids, pgas, kinds, thr, fr, mr, wr, procs = [], [], [], [], [], [], [], []
    for g, (xs, frac) in enumerate(parts):
        ratio = ELECTRON_MASS_KG / (xs.mass_amu * AMU_KG)
        for p in xs.processes:
            ids.append(f"{xs.gas}/{p.id}" if p.id in dup else p.id)
            pgas.append(g)
            kinds.append(KIND_CODES[p.kind])
            thr.append(float(p.threshold_eV))
            fr.append(float(frac))
            mr.append(ratio)
            wr.append(0.0 if p.weight_ratio is None else float(p.weight_ratio))
            procs.append(p)
    tables = tuple(integral_table(p) for p in procs)
    if len(set(ids)) != len(ids):
        raise InputError([format_problem(None, "mixture", "process ids are not unique even after qualifying them with the gas name")])
    return Mixture(
        gases=tuple(xs.gas for xs, _ in parts),
        gas_fractions=np.array([float(f) for _, f in parts]),
        gas_mass_ratios=np.array([ELECTRON_MASS_KG / (xs.mass_amu * AMU_KG) for xs, _ in parts]),
        files=tuple("" if getattr(xs, "path", None) is None else str(xs.path) for xs, _ in parts),
        process_ids=tuple(ids),
        process_gas=np.array(pgas, dtype=np.int64),
        kinds=np.array(kinds, dtype=np.int64),
        thresholds_eV=np.array(thr),
        fractions=np.array(fr),
        mass_ratios=np.array(mr),
        weight_ratios=np.array(wr),
        processes=tuple(procs),
        integral_tables=tables,
        packed_tables=pack_tables(tables),
    )


def level_populations(mixture, T_gas_K, excited_fractions=None):
    """Populations that multiply the forward and the superelastic processes.

    Parameters
    ----------
    mixture : Mixture
    T_gas_K : float
        Gas temperature, K (used by ``"boltzmann"`` only).
    excited_fractions : None, dict or "boltzmann"
        ``{process_id: p}``: fraction p of the molecules of the target gas in the upper level
        of that excitation; ``"boltzmann"``: every excitation with a weight ratio gets its
        Boltzmann population (module docstring); None: no superelastic processes.

    Returns
    -------
    forward : ndarray
        Per process, the mole fraction of targets of the forward process (ground-state
        fraction for inelastic processes, whole gas for momentum transfer).
    upper : ndarray
        Per process, x p: the mole fraction of the gas in the upper level of that
        excitation, the target of its superelastic reverse (0 where there is none).

    Raises
    ------
    InputError
        For an unknown id, a process without weight ratio, a fraction outside [0, 1) or
        populations of one gas adding up to 1 or more.
    """
    n = len(mixture.process_ids)
    upper = np.zeros(n)
    if excited_fractions is None:
        pass
    elif isinstance(excited_fractions, str):
        if excited_fractions != "boltzmann":
            raise InputError([format_problem(None, "excited_fractions", f"unknown value {excited_fractions!r} (a dict or 'boltzmann')")])
        kT = BOLTZMANN_EV_K * T_gas_K
        for g in range(len(mixture.gases)):
            sel = [i for i in range(n) if mixture.process_gas[i] == g and mixture.weight_ratios[i] > 0]
            if not sel or kT <= 0.0:
                continue
            w = np.array([mixture.weight_ratios[i] * math.exp(-mixture.thresholds_eV[i] / kT) for i in sel])
            upper[sel] = w / (1.0 + w.sum())
    else:
        problems = []
        for key, value in dict(excited_fractions).items():
            try:
                i = mixture.index(key)
            except KeyError:
                problems.append(format_problem(None, str(key), "excited_fractions names no process of the mixture (or an ambiguous one)"))
                continue
            if mixture.weight_ratios[i] <= 0:
                problems.append(format_problem(None, str(key), "has no weight_ratio, so no superelastic reverse"))
                continue
            if not _is_number(value) or not 0.0 <= float(value) < 1.0:
                problems.append(format_problem(None, str(key), f"excited fraction {value!r} is not a number in [0, 1)"))
                continue
            upper[i] = float(value)
        if problems:
            raise InputError(problems)
    ground = 1.0 - np.bincount(mixture.process_gas, weights=upper, minlength=len(mixture.gases))
    for g in np.nonzero(ground <= 0.0)[0]:
        raise InputError([format_problem(None, mixture.gases[g], "excited fractions add up to 1 or more")])
    forward = mixture.fractions.copy()
    inelastic = mixture.kinds >= EXCITATION
    forward[inelastic] *= ground[mixture.process_gas[inelastic]]
    return forward, mixture.fractions * upper
