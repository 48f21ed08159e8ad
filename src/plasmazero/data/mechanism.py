"""Mechanism files: plasmazero's own YAML schema, read and validated into records.

A mechanism file lists the species of a gas-phase plasma chemistry and its reactions with
their rate laws. This module reads it, checks everything that can be checked without
physics, and returns plain frozen records with every number converted to SI. The records
are compiled into arrays by :func:`plasmazero.physics.compiled.compile_mechanism`.

Schema
------
::

    name: co2_demo                          # required, a name
    description: "..."                      # optional free text
    source: "..."                           # optional default citation of the reactions
    provenance: recalled                    # optional default: taken | recalled | fitted |
                                            #   adjusted | invented
    note: "..."                             # optional free text
    units: {density: cm^-3, rate_coefficient: cm^3/s, activation: K}   # optional
    elements: [C, O, E]                     # required; E is the electron
    cross_sections: [../cross_sections/co2.yaml]   # optional, paths relative to this file
    thermo_library: ../thermo/nasa7.yaml    # optional, path (or list of paths) relative to this file
    species:                                # required, non-empty
      - name: CO2
        composition: {C: 1, O: 2}
        charge: 0                           # optional, default 0
        thermo:                             # optional inline thermo
          nasa7: {T_ranges_K: [200, 1000, 6000], low: [a1..a7], high: [a1..a7]}
          source: "..."
          provenance: taken
      - name: CO2(va)
        state_of: CO2                       # an excited state of a parent species
        energy_eV: 0.29                     # its excitation energy, eV (required)
      - name: e
        composition: {E: 1}
        charge: -1
    reactions:                              # required, non-empty
      - equation: e + CO2 => e + CO + O
        rate: {electron_impact: co2_dissociation}
        source: "..."
        provenance: recalled                # optional
        uncertainty_factor: 2               # optional, >= 1
        duplicate: true                     # optional
        efficiencies: {CO2: 2.0}            # optional, only with M or (+M)
        note: "..."                         # optional

Unknown keys are errors at every level.

Species
-------
``name`` is unique, has no white space, does not start with a digit, ``+``, ``-`` or ``(``,
contains no ``=``, and is not ``M`` (the generic third body). ``composition`` maps
elements of ``elements`` to non-negative integer counts. The electron pseudo-element
``E`` may be given; it must equal minus the charge (``e``: ``{E: 1}``, charge -1; a cation
``Ar+``: ``{Ar: 1}`` or ``{Ar: 1, E: -1}``). Whatever is written, the element count of
``E`` (when ``E`` is listed in ``elements``) is taken as ``-charge`` for every species, so
that conserving ``E`` is conserving charge. The electron is the species whose
composition is ``{E: 1}`` alone with charge -1.

A species with ``state_of`` is an electronic or vibrational state of its parent (which must
be listed, and not be a state itself): it has the parent's composition and charge (if given
they must agree) and the parent's thermochemistry with the enthalpy raised by
``energy_eV`` (>= 0) and the entropy by R ln ``statistical_weight`` (the state's degeneracy
over the parent's, default 1), so that detailed balance gives the Boltzmann population
g exp(-E/kT). It takes no ``thermo`` of its own.

Thermochemistry of a species, in this order: its inline ``thermo`` block (validated by
:func:`plasmazero.data.thermo_library.parse_nasa7`); the entry of the same name in the
``thermo_library`` file(s) (a list is searched as one library; a name
may appear in only one of them); its parent's (for states); none. A species without thermo is
allowed unless a reversible reaction needs it.

Reaction equations
------------------
``A + B => C + D`` (irreversible) or ``A + B <=> C + D`` (reversible: the reverse rate
follows from detailed balance with the NASA polynomials). Terms are separated by ``+``
with white space on both sides (so ``Ar+ + e`` is two terms, the ion ``Ar+`` and ``e``);
a term is ``name``, ``2 name`` or ``2name``. ``M`` on both sides (``A + B + M => AB + M``)
is a generic third body: the rate is k [M] [A] [B], [M] = sum_s efficiency_s n_s with
efficiencies 1 unless given in ``efficiencies``. ``(+M)`` on both sides marks a pressure
falloff reaction (``falloff`` rate law only), where k itself depends on [M].

Reactants (M not counted) have positive integer coefficients and number 1 to 3 in total;
products have positive coefficients (integers in reversible reactions, where they
also number at most 3 in total) and at most 6 distinct species. Elements and charge must
balance. Two reactions with the same reactants, products and third-body kind (either
direction for reversible ones) must both say ``duplicate: true``.

Rate laws (``rate`` holds exactly one of)
----------------------------------------
``arrhenius: {A, b, Ea}``
    k = A (Tg/300 K)^b exp(-Ea/Tg). ``b`` and ``Ea`` default to 0.
``electron_arrhenius: {A, b, Ea}``
    The same form in the electron temperature Te (Te = (2/3) mean energy / k_B).
``falloff: {low: {A, b, Ea}, high: {A, b, Ea}, troe: {alpha, T3, T1, T2}}``
    Lindemann form (Troe broadening when ``troe`` is given; ``T2`` optional; 0 <= alpha <= 1,
    T3, T1, T2 > 0 in K). Needs ``(+M)`` in the equation.
``landau_teller: {A, B, C, ladder: {level, anharmonicity}}``
    k = s_n A exp(-B Tg^(-1/3) + C Tg^(-2/3)); B in K^(1/3), C in K^(2/3) (default 0),
    never converted. ``ladder`` (optional) scales the 1 -> 0 rate to the level-n -> n-1
    transition, s_n = n (1 - x_e)/(1 - n x_e), x_e = ``anharmonicity`` (default 0; needs
    1 - n x_e > 0).
``expression: "..."``
    An arithmetic formula in Tg, Te, E_N_Td, mean_energy_eV
    (:mod:`plasmazero.physics.expression`), giving k in the file's rate-coefficient unit.
``electron_impact: process_id`` or ``{process: process_id, scale: x}``
    k from the EEDF with the cross section ``process_id`` of one of the ``cross_sections``
    files, times ``scale`` (>= 0, default 1). ``process_id:reverse`` is the superelastic
    partner (the process must have a ``weight_ratio``). Exactly two reactants, one of them
    the electron; no ``M``. The forward process's target gas must be a reactant.

``electron_impact`` and ``electron_arrhenius`` reactions cannot be reversible (detailed
balance at the gas temperature does not apply to them; a superelastic reverse uses
``process_id:reverse``).

Units
-----
``units`` may give (defaults in brackets):

``rate_coefficient`` [``m^3/s``]
    The unit of a *bimolecular* rate coefficient: ``m^3/s``, ``cm^3/s``, ``m^3/(mol s)``
    or ``cm^3/(mol s)``. With the length-cubed factor L^3 (1 or 1e-6 m^3) and the amount
    factor a (1 per molecule, or 1/N_A for per mole), a reaction with ``m`` reactants
    (a plain third body ``M`` counts as one) has k_SI = k_file (a L^3)^(m - 1):
    s^-1 unchanged, cm^3/s -> 1e-6 m^3/s, cm^6/s -> 1e-12 m^6/s. The low-pressure limit
    of a falloff reaction has order m + 1 (it includes [M]).
``density`` [from ``rate_coefficient``]
    ``m^-3``, ``cm^-3``, ``mol/m^3`` or ``mol/cm^3``: the density unit the rate
    coefficients refer to; must agree with ``rate_coefficient`` when both are given
    (``cm^-3`` with ``cm^3/s``...). Giving only ``density`` sets ``rate_coefficient``.
``activation`` [``K``]
    Unit of every ``Ea``: ``K``, ``J/mol``, ``kJ/mol``, ``cal/mol``, ``kcal/mol`` or ``eV``;
    converted to K by Ea_K = Ea_J_mol / R or Ea_eV e / k_B.

``A`` of every law, the result of ``expression`` and nothing else is converted by
molecularity; ``scale``, ``efficiencies``, ``B`` and ``C`` are never converted.

Validation
----------
:func:`load_mechanism` reports every problem of a file together in one
:class:`~plasmazero.data.errors.InputError`, one line each naming the file, the line, the
entry and the problem: YAML syntax, unknown keys, missing or mistyped fields, unknown
species and elements, element and charge balance, duplicate reactions, non-finite or
negative parameters (A, scale, efficiencies, Troe temperatures, uncertainty factor < 1;
``b``, ``Ea``, ``B`` and ``C`` may be negative), unknown units, unknown electron-impact process
ids, missing thermo for reversible reactions, ``state_of`` an unknown parent, and (when a
checker is passed, as :func:`plasmazero.physics.compiled.load_compiled_mechanism` does)
bad expressions. Problems in the referenced cross-section or thermo files are reported
with their own file and line.
"""

