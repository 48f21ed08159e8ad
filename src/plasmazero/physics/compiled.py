"""Compile a validated mechanism into the flat arrays the kernels and the integrator use.

:func:`compile_mechanism` turns the records of :func:`plasmazero.data.mechanism.load_mechanism`
into a :class:`CompiledMechanism`: integer-coded rate laws with their SI parameters
(:mod:`plasmazero.physics.ratelaws`), stoichiometry as padded index arrays, third-body
efficiencies, thermochemistry (:mod:`plasmazero.physics.thermo`) and the concatenated
expression programs (:mod:`plasmazero.physics.expression`).

Reaction rows
-------------
Every reaction of the file gives one row, in file order; a reversible reaction
(``<=>``) gives two adjacent rows, the forward row and then its REVERSE row
(``reverse_of[j]`` = the forward row, -1 for other rows). The reverse row's reactants are
the forward products (expanded, ``2 O`` -> ``O, O``), its products the forward reactants, its
third body the forward one.

Rates
-----
With ``y`` the densities (m^-3) in the order of ``species``, the integrator forms for row j::

    n_M[j] = sum_s efficiencies[third_body[j], s] * y[s]     (0 where third_body[j] == -1)
    r[j]   = k[j] * (n_M[j] if multiply_M[j] else 1) * prod_m y[reactant_index[j, m]]

and ``dy[s]/dt = sum_j nu[s, j] r[j]`` with ``nu = stoichiometry`` (products minus
reactants). Efficiencies default to 1 for every species (electrons and ions included; their
densities are negligible in a weakly ionized gas), the given value otherwise.

``kernel_args``
---------------
The tuple :func:`plasmazero.physics.ratelaws.rate_coefficients` takes, in this fixed order
(names in :data:`KERNEL_ARGS`):

== ==================== ============================ ==========================================
#  name                 dtype, shape                 content
== ==================== ============================ ==========================================
0  law                  int64 (n_r,)                 law code of each row (ratelaws constants)
1  fpar                 float64 (n_r, 16)            float parameters, SI (ratelaws docstring)
2  ipar                 int64 (n_r, 4)               integer parameters (ratelaws docstring)
3  reactant_index       int64 (n_r, 3)               reactant species, -1 padded, repeated
4  product_index        int64 (n_r, 6)               product species, -1 padded, distinct
5  product_coeff        float64 (n_r, 6)             coefficient of each product entry
6  nasa7_coeffs         float64 (n_s, 2, 7)          NASA 7-coefficient polynomials (NaN: none)
7  nasa7_T_K            float64 (n_s, 3)             (T_low, T_mid, T_high) in K
8  energy_shift_J_mol   float64 (n_s,)               excitation energy of states, J/mol
9  expr_code            int64 (total words,)         concatenated expression programs
10 expr_consts          float64 (total constants,)   concatenated expression constants
== ==================== ============================ ==========================================
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.mechanism import load_mechanism

from . import ratelaws as rl
from .expression import compile_expression, concatenate_programs
from .thermo import EV_J_MOL, reaction_enthalpy_J_mol

#: names of the entries of ``CompiledMechanism.kernel_args``, in order
KERNEL_ARGS = ("law", "fpar", "ipar", "reactant_index", "product_index", "product_coeff",
               "nasa7_coeffs", "nasa7_T_K", "energy_shift_J_mol", "expr_code", "expr_consts")

_LAW_CODE = {"arrhenius": rl.ARRHENIUS, "electron_arrhenius": rl.ELECTRON_ARRHENIUS,
             "landau_teller": rl.LANDAU_TELLER, "expression": rl.EXPRESSION,
             "electron_impact": rl.ELECTRON_IMPACT}


@dataclass(frozen=True)
class CompiledMechanism:
    """A mechanism as arrays (SI). Field meanings: module docstring and ratelaws docstring."""

    name: str
    path: Path | None
    species: tuple
    charge: np.ndarray
    elements: tuple
    element_counts: np.ndarray
    reactions: tuple
    n_species: int
    n_reactions: int
    reactant_index: np.ndarray
    product_index: np.ndarray
    product_coeff: np.ndarray
    third_body: np.ndarray
    efficiencies: np.ndarray
    multiply_M: np.ndarray
    law: np.ndarray
    fpar: np.ndarray
    ipar: np.ndarray
    kernel_args: tuple
    electron_processes: tuple
    uncertainty_factor: np.ndarray
    source: tuple
    #: extra fields (not in the shared contract)
    provenance: tuple = ()
    reverse_of: np.ndarray = None
    file_reaction: np.ndarray = None          # index of the reaction in the file
    line: np.ndarray = None                   # line of the reaction in the file (-1: unknown)
    stoichiometry: np.ndarray = None          # (n_s, n_r) products minus reactants
    nasa7_coeffs: np.ndarray = None
    nasa7_T_K: np.ndarray = None
    energy_shift_J_mol: np.ndarray = None
    has_thermo: np.ndarray = None             # bool (n_s,)
    electron_index: int = -1                  # row of the electron in species, -1: none
    cross_sections: tuple = ()                # CrossSectionSet of each file
    species_index: dict = field(default_factory=dict, compare=False, repr=False)


def load_compiled_mechanism(path):
    """Read, validate (formulas included) and compile a mechanism file.

    Raises
    ------
    InputError
        Every problem of the file (and of the files it references), together.
    """
    def check(text, file, entry, line):
        compile_expression(text, file=file, entry=entry, line=line)

    return compile_mechanism(load_mechanism(path, check_expression=check))


def compile_mechanism(loaded):
    """Compile a :class:`plasmazero.data.mechanism.Mechanism` into a :class:`CompiledMechanism`.

    Parameters
    ----------
    loaded : Mechanism
        From :func:`plasmazero.data.mechanism.load_mechanism`.

    Returns
    -------
    CompiledMechanism

    Raises
    ------
    InputError
        For rate formulas that do not compile (all of them together), when the mechanism
        was loaded without an expression checker.
    """
    species = tuple(s.name for s in loaded.species)
    index = {n: i for i, n in enumerate(species)}
    n_s = len(species)
    elements = tuple(loaded.elements)
    element_counts = np.zeros((len(elements), n_s))
    charge = np.zeros(n_s, dtype=np.int64)
    coeffs = np.full((n_s, 2, 7), np.nan)
    T_K = np.full((n_s, 3), np.nan)
    shift = np.zeros(n_s)
    for i, s in enumerate(loaded.species):
        charge[i] = s.charge
        for e, el in enumerate(elements):
            element_counts[e, i] = -s.charge if el == "E" else s.composition.get(el, 0)
        if s.nasa7 is not None:
            coeffs[i] = np.asarray(s.nasa7[0], dtype=float)
            T_K[i] = np.asarray(s.nasa7[1], dtype=float)
        shift[i] = s.energy_eV * EV_J_MOL
    has_thermo = np.all(np.isfinite(coeffs.reshape(n_s, -1)), axis=1) & np.all(np.isfinite(T_K), axis=1)

    rows = []          # (record, direction) with direction +1 forward, -1 reverse
    for r in loaded.reactions:
        rows.append((r, 1))
        if r.reversible:
            rows.append((r, -1))
    n_r = len(rows)
    reactant_index = np.full((n_r, 3), -1, np.int64)
    product_index = np.full((n_r, 6), -1, np.int64)
    product_coeff = np.zeros((n_r, 6))
    third_body = np.full(n_r, -1, np.int64)
    multiply_M = np.zeros(n_r, dtype=bool)
    law = np.zeros(n_r, np.int64)
    fpar = np.zeros((n_r, rl.N_FPAR))
    ipar = np.zeros((n_r, rl.N_IPAR), np.int64)
    reverse_of = np.full(n_r, -1, np.int64)
    file_reaction = np.zeros(n_r, np.int64)
    line = np.full(n_r, -1, np.int64)
    unc = np.full(n_r, np.nan)
    stoich = np.zeros((n_s, n_r))
    texts, sources, provs = [], [], []
    eff_rows, eff_key = [], {}
    electron_processes, ep_col = [], {}
    programs, problems = [], []
    forward_row = {}

    for j, (r, direction) in enumerate(rows):
        reac = r.reactants if direction > 0 else tuple((n, int(round(c))) for n, c in r.products)
        prod = r.products if direction > 0 else tuple((n, float(c)) for n, c in r.reactants)
        flat = [index[n] for n, c in reac for _ in range(int(c))]
        reactant_index[j, :len(flat)] = flat
        for m, (n, c) in enumerate(prod):
            product_index[j, m] = index[n]
            product_coeff[j, m] = c
        for s in flat:
            stoich[s, j] -= 1.0
        for n, c in prod:
            stoich[index[n], j] += c
        if r.third_body != "none":
            row = np.ones(n_s)
            for n, e in r.efficiencies.items():
                row[index[n]] = e
            key = tuple(row)
            if key not in eff_key:
                eff_key[key] = len(eff_rows)
                eff_rows.append(row)
            third_body[j] = eff_key[key]
            multiply_M[j] = r.third_body == "M"
        file_reaction[j] = r.index
        line[j] = -1 if r.line is None else r.line
        unc[j] = r.uncertainty_factor
        sources.append(r.source)
        provs.append(r.provenance)
        if direction < 0:
            left, right = r.equation.split("<=>")
            texts.append(f"{right.strip()} => {left.strip()} (reverse)")
            law[j] = rl.REVERSE
            ipar[j, 0] = forward_row[r.index]
            reverse_of[j] = forward_row[r.index]
            continue
        texts.append(r.equation)
        forward_row[r.index] = j
        kind, p = r.rate.kind, r.rate.params
        if kind in ("arrhenius", "electron_arrhenius"):
            law[j] = _LAW_CODE[kind]
            fpar[j, 0:3] = (p["A"], p["b"], p["Ea_K"])
        elif kind == "falloff":
            lo, hi, troe = p["low"], p["high"], p["troe"]
            fpar[j, 0:6] = (lo["A"], lo["b"], lo["Ea_K"], hi["A"], hi["b"], hi["Ea_K"])
            if troe is None:
                law[j] = rl.FALLOFF_LINDEMANN
            else:
                law[j] = rl.FALLOFF_TROE
                fpar[j, 6:9] = (troe["alpha"], troe["T3_K"], troe["T1_K"])
                if troe["T2_K"] is not None:
                    fpar[j, 9] = troe["T2_K"]
                    ipar[j, 0] = 1
        elif kind == "landau_teller":
            law[j] = rl.LANDAU_TELLER
            fpar[j, 0:6] = (p["A"], p["B_K13"], p["C_K23"],
                            rl.ladder_factor(p["level"], p["anharmonicity"]),
                            p["level"], p["anharmonicity"])
        elif kind == "expression":
            law[j] = rl.EXPRESSION
            fpar[j, 0] = p["unit_factor"]
            label = f"reactions[{r.index}] '{r.equation}'"
            try:
                programs.append((j, compile_expression(p["text"], file=loaded.path, entry=label,
                                                       line=r.line)))
            except InputError as exc:
                problems.extend(exc.problems)
        elif kind == "electron_impact":
            law[j] = rl.ELECTRON_IMPACT
            pid = p["process"]
            if pid not in ep_col:
                ep_col[pid] = len(electron_processes)
                electron_processes.append(pid)
            ipar[j, 0] = ep_col[pid]
            fpar[j, 0] = p["scale"]
        else:  # pragma: no cover - the loader admits only the laws above
            raise ValueError(f"unknown rate law {kind!r}")
    if problems:
        raise InputError(problems)
    if programs:
        code, consts, start, length, cstart = concatenate_programs([prog for _, prog in programs])
        for (j, (_, prog_consts)), a, b, c in zip(programs, start, length, cstart):
            ipar[j, 0:4] = (a, b, c, len(prog_consts))
    else:
        code, consts = np.zeros(0, np.int64), np.zeros(0)
    efficiencies = np.array(eff_rows) if eff_rows else np.zeros((0, n_s))
    arrays = dict(law=law, fpar=fpar, ipar=ipar, reactant_index=reactant_index,
                  product_index=product_index, product_coeff=product_coeff,
                  nasa7_coeffs=coeffs, nasa7_T_K=T_K, energy_shift_J_mol=shift,
                  expr_code=np.ascontiguousarray(code, np.int64),
                  expr_consts=np.ascontiguousarray(consts, np.float64))
    kernel_args = tuple(np.ascontiguousarray(arrays[name]) for name in KERNEL_ARGS)
    electron = loaded.electron
    return CompiledMechanism(
        name=loaded.name, path=loaded.path, species=species, charge=charge, elements=elements,
        element_counts=element_counts, reactions=tuple(texts), n_species=n_s, n_reactions=n_r,
        reactant_index=reactant_index, product_index=product_index, product_coeff=product_coeff,
        third_body=third_body, efficiencies=np.ascontiguousarray(efficiencies, np.float64),
        multiply_M=multiply_M, law=law, fpar=fpar, ipar=ipar, kernel_args=kernel_args,
        electron_processes=tuple(electron_processes), uncertainty_factor=unc,
        source=tuple(sources), provenance=tuple(provs), reverse_of=reverse_of,
        file_reaction=file_reaction, line=line, stoichiometry=stoich, nasa7_coeffs=coeffs,
        nasa7_T_K=T_K, energy_shift_J_mol=shift, has_thermo=has_thermo,
        electron_index=index[electron] if electron is not None else -1,
        cross_sections=tuple(loaded.cross_sections), species_index=index)


def third_body_densities(mech, y_m3):
    """n_M of every reaction row, m^-3 (0 where the row has no third body).

    Parameters
    ----------
    mech : CompiledMechanism
    y_m3 : float64 (n_s,)
        Species densities in m^-3.
    """
    y = np.asarray(y_m3, dtype=float)
    out = np.zeros(mech.n_reactions)
    has = mech.third_body >= 0
    if np.any(has):
        out[has] = mech.efficiencies[mech.third_body[has]] @ y
    return out


def evaluate_rate_coefficients(mech, Tg_K, *, Te_K=math.nan, E_N_Td=0.0, mean_energy_eV=math.nan,
                               k_electron_m3_s=None, n_M_m3=None):
    """Rate coefficient of every row (and d k / d n_M) at one state; a convenience wrapper.

    Parameters
    ----------
    mech : CompiledMechanism
    Tg_K : float
        Gas temperature, K.
    Te_K, E_N_Td, mean_energy_eV : float
        Electron temperature (K), reduced field (Td) and mean energy (eV); see
        :func:`plasmazero.physics.ratelaws.rate_coefficients`.
    k_electron_m3_s : array (len(mech.electron_processes),) or None
        Electron-impact rate coefficients, m^3/s (zeros when None).
    n_M_m3 : float, array (n_r,) or None
        Third-body density of each row (a scalar is used for every row with a third
        body), m^-3; zeros when None.

    Returns
    -------
    (k, dk_dnM) : two float64 arrays (n_r,), SI
    """
    n_r = mech.n_reactions
    ke = np.zeros(len(mech.electron_processes)) if k_electron_m3_s is None else \
        np.ascontiguousarray(k_electron_m3_s, dtype=np.float64)
    if ke.shape != (len(mech.electron_processes),):
        raise ValueError(f"k_electron_m3_s needs {len(mech.electron_processes)} entries "
                         f"({', '.join(mech.electron_processes)})")
    if n_M_m3 is None:
        nM = np.zeros(n_r)
    elif np.ndim(n_M_m3) == 0:
        nM = np.where(mech.third_body >= 0, float(n_M_m3), 0.0)
    else:
        nM = np.ascontiguousarray(n_M_m3, dtype=np.float64)
    k = np.empty(n_r)
    dk = np.empty(n_r)
    rl.rate_coefficients(mech.kernel_args, float(Tg_K), float(Te_K), float(E_N_Td),
                         float(mean_energy_eV), ke, nM, k, dk)
    return k, dk


def reaction_enthalpies_J_mol(mech, T_K):
    """Standard reaction enthalpy of every row at ``T_K``, J per mol of reaction.

    NaN for rows involving a species without thermo. Excited states include their
    excitation energy (``energy_shift_J_mol``).

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (through
    :func:`plasmazero.physics.thermo.reaction_enthalpy_J_mol`).
    """
    arrays = (mech.nasa7_coeffs, mech.nasa7_T_K, mech.energy_shift_J_mol)
    out = np.full(mech.n_reactions, np.nan)
    for j in range(mech.n_reactions):
        nu = mech.stoichiometry[:, j]
        if np.all(mech.has_thermo[nu != 0]):
            out[j] = reaction_enthalpy_J_mol(nu, float(T_K), arrays)
    return out


def describe_row(mech, j):
    """One-line description of reaction row ``j``: file, line and equation."""
    line = int(mech.line[j]) if mech.line is not None and mech.line[j] >= 0 else None
    return format_problem(mech.path, f"reactions[{int(mech.file_reaction[j])}]", mech.reactions[j], line)