from __future__ import annotations

import math
import os
import re
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

from .cross_sections import PROVENANCE, load_cross_sections
from .errors import InputError, format_problem
from .yamlio import is_finite_number, line_of, read_yaml

TOP_KEYS = {"name", "description", "source", "provenance", "note", "units", "elements",
            "cross_sections", "thermo_library", "species", "reactions"}
SPECIES_KEYS = {"name", "composition", "charge", "thermo", "state_of", "energy_eV",
                "statistical_weight", "note"}
THERMO_KEYS = {"nasa7", "source", "provenance", "note"}
REACTION_KEYS = {"equation", "rate", "efficiencies", "source", "provenance", "note",
                 "uncertainty_factor", "duplicate"}
UNIT_KEYS = {"density", "rate_coefficient", "activation"}
LAWS = ("arrhenius", "electron_arrhenius", "falloff", "landau_teller", "expression",
        "electron_impact")
ARRHENIUS_KEYS = {"A", "b", "Ea"}
FALLOFF_KEYS = {"low", "high", "troe"}
TROE_KEYS = {"alpha", "T3", "T1", "T2"}
LANDAU_TELLER_KEYS = {"A", "B", "C", "ladder"}
LADDER_KEYS = {"level", "anharmonicity"}
ELECTRON_IMPACT_KEYS = {"process", "scale"}
REVERSE_SUFFIX = ":reverse"
MAX_REACTANTS = 3
MAX_PRODUCTS = 6

# Exact by the 2019 definition of the SI (CODATA 2018: Tiesinga et al. 2021, Rev. Mod. Phys.
# 93, 025010), and the thermochemical calorie (4.184 J exactly, common practice). The data
# layer cannot import plasmazero.physics.constants; tests check both agree.
_N_A = 6.02214076e23
_K_B = 1.380649e-23
_E_C = 1.602176634e-19
_R = _N_A * _K_B

#: rate-coefficient unit (bimolecular) -> SI factor per order above one
RATE_UNITS = {"m^3/s": 1.0, "cm^3/s": 1e-6, "m^3/(mol s)": 1.0 / _N_A,
              "cm^3/(mol s)": 1e-6 / _N_A}
#: density unit -> the matching rate-coefficient unit
DENSITY_UNITS = {"m^-3": "m^3/s", "cm^-3": "cm^3/s", "mol/m^3": "m^3/(mol s)",
                 "mol/cm^3": "cm^3/(mol s)"}
#: activation unit -> factor to K
ACTIVATION_UNITS = {"K": 1.0, "J/mol": 1.0 / _R, "kJ/mol": 1e3 / _R, "cal/mol": 4.184 / _R,
                    "kcal/mol": 4184.0 / _R, "eV": _E_C / _K_B}

_ARROW = re.compile(r"<=>|=>")
_FALLOFF_M = re.compile(r"\(\s*\+\s*M\s*\)")
_PLUS = re.compile(r"\s+\+\s+")
_TERM = re.compile(r"^(?:(\d+(?:\.\d*)?|\.\d+)\s*)?([^\s\d+\-(=][^\s=]*)$")
_NAME = re.compile(r"^[^\s\d+\-(=][^\s=]*$")


@dataclass(frozen=True)
class SpeciesRecord:
    """One species of a mechanism (no physics: numbers as read, SI)."""

    name: str
    composition: dict
    charge: int
    state_of: str | None = None
    energy_eV: float = 0.0
    #: degeneracy of a state over that of its parent (1 for ground species)
    statistical_weight: float = 1.0
    #: ((2, 7) coefficients, (3,) temperatures in K) or None when no thermo is known
    nasa7: tuple | None = None
    #: where the thermo comes from: "inline", "library", "parent:<name>" or ""
    thermo_from: str = ""
    thermo_source: str = ""
    line: int | None = None


@dataclass(frozen=True)
class RateLaw:
    """A rate law and its parameters, already in SI (see the module docstring).

    ``params`` by ``kind``:

    - ``arrhenius``, ``electron_arrhenius``: ``A`` (SI), ``b``, ``Ea_K``
    - ``falloff``: ``low`` and ``high`` (each a dict as for arrhenius; ``low`` A in the
      order-plus-one unit) and ``troe`` (None, or ``alpha``, ``T3_K``, ``T1_K``, ``T2_K``
      with ``T2_K`` None when absent)
    - ``landau_teller``: ``A`` (SI), ``B_K13``, ``C_K23``, ``level`` (int), ``anharmonicity``
    - ``expression``: ``text``, ``unit_factor`` (file unit to SI for this reaction)
    - ``electron_impact``: ``process`` (id, with ``:reverse`` for superelastic), ``scale``
    """

    kind: str
    params: dict


@dataclass(frozen=True)
class ReactionRecord:
    """One reaction as written in the file (one row even when reversible)."""

    equation: str
    reactants: tuple          # ((species, integer coefficient), ...) in order of appearance
    products: tuple           # ((species, coefficient), ...) distinct species
    reversible: bool
    third_body: str           # "none", "M" (plain three-body) or "falloff" ((+M))
    efficiencies: dict
    rate: RateLaw
    source: str = ""
    provenance: str = ""
    uncertainty_factor: float = math.nan
    duplicate: bool = False
    line: int | None = None
    #: position in the file's reaction list (0-based)
    index: int = 0


@dataclass(frozen=True)
class Mechanism:
    """A validated mechanism file: records only, SI numbers."""

    path: Path
    name: str
    description: str
    elements: tuple
    species: tuple
    reactions: tuple
    cross_section_paths: tuple
    cross_sections: tuple     # CrossSectionSet of each file
    thermo_library: tuple | None
    units: dict               # the units as given, after defaults
    electron: str | None      # name of the electron species, if any
    species_index: dict = field(default_factory=dict, compare=False, repr=False)


# --------------------------------------------------------------------------- helpers


def _number(x):
    """True for a finite int or float that is not a bool (huge integers are not finite)."""
    return is_finite_number(x)


def _integer(x):
    return _number(x) and float(x) == int(x)


def _text(x):
    return isinstance(x, str)


def _label(x, limit=60):
    """Short printable form of a user value for messages (repr, so text comes quoted)."""
    return _short(repr(x), limit)


def _short(text, limit=60):
    """``text`` on one line, cut to ``limit`` characters."""
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 3] + "..."


class _Problems:
    """Collects problems of one file as formatted lines."""

    def __init__(self, file):
        self.file = file
        self.lines = []

    def add(self, entry, problem, line=None):
        self.lines.append(format_problem(self.file, entry, problem, line))

    def extend(self, exc):
        self.lines.extend(exc.problems)


def _unknown_keys(mapping, allowed, entry, problems, what=""):
    for key in mapping:
        if key not in allowed:
            where = f"{what} " if what else ""
            problems.add(entry, f"unknown {where}key {_label(key)} (allowed: {', '.join(sorted(allowed))})",
                         line_of(mapping, key))


def _resolve(base, value):
    p = Path(value)
    return Path(os.path.normpath(p if p.is_absolute() else base / p))


# --------------------------------------------------------------------------- units


def _units(doc, problems):
    """Validate the ``units`` block; return (units dict, rate factor, activation factor)."""
    units = doc.get("units", {})
    line = line_of(doc, "units")
    out = {"rate_coefficient": "m^3/s", "density": "m^-3", "activation": "K"}
    if units is None:
        units = {}
    if not isinstance(units, dict):
        problems.add("units", "expected a mapping with keys density, rate_coefficient, activation", line)
        return out, 1.0, 1.0
    _unknown_keys(units, UNIT_KEYS, "units", problems)
    ok = True
    for key, table in (("rate_coefficient", RATE_UNITS), ("density", DENSITY_UNITS),
                       ("activation", ACTIVATION_UNITS)):
        if key in units:
            value = units[key]
            if not _text(value) or value.strip() not in table:
                problems.add("units", f"{key} {_label(value)} is not one of {', '.join(table)}",
                             line_of(units, key))
                ok = False
            else:
                out[key] = value.strip()
    if ok:
        if "density" in units and "rate_coefficient" in units:
            if DENSITY_UNITS[out["density"]] != out["rate_coefficient"]:
                problems.add("units", f"density {out['density']} does not match rate_coefficient "
                             f"{out['rate_coefficient']} (expected {DENSITY_UNITS[out['density']]})",
                             line_of(units, "density"))
        elif "density" in units:
            out["rate_coefficient"] = DENSITY_UNITS[out["density"]]
        else:
            out["density"] = {v: k for k, v in DENSITY_UNITS.items()}[out["rate_coefficient"]]
    return out, RATE_UNITS.get(out["rate_coefficient"], 1.0), ACTIVATION_UNITS.get(out["activation"], 1.0)


# --------------------------------------------------------------------------- species


def _parse_species(doc, elements, path, problems, library):
    entries = doc.get("species")
    if not isinstance(entries, list) or not entries:
        problems.add("species", "missing or empty list of species", line_of(doc, "species"))
        return [], set()
    raw = []
    seen = set()
    for i, entry in enumerate(entries):
        if not isinstance(entry, dict):
            problems.add(f"species[{i}]", "expected a mapping with at least a name", line_of(doc, "species"))
            continue
        line = line_of(entry)
        name = entry.get("name")
        label = f"species[{i}]"
        if not _text(name) or not _NAME.match(name) or name == "M":
            problems.add(label, f"name {_label(name)} is not a valid species name (no spaces; "
                         "not starting with a digit, +, - or (; no =; M is the third body)",
                         line_of(entry, "name"))
            _unknown_keys(entry, SPECIES_KEYS, label, problems)
            continue
        label = f"species {name}"
        if name in seen:
            problems.add(label, "listed twice", line)
            continue
        seen.add(name)
        _unknown_keys(entry, SPECIES_KEYS, label, problems)
        raw.append((name, entry, line, label))
    names = {name for name, *_ in raw}
    by_name = {name: entry for name, entry, _, _ in raw}

    comp_of, charge_of = {}, {}
    bad_composition = set()
    # ground species first, then states (which inherit)
    for name, entry, line, label in raw:
        if "state_of" in entry:
            continue
        for key in ("energy_eV", "statistical_weight"):
            if key in entry:
                problems.add(label, f"{key} is only allowed with state_of", line_of(entry, key))
        charge = entry.get("charge", 0)
        n_before = len(problems.lines)
        if not _integer(charge):
            problems.add(label, f"charge {_label(charge)} is not an integer", line_of(entry, "charge"))
            charge = 0
        charge = int(charge)
        comp = _composition(entry, label, elements, charge, problems)
        if len(problems.lines) > n_before:
            bad_composition.add(name)
        comp_of[name] = comp
        charge_of[name] = charge
    for name, entry, line, label in raw:
        if "state_of" not in entry:
            continue
        parent = entry.get("state_of")
        if not _text(parent) or parent not in names:
            problems.add(label, f"state_of {_label(parent)} is not a species of this mechanism",
                         line_of(entry, "state_of"))
            continue
        if "state_of" in by_name[parent]:
            problems.add(label, f"state_of {parent!r} is itself a state; give the ground species",
                         line_of(entry, "state_of"))
            continue
        energy = entry.get("energy_eV")
        if not _number(energy) or energy < 0:
            problems.add(label, "energy_eV (excitation energy above the parent, eV) is missing or "
                         "not a non-negative number", line_of(entry, "energy_eV"))
        weight = entry.get("statistical_weight", 1.0)
        if not _number(weight) or not weight > 0:
            problems.add(label, "statistical_weight (degeneracy of the state over that of the "
                         "parent) must be a positive number", line_of(entry, "statistical_weight"))
        if "thermo" in entry:
            problems.add(label, "a state takes its parent's thermo shifted by energy_eV; remove thermo",
                         line_of(entry, "thermo"))
        if parent not in comp_of:
            continue
        charge = entry.get("charge", charge_of[parent])
        if not _integer(charge) or int(charge) != charge_of[parent]:
            problems.add(label, f"charge {_label(charge)} differs from the parent's ({charge_of[parent]})",
                         line_of(entry, "charge"))
        if "composition" in entry:
            comp = _composition(entry, label, elements, charge_of[parent], problems)
            if comp is not None and comp_of[parent] is not None and comp != comp_of[parent]:
                problems.add(label, "composition differs from the parent's", line_of(entry, "composition"))
        if parent in bad_composition:
            bad_composition.add(name)
        comp_of[name] = comp_of[parent]
        charge_of[name] = charge_of[parent]

    records = []
    nasa7_of, from_of, tsource_of = {}, {}, {}
    for name, entry, line, label in raw:
        if "state_of" in entry:
            continue
        nasa7, origin, tsource = None, "", ""
        if "thermo" in entry:
            nasa7 = _inline_thermo(entry["thermo"], label, line_of(entry, "thermo"), path, problems)
            origin = "inline"
            tsource = str(entry["thermo"].get("source", "")) if isinstance(entry["thermo"], dict) else ""
        elif library is not None and name in library:
            rec = library[name]
            nasa7 = (rec.nasa7_coeffs, rec.nasa7_T_K)
            origin = "library"
            tsource = str(getattr(rec, "source", "") or "")
            if name not in bad_composition:
                _compare_with_library(rec, name, comp_of[name], charge_of[name], label, line, problems)
        nasa7_of[name], from_of[name], tsource_of[name] = nasa7, origin, tsource
    for name, entry, line, label in raw:
        if name not in comp_of:
            continue
        state_of = entry.get("state_of") if "state_of" in entry else None
        energy = entry.get("energy_eV", 0.0) if state_of else 0.0
        energy = float(energy) if _number(energy) else 0.0
        weight = entry.get("statistical_weight", 1.0) if state_of else 1.0
        weight = float(weight) if _number(weight) and weight > 0 else 1.0
        if state_of:
            nasa7 = _state_thermo(nasa7_of.get(state_of), weight)
            origin = f"parent:{state_of}" if nasa7 is not None else ""
            tsource = tsource_of.get(state_of, "")
        else:
            nasa7, origin, tsource = nasa7_of[name], from_of[name], tsource_of[name]
        records.append(SpeciesRecord(
            name=name, composition=dict(comp_of[name] or {}), charge=charge_of[name],
            state_of=state_of, energy_eV=energy, statistical_weight=weight, nasa7=nasa7,
            thermo_from=origin,
            thermo_source=tsource, line=line))
    # species whose composition could not be read: reactions skip their balance check
    unreadable = set(names) - set(comp_of) | bad_composition
    return records, unreadable


def _state_thermo(parent_nasa7, weight):
    """NASA-7 of a state: the parent's with the entropy raised by R ln(weight).

    A state with g_k times the parent's degeneracy has, at equal energy, R ln g_k more
    entropy, so that equilibrium constants (and the reverse rates by detailed balance)
    give the Boltzmann population n_k / n_0 = g_k exp(-E_k / k T). The 7th coefficient
    is the entropy constant (s/R = ... + a7), so adding ln g to it in both ranges does
    exactly that (McBride, Zehe & Gordon 2002, NASA/TP-2002-211556, eq. 4.3). The
    excitation energy enters separately (``energy_eV``)."""
    if parent_nasa7 is None or weight == 1.0:
        return parent_nasa7
    coeffs = [list(row) for row in parent_nasa7[0]]
    for row in coeffs:
        row[6] = float(row[6]) + math.log(weight)
    return (coeffs, parent_nasa7[1])


def _compare_with_library(rec, name, comp, charge, label, line, problems):
    """A library entry of the same name must be the same species (charge, composition)."""
    lib_charge = getattr(rec, "charge", None)
    if lib_charge is not None and int(lib_charge) != charge:
        problems.add(label, f"charge {charge} differs from the thermo library's {int(lib_charge)} "
                     f"for {name}", line)
    lib_comp = getattr(rec, "composition", None)
    if lib_comp is not None and comp is not None:
        a = {k: v for k, v in comp.items() if k != "E" and v}
        b = {k: v for k, v in dict(lib_comp).items() if k != "E" and v}
        if a != b:
            problems.add(label, f"composition {a} differs from the thermo library's {b} for {name}", line)


def _composition(entry, label, elements, charge, problems):
    comp = entry.get("composition")
    line = line_of(entry, "composition")
    if "composition" not in entry:
        problems.add(label, "composition {element: count} is missing", line_of(entry))
        return None
    if not isinstance(comp, dict):
        problems.add(label, "composition must be a mapping {element: count}", line)
        return None
    out = {}
    for el, count in comp.items():
        if not _text(el) or el not in elements:
            problems.add(label, f"element {_label(el)} is not in elements ({', '.join(elements)})",
                         line_of(comp, el))
            continue
        if el == "E":
            if not _integer(count) or int(count) != -charge:
                problems.add(label, f"electron count E {_label(count)} must equal minus the charge "
                             f"({-charge})", line_of(comp, el))
            continue
        if not _integer(count) or count < 0:
            problems.add(label, f"count of {el} {_label(count)} is not a non-negative integer",
                         line_of(comp, el))
            continue
        if int(count):
            out[el] = int(count)
    if "E" in elements and charge:
        out["E"] = -charge
    elif charge and "E" not in elements:
        problems.add(label, "charged species need the electron element E in elements", line)
    return out


def _inline_thermo(block, label, line, path, problems):
    if not isinstance(block, dict):
        problems.add(label, "thermo must be a mapping with nasa7, source, provenance", line)
        return None
    _unknown_keys(block, THERMO_KEYS, label, problems, "thermo")
    prov = block.get("provenance")
    if prov is not None and prov not in PROVENANCE:
        problems.add(label, f"thermo provenance must be one of {', '.join(PROVENANCE)}",
                     line_of(block, "provenance"))
    if "source" not in block or not _text(block.get("source")) or not block["source"].strip():
        problems.add(label, "inline thermo needs a source (the publication)", line)
    if "nasa7" not in block:
        problems.add(label, "thermo needs a nasa7 block", line)
        return None
    from .thermo_library import parse_nasa7
    try:
        return parse_nasa7(block["nasa7"], path, label, line_of(block, "nasa7"))
    except InputError as exc:
        problems.extend(exc)
    except (TypeError, ValueError, KeyError, AttributeError, IndexError, OverflowError) as exc:
        # parse_nasa7 raises InputError; anything else is a number it could not take
        problems.add(label, f"nasa7 block not readable ({type(exc).__name__}: {_short(str(exc))})",
                     line_of(block, "nasa7"))
    return None


# --------------------------------------------------------------------------- equations


def parse_equation(text, species_names):
    """Split an equation into its parts; raise ValueError with a message on bad syntax.

    Returns
    -------
    (reactants, products, reversible, third_body)
        ``reactants`` and ``products`` are lists of (name, coefficient) in order of
        appearance (repeats merged later); ``third_body`` is "none", "M" or "falloff".
    """
    arrows = _ARROW.findall(text)
    if len(arrows) != 1:
        raise ValueError("needs exactly one arrow, => (irreversible) or <=> (reversible)")
    reversible = arrows[0] == "<=>"
    left, right = _ARROW.split(text)
    fl, fr = len(_FALLOFF_M.findall(left)), len(_FALLOFF_M.findall(right))
    if fl != fr or fl > 1:
        raise ValueError("(+M) must appear once on each side or not at all")
    third = "falloff" if fl else "none"
    sides = []
    for side in (_FALLOFF_M.sub(" ", left), _FALLOFF_M.sub(" ", right)):
        side = side.strip()
        if not side:
            raise ValueError("each side needs at least one species")
        terms = []
        n_M = 0
        for term in _PLUS.split(side):
            term = term.strip()
            if term == "M":
                n_M += 1
                continue
            m = _TERM.match(term)
            if not m:
                raise ValueError(f"term {term!r} is not 'name' or 'coefficient name' (separate terms "
                                 "with ' + ', spaces on both sides)")
            coeff = float(m.group(1)) if m.group(1) else 1.0
            name = m.group(2)
            if name not in species_names:
                raise ValueError(f"unknown species {name!r}")
            if not coeff > 0:
                raise ValueError(f"coefficient of {name} must be positive")
            terms.append((name, coeff))
        if not terms:
            raise ValueError("each side needs at least one species besides M")
        sides.append((terms, n_M))
    (reac, ml), (prod, mr) = sides
    if ml != mr or ml > 1:
        raise ValueError("M must appear once on each side or not at all")
    if ml and third == "falloff":
        raise ValueError("use either + M (three-body) or (+M) (falloff), not both")
    if ml:
        third = "M"
    return reac, prod, reversible, third


def _merge(terms):
    out = {}
    for name, coeff in terms:
        out[name] = out.get(name, 0.0) + coeff
    return out


# --------------------------------------------------------------------------- rate laws


def _arrhenius_params(block, label, what, line, order, rate_factor, ea_factor, problems):
    if not isinstance(block, dict):
        problems.add(label, f"{what} must be a mapping {{A, b, Ea}}", line)
        return None
    _unknown_keys(block, ARRHENIUS_KEYS, label, problems, what)
    ok = True
    A = block.get("A")
    if not _number(A) or A < 0:
        problems.add(label, f"{what} A {_label(A)} is missing or not a finite non-negative number",
                     line_of(block, "A"))
        ok = False
    for key in ("b", "Ea"):
        if key in block and not _number(block[key]):
            problems.add(label, f"{what} {key} {_label(block[key])} is not a finite number",
                         line_of(block, key))
            ok = False
    if not ok:
        return None
    Ea_K = float(block.get("Ea", 0.0)) * ea_factor
    A_SI = float(A) * rate_factor ** (order - 1)
    if not (math.isfinite(A_SI) and math.isfinite(Ea_K)):
        problems.add(label, f"{what} parameters overflow after unit conversion", line_of(block))
        return None
    return {"A": A_SI, "b": float(block.get("b", 0.0)), "Ea_K": Ea_K}


def _rate_law(rate, label, line, order, third, reversible, reactants, electron, process_ids,
              rate_factor, ea_factor, problems, path, check_expression, eq_line=None):
    """Validate ``rate``; return a RateLaw or None."""
    if not isinstance(rate, dict) or len(rate) != 1:
        problems.add(label, f"rate must be a mapping with exactly one of {', '.join(LAWS)}", line)
        return None
    (kind, block), = rate.items()
    bline = line_of(rate, kind)
    if kind not in LAWS:
        problems.add(label, f"unknown rate law {_label(kind)} (allowed: {', '.join(LAWS)})", bline)
        return None
    if kind == "falloff" and third != "falloff":
        problems.add(label, "falloff needs (+M) on both sides of the equation", bline)
        return None
    if kind != "falloff" and third == "falloff":
        problems.add(label, "(+M) is for the falloff rate law only; use + M for a plain three-body "
                     "reaction", eq_line)
        return None
    if reversible and kind in ("electron_impact", "electron_arrhenius"):
        problems.add(label, f"{kind} reactions cannot be reversible (<=>); write the reverse as its own "
                     "reaction (electron_impact: id:reverse for superelastic collisions)", eq_line)
        return None
    if kind in ("arrhenius", "electron_arrhenius"):
        params = _arrhenius_params(block, label, kind, bline, order, rate_factor, ea_factor, problems)
        return None if params is None else RateLaw(kind, params)
    if kind == "falloff":
        if not isinstance(block, dict):
            problems.add(label, "falloff must be a mapping {low, high, troe}", bline)
            return None
        _unknown_keys(block, FALLOFF_KEYS, label, problems, "falloff")
        low = high = None
        for key in ("low", "high"):
            if key not in block:
                problems.add(label, f"falloff needs {key}: {{A, b, Ea}}", line_of(block))
        if "low" in block:
            low = _arrhenius_params(block["low"], label, "falloff low", line_of(block, "low"), order + 1,
                                    rate_factor, ea_factor, problems)
        if "high" in block:
            high = _arrhenius_params(block["high"], label, "falloff high", line_of(block, "high"), order,
                                     rate_factor, ea_factor, problems)
        troe = None
        if "troe" in block:
            troe = _troe(block["troe"], label, line_of(block, "troe"), problems)
            if troe is None:
                return None
        if low is None or high is None:
            return None
        return RateLaw("falloff", {"low": low, "high": high, "troe": troe})
    if kind == "landau_teller":
        if not isinstance(block, dict):
            problems.add(label, "landau_teller must be a mapping {A, B, C, ladder}", bline)
            return None
        _unknown_keys(block, LANDAU_TELLER_KEYS, label, problems, "landau_teller")
        A, B, C = block.get("A"), block.get("B"), block.get("C", 0.0)
        ok = True
        if not _number(A) or A < 0:
            problems.add(label, f"landau_teller A {_label(A)} is missing or not a finite non-negative number",
                         line_of(block, "A"))
            ok = False
        if not _number(B):
            problems.add(label, f"landau_teller B {_label(B)} (K^1/3) is missing or not a finite number",
                         line_of(block, "B"))
            ok = False
        if not _number(C):
            problems.add(label, f"landau_teller C {_label(C)} (K^2/3) is not a finite number",
                         line_of(block, "C"))
            ok = False
        level, xe = 1, 0.0
        if "ladder" in block:
            lad = block["ladder"]
            lline = line_of(block, "ladder")
            if not isinstance(lad, dict):
                problems.add(label, "ladder must be a mapping {level, anharmonicity}", lline)
                return None
            _unknown_keys(lad, LADDER_KEYS, label, problems, "ladder")
            level, xe = lad.get("level"), lad.get("anharmonicity", 0.0)
            if not _integer(level) or level < 1:
                problems.add(label, f"ladder level {_label(level)} is not an integer >= 1",
                             line_of(lad, "level"))
                return None
            if not _number(xe) or xe < 0 or 1.0 - level * xe <= 0.0:
                problems.add(label, f"ladder anharmonicity {_label(xe)} must be a number >= 0 with "
                             "1 - level * anharmonicity > 0", line_of(lad, "anharmonicity"))
                return None
        if not ok:
            return None
        A_SI = float(A) * rate_factor ** (order - 1)
        return RateLaw("landau_teller", {"A": A_SI, "B_K13": float(B), "C_K23": float(C),
                                         "level": int(level), "anharmonicity": float(xe)})
    if kind == "expression":
        if not _text(block) or not block.strip():
            problems.add(label, "expression must be a non-empty text formula", bline)
            return None
        if check_expression is not None:
            try:
                check_expression(block, path, label, bline)
            except InputError as exc:
                problems.extend(exc)
                return None
        return RateLaw("expression", {"text": block, "unit_factor": rate_factor ** (order - 1)})
    # electron_impact
    if isinstance(block, dict):
        _unknown_keys(block, ELECTRON_IMPACT_KEYS, label, problems, "electron_impact")
        pid, scale = block.get("process"), block.get("scale", 1.0)
    else:
        pid, scale = block, 1.0
    if not _text(pid) or not pid:
        problems.add(label, f"electron_impact process {_label(pid)} is not a process id", bline)
        return None
    if not _number(scale) or scale < 0:
        problems.add(label, f"electron_impact scale {_label(scale)} is not a finite non-negative number",
                     line_of(block, "scale") if isinstance(block, dict) else bline)
        return None
    base = pid[: -len(REVERSE_SUFFIX)] if pid.endswith(REVERSE_SUFFIX) else pid
    if base not in process_ids:
        known = ", ".join(sorted(process_ids)) or "none: no cross_sections files given"
        problems.add(label, f"electron_impact process {pid!r} is not in the cross-section files "
                     f"(known: {_short(known, 200)})", bline)
        return None
    proc = process_ids[base]
    if base != pid and getattr(proc, "weight_ratio", None) is None:
        problems.add(label, f"process {base!r} has no weight_ratio, so it has no superelastic reverse",
                     bline)
        return None
    names = [n for n, c in reactants for _ in range(int(c))]
    if len(names) != 2 or electron is None or electron not in names or third != "none":
        problems.add(label, "electron_impact needs exactly two reactants, one of them the electron, "
                     "and no M", bline)
        return None
    if base == pid and proc.gas not in names:
        problems.add(label, f"process {pid!r} is a cross section of {proc.gas}, which is not a reactant",
                     bline)
        return None
    if proc.kind in ("momentum_transfer", "total_momentum_transfer"):
        problems.add(label, f"process {pid!r} is {proc.kind}, which is no reaction", bline)
        return None
    return RateLaw("electron_impact", {"process": pid, "scale": float(scale)})


def _troe(block, label, line, problems):
    if not isinstance(block, dict):
        problems.add(label, "troe must be a mapping {alpha, T3, T1, T2}", line)
        return None
    _unknown_keys(block, TROE_KEYS, label, problems, "troe")
    ok = True
    alpha = block.get("alpha")
    if not _number(alpha) or not 0.0 <= alpha <= 1.0:
        problems.add(label, f"troe alpha {_label(alpha)} is not a number in [0, 1]", line_of(block, "alpha"))
        ok = False
    temps = {}
    for key in ("T3", "T1", "T2"):
        if key not in block:
            if key != "T2":
                problems.add(label, f"troe needs {key} (K)", line_of(block))
                ok = False
            continue
        v = block[key]
        if not _number(v) or v <= 0:
            problems.add(label, f"troe {key} {_label(v)} is not a positive number (K)", line_of(block, key))
            ok = False
        else:
            temps[key] = float(v)
    if not ok:
        return None
    return {"alpha": float(alpha), "T3_K": temps["T3"], "T1_K": temps["T1"], "T2_K": temps.get("T2")}


# --------------------------------------------------------------------------- reactions


def _parse_reactions(doc, species, unreadable, electron, process_ids, rate_factor, ea_factor, path, problems,
                     check_expression, default_source, default_prov):
    entries = doc.get("reactions")
    if not isinstance(entries, list) or not entries:
        problems.add("reactions", "missing or empty list of reactions", line_of(doc, "reactions"))
        return []
    by_name = {s.name: s for s in species}
    names = set(by_name) | set(unreadable)
    records = []
    for i, entry in enumerate(entries):
        if not isinstance(entry, dict):
            problems.add(f"reactions[{i}]", "expected a mapping with equation, rate and source",
                         line_of(doc, "reactions"))
            continue
        line = line_of(entry)
        eq = entry.get("equation")
        label = f"reactions[{i}]" + (f" '{_short(eq)}'" if _text(eq) else "")
        _unknown_keys(entry, REACTION_KEYS, label, problems)
        if not _text(eq):
            problems.add(label, "equation is missing or not text", line_of(entry, "equation"))
            continue
        eq = " ".join(eq.split())
        try:
            reac, prod, reversible, third = parse_equation(eq, names)
        except ValueError as exc:
            problems.add(label, f"equation: {exc}", line_of(entry, "equation"))
            continue
        bad = False
        for name, c in reac:
            if c != int(c):
                problems.add(label, f"reactant coefficient of {name} must be an integer", line_of(entry, "equation"))
                bad = True
        n_reac = sum(int(c) for _, c in reac)
        if not bad and n_reac > MAX_REACTANTS:
            problems.add(label, f"at most {MAX_REACTANTS} reactants (M not counted), found {n_reac}",
                         line_of(entry, "equation"))
            bad = True
        prod_m = _merge(prod)
        reac_m = _merge(reac)
        if len(prod_m) > MAX_PRODUCTS:
            problems.add(label, f"at most {MAX_PRODUCTS} distinct products, found {len(prod_m)}",
                         line_of(entry, "equation"))
            bad = True
        if reversible:
            if any(c != int(c) for c in prod_m.values()):
                problems.add(label, "a reversible reaction needs integer product coefficients",
                             line_of(entry, "equation"))
                bad = True
            elif sum(prod_m.values()) > MAX_REACTANTS:
                problems.add(label, f"a reversible reaction has at most {MAX_REACTANTS} products "
                             "(they are the reactants of the reverse)", line_of(entry, "equation"))
                bad = True
        if bad:
            continue
        # balance of elements and charge
        if not any(n in unreadable for n in list(reac_m) + list(prod_m)):
            els = sorted({el for n in list(reac_m) + list(prod_m) for el in by_name[n].composition
                          if el != "E"})
            for el in els:
                left = sum(c * by_name[n].composition.get(el, 0) for n, c in reac_m.items())
                right = sum(c * by_name[n].composition.get(el, 0) for n, c in prod_m.items())
                if abs(left - right) > 1e-9 * max(1.0, abs(left)):
                    problems.add(label, f"element {el} does not balance ({left:g} on the left, "
                                 f"{right:g} on the right)", line_of(entry, "equation"))
            qleft = sum(c * by_name[n].charge for n, c in reac_m.items())
            qright = sum(c * by_name[n].charge for n, c in prod_m.items())
            if abs(qleft - qright) > 1e-9:
                problems.add(label, f"charge does not balance ({qleft:g} on the left, "
                             f"{qright:g} on the right)", line_of(entry, "equation"))
        # efficiencies
        eff = {}
        if "efficiencies" in entry:
            block = entry["efficiencies"]
            eline = line_of(entry, "efficiencies")
            if third == "none":
                problems.add(label, "efficiencies need a third body (M or (+M)) in the equation", eline)
            elif not isinstance(block, dict):
                problems.add(label, "efficiencies must be a mapping {species: efficiency}", eline)
            else:
                for sp, val in block.items():
                    if not _text(sp) or sp not in names:
                        problems.add(label, f"efficiency of unknown species {_label(sp)}", line_of(block, sp))
                    elif not _number(val) or val < 0:
                        problems.add(label, f"efficiency of {sp} {_label(val)} is not a finite "
                                     "non-negative number", line_of(block, sp))
                    else:
                        eff[sp] = float(val)
        # provenance, source, uncertainty, duplicate
        source = entry.get("source", default_source)
        if source is None:
            source = ""
        if not _text(source):
            problems.add(label, "source must be text (the publication)", line_of(entry, "source"))
            source = ""
        prov = entry.get("provenance", default_prov)
        if prov not in PROVENANCE and prov != "":
            problems.add(label, f"provenance {_label(prov)} must be one of {', '.join(PROVENANCE)}",
                         line_of(entry, "provenance"))
            prov = ""
        uf = entry.get("uncertainty_factor", math.nan)
        if "uncertainty_factor" in entry and (not _number(uf) or uf < 1):
            problems.add(label, f"uncertainty_factor {_label(uf)} is not a number >= 1",
                         line_of(entry, "uncertainty_factor"))
            uf = math.nan
        dup = entry.get("duplicate", False)
        if not isinstance(dup, bool):
            problems.add(label, "duplicate must be true or false", line_of(entry, "duplicate"))
            dup = False
        if "rate" not in entry:
            problems.add(label, "rate is missing", line)
            continue
        order = n_reac + (1 if third == "M" else 0)
        law = _rate_law(entry["rate"], label, line_of(entry, "rate"), order, third, reversible,
                        list(reac_m.items()), electron, process_ids, rate_factor, ea_factor,
                        problems, path, check_expression, line_of(entry, "equation"))
        if law is None:
            continue
        if reversible:
            lacking = [n for n in list(reac_m) + list(prod_m) if n in by_name and by_name[n].nasa7 is None]
            if lacking:
                problems.add(label, "reversible (<=>) needs thermo (NASA polynomials) of "
                             f"{', '.join(lacking)}: add inline thermo or a thermo_library entry",
                             line_of(entry, "equation"))
                continue
        records.append(ReactionRecord(
            equation=eq, reactants=tuple((n, int(c)) for n, c in reac_m.items()),
            products=tuple(prod_m.items()), reversible=reversible, third_body=third,
            efficiencies=eff, rate=law, source=source.strip(), provenance=prov or "",
            uncertainty_factor=float(uf), duplicate=dup, line=line, index=i))
    _check_duplicates(records, path, problems)
    return records


def _check_duplicates(records, path, problems):
    def key(left, right, third):
        return (frozenset(Counter(dict(left)).items()), frozenset(Counter(dict(right)).items()), third)

    seen = {}
    for r in records:
        keys = [key(r.reactants, r.products, r.third_body)]
        if r.reversible:
            keys.append(key(r.products, r.reactants, r.third_body))
        clash = None
        for k in keys:
            if k in seen:
                clash = seen[k]
                break
        if clash is not None and not (clash.duplicate and r.duplicate):
            problems.add(f"reactions[{r.index}] '{r.equation}'",
                         f"same reaction as reactions[{clash.index}] (line {clash.line}); mark both "
                         "duplicate: true if both are meant", r.line)
        for k in keys:
            seen.setdefault(k, r)


# --------------------------------------------------------------------------- files


def _cross_sections(doc, base, problems):
    value = doc.get("cross_sections", [])
    line = line_of(doc, "cross_sections")
    if value is None:
        value = []
    if _text(value):
        value = [value]
    if not isinstance(value, list):
        problems.add("cross_sections", "expected a list of file paths", line)
        return (), (), {}
    paths, sets, ids = [], [], {}
    for item in value:
        if not _text(item) or not item.strip() or "\0" in item:
            problems.add("cross_sections", f"{_label(item)} is not a file path", line)
            continue
        p = _resolve(base, item.strip())
        try:
            cs = load_cross_sections(p)
        except InputError as exc:
            problems.extend(exc)
            continue
        except OverflowError:   # an integer too large for a float in that file
            problems.add("cross_sections", f"{p}: holds a number too large for a float", line)
            continue
        paths.append(p)
        sets.append(cs)
        for proc in cs.processes:
            if proc.id in ids:
                problems.add("cross_sections", f"process id {proc.id!r} appears in two files "
                             f"({ids[proc.id].gas} and {cs.gas})", line)
            ids[proc.id] = proc
    return tuple(paths), tuple(sets), ids


def _thermo_library(doc, base, problems):
    """Read the ``thermo_library`` file or list of files; entries merged, names unique."""
    if "thermo_library" not in doc:
        return None, None
    value = doc["thermo_library"]
    line = line_of(doc, "thermo_library")
    values = value if isinstance(value, list) and value else [value]
    from .thermo_library import load_thermo_library
    paths, merged, ok = [], {}, True
    for item in values:
        if not _text(item) or not item.strip() or "\0" in item:
            problems.add("thermo_library", f"{_label(item)} is not a file path", line)
            ok = False
            continue
        p = _resolve(base, item.strip())
        paths.append(p)
        try:
            library = load_thermo_library(p)
        except InputError as exc:
            problems.extend(exc)
            ok = False
            continue
        except OverflowError:   # an integer too large for a float in that file
            problems.add("thermo_library", f"{p}: holds a number too large for a float", line)
            ok = False
            continue
        for name, record in library.items():
            if name in merged:
                problems.add("thermo_library", f"species {name!r} is in more than one thermo library file", line)
                ok = False
            merged[name] = record
    return tuple(paths), (merged if ok else None)


def _elements(doc, problems):
    value = doc.get("elements")
    line = line_of(doc, "elements")
    if not isinstance(value, list) or not value:
        problems.add("elements", "missing or empty list of element symbols", line)
        return ()
    out = []
    for el in value:
        if not _text(el) or not _NAME.match(el):
            problems.add("elements", f"{_label(el)} is not an element symbol", line)
        elif el in out:
            problems.add("elements", f"{el} listed twice", line)
        else:
            out.append(el)
    return tuple(out)


def load_mechanism(path, check_expression=None):
    """Read and validate a mechanism file.

    Parameters
    ----------
    path : str or os.PathLike
        The mechanism YAML file.
    check_expression : callable or None
        ``check_expression(text, file, entry, line)`` raising
        :class:`~plasmazero.data.errors.InputError` for a bad rate formula. The data layer
        cannot compile formulas itself (that is physics); pass
        :func:`plasmazero.physics.expression.compile_expression` to have bad formulas
        reported together with every other problem of the file.

    Returns
    -------
    Mechanism

    Raises
    ------
    InputError
        Listing every problem found, each naming the file, line, entry and problem.
    """
    path = Path(path)
    doc = read_yaml(path)
    problems = _Problems(path)
    if not isinstance(doc, dict):
        raise InputError([format_problem(path, None, "expected a mapping with name, elements, species "
                                         "and reactions")])
    _unknown_keys(doc, TOP_KEYS, "file", problems)
    name = doc.get("name")
    if not _text(name) or not name.strip():
        problems.add("name", "missing or not text", line_of(doc, "name"))
        name = path.stem
    description = doc.get("description", "")
    if not _text(description):
        problems.add("description", "must be text", line_of(doc, "description"))
        description = ""
    for key in ("source", "note"):
        if key in doc and not _text(doc[key]):
            problems.add(key, "must be text", line_of(doc, key))
    default_source = doc.get("source", "") if _text(doc.get("source", "")) else ""
    default_prov = doc.get("provenance", "")
    if default_prov not in PROVENANCE and default_prov != "":
        problems.add("provenance", f"must be one of {', '.join(PROVENANCE)}", line_of(doc, "provenance"))
        default_prov = ""
    units, rate_factor, ea_factor = _units(doc, problems)
    elements = _elements(doc, problems)
    base = path.parent
    cs_paths, cs_sets, process_ids = _cross_sections(doc, base, problems)
    lib_path, library = _thermo_library(doc, base, problems)
    species, unreadable = _parse_species(doc, elements, path, problems, library)
    electrons = [s.name for s in species if s.charge == -1 and s.state_of is None
                 and s.composition == {"E": 1}]
    if len(electrons) > 1:
        problems.add("species", f"more than one electron species ({', '.join(electrons)})",
                     line_of(doc, "species"))
    electron = electrons[0] if electrons else None
    reactions = _parse_reactions(doc, species, unreadable, electron, process_ids, rate_factor,
                                 ea_factor, path, problems, check_expression, default_source,
                                 default_prov)
    if problems.lines:
        raise InputError(problems.lines)
    return Mechanism(
        path=path, name=name.strip(), description=description.strip(), elements=elements,
        species=tuple(species), reactions=tuple(reactions), cross_section_paths=cs_paths,
        cross_sections=cs_sets, thermo_library=lib_path, units=units, electron=electron,
        species_index={s.name: i for i, s in enumerate(species)})


def mechanism_warnings(mech):
    """Things worth a look in a valid mechanism, as one-line messages.

    Species never produced or never consumed by any reaction (counting both directions of
    reversible ones, by net stoichiometry), reactions without a source, ``duplicate: true``
    without a duplicate, cross-section processes no reaction uses, and states whose
    ``statistical_weight`` differs from the weight ratio of the cross section exciting them.
    """
    produced, consumed = set(), set()
    for r in mech.reactions:
        net = Counter()
        for n, c in r.reactants:
            net[n] -= c
        for n, c in r.products:
            net[n] += c
        for n, v in net.items():
            if v > 1e-12:
                produced.add(n)
                if r.reversible:
                    consumed.add(n)
            elif v < -1e-12:
                consumed.add(n)
                if r.reversible:
                    produced.add(n)
    out = []
    for s in mech.species:
        where = format_problem(mech.path, f"species {s.name}", "", s.line).rstrip(": ")
        if s.name not in produced:
            out.append(f"{where}: never produced by any reaction")
        if s.name not in consumed:
            out.append(f"{where}: never consumed by any reaction")
    def keys(r):
        ks = {(frozenset(r.reactants), frozenset(r.products), r.third_body)}
        if r.reversible:
            ks.add((frozenset(r.products), frozenset(r.reactants), r.third_body))
        return ks

    count = Counter(k for r in mech.reactions for k in keys(r))
    for r in mech.reactions:
        label = f"reactions[{r.index}] '{r.equation}'"
        if not r.source:
            out.append(format_problem(mech.path, label, "no source", r.line))
        if r.duplicate and all(count[k] < 2 for k in keys(r)):
            out.append(format_problem(mech.path, label, "marked duplicate but has no duplicate", r.line))
    used = {r.rate.params["process"].removesuffix(REVERSE_SUFFIX)
            for r in mech.reactions if r.rate.kind == "electron_impact"}
    # a state's degeneracy (heavy-particle detailed balance) and the weight ratio of the
    # cross section that excites it (superelastic collisions) must be the same number
    species = {sp.name: sp for sp in mech.species}
    procs = {p.id: p for cs in mech.cross_sections for p in cs.processes}
    for r in mech.reactions:
        if r.rate.kind != "electron_impact" or r.rate.params["process"].endswith(REVERSE_SUFFIX):
            continue
        proc = procs.get(r.rate.params["process"])
        ratio = getattr(proc, "weight_ratio", None)
        for name, _ in r.products:
            st = species.get(name)
            if (ratio is not None and st is not None and st.state_of
                    and any(n == st.state_of for n, _ in r.reactants)
                    and abs(ratio - st.statistical_weight) > 1e-6 * ratio):
                out.append(format_problem(mech.path, f"species {name}",
                                          f"statistical_weight {st.statistical_weight:g} differs from the "
                                          f"weight_ratio {ratio:g} of cross section {proc.id}", st.line))
    for cs in mech.cross_sections:
        for p in cs.processes:
            if p.kind not in ("momentum_transfer", "total_momentum_transfer") and p.id not in used:
                out.append(format_problem(cs.path, p.id, "cross section used by no reaction "
                                          "(it still shapes the EEDF)"))
    return out


__all__ = ["Mechanism", "SpeciesRecord", "ReactionRecord", "RateLaw", "load_mechanism",
           "mechanism_warnings", "parse_equation", "RATE_UNITS", "DENSITY_UNITS",
           "ACTIVATION_UNITS", "PROVENANCE"]
