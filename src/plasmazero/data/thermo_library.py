"""Thermo library files: NASA 7-coefficient polynomials per species, plasmazero's own YAML schema.

One file holds many species::

    title: "..."                 # optional, free text
    source: "..."                # optional default citation for every entry
    provenance: taken            # optional default: taken | recalled | fitted
    species:
      - name: CO2                # as used by mechanisms; unique in the file
        composition: {C: 1, O: 2}   # element -> count; electrons as element E
        charge: 0                # elementary charges; must equal -composition[E]
        nasa7:
          T_ranges_K: [200.0, 1000.0, 6000.0]   # T_low, T_mid, T_high
          low: [a1, a2, a3, a4, a5, a6, a7]      # T_low <= T <= T_mid
          high: [a1, a2, a3, a4, a5, a6, a7]     # T_mid < T <= T_high
        source: "..."            # the publication (or file default)
        provenance: taken
        note: "..."              # optional

A positive ion carries ``E: -1`` (one electron fewer than the neutral), a negative ion
``E: 1``, the electron itself ``{E: 1}`` with charge -1. The ``nasa7`` block is the same
one that mechanism files carry inline; :func:`parse_nasa7` validates one block and is
the function the mechanism reader calls. This module only reads and checks; the
thermodynamic functions are in :mod:`plasmazero.physics.thermo`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError, format_problem
from .shipped import shipped_root
from .yamlio import is_finite_number, line_of, read_yaml

PROVENANCE = ("taken", "recalled", "fitted")
FILE_KEYS = {"title", "source", "provenance", "note", "species"}
SPECIES_KEYS = {"name", "composition", "charge", "nasa7", "source", "provenance", "note"}
NASA7_KEYS = {"T_ranges_K", "low", "high"}
_ELEMENT = re.compile(r"^(?:E|[A-Z][a-z]?)$")

#: Largest jumps between the low and high polynomials at T_mid that a block may have:
#: cp/R, h/(RT), s/R. Measured over the 1168 well-formed gas entries of BURCAT_THR.xml
#: (thermochem 0.9.0): 99.9 % have jumps below 0.33, 6e-5 and 0.08 (the largest
#: cp/R jump of a sound entry is 0.32); the limits sit well above that and catch
#: mistyped exponents, which make jumps of order one or more.
CONTINUITY_LIMITS = (1.0, 0.1, 0.1)


@dataclass(frozen=True)
class ThermoRecord:
    """The NASA 7-coefficient thermo of one species, as read from a library file.

    ``nasa7_coeffs`` (2, 7): row 0 the low range, row 1 the high range;
    ``nasa7_T_K`` (3,): T_low, T_mid, T_high in K.
    """

    name: str
    composition: dict
    charge: int
    nasa7_coeffs: np.ndarray
    nasa7_T_K: np.ndarray
    source: str
    provenance: str
    note: str = ""
    path: Path | None = field(default=None, compare=False)
    line: int | None = field(default=None, compare=False)


def _finite_number(value):
    return is_finite_number(value)


def _props(a, T):
    """cp/R, h/RT, s/R of one coefficient row at T (NASA 7-term form, McBride et al. 2002)."""
    cp = a[0] + a[1] * T + a[2] * T**2 + a[3] * T**3 + a[4] * T**4
    h = a[0] + a[1] * T / 2 + a[2] * T**2 / 3 + a[3] * T**3 / 4 + a[4] * T**4 / 5 + a[5] / T
    s = a[0] * math.log(T) + a[1] * T + a[2] * T**2 / 2 + a[3] * T**3 / 3 + a[4] * T**4 / 4 + a[6]
    return cp, h, s


def parse_nasa7(block, file, entry, line):
    """Validate one ``nasa7`` block and return its arrays.

    Parameters
    ----------
    block : mapping
        ``{T_ranges_K: [T_low, T_mid, T_high], low: [a1..a7], high: [a1..a7]}``, as read
        by :func:`plasmazero.data.yamlio.read_yaml`.
    file : str or os.PathLike or None
        File the block came from (for messages).
    entry : str
        Species or reaction the block belongs to (for messages).
    line : int or None
        Line of the block, used where the block does not know its own lines.

    Returns
    -------
    coeffs : float64 ndarray (2, 7)
        Row 0 the low range, row 1 the high range.
    T_K : float64 ndarray (3,)
        T_low, T_mid, T_high in K.

    Raises
    ------
    InputError
        Every problem found, each one line naming file, line, entry and problem:
        not a mapping, unknown or missing keys, temperatures that are not three
        positive, finite, strictly increasing numbers, coefficient lists that are not
        seven finite numbers, or low and high polynomials that disagree at T_mid by
        more than :data:`CONTINUITY_LIMITS` (a mistyped coefficient).
    """
    here = line if line is not None else line_of(block)

    def at(key):
        got = line_of(block, key)
        return got if got is not None else here

    if not isinstance(block, dict):
        raise InputError([format_problem(file, entry, "nasa7 must be a mapping with keys T_ranges_K, low, high", here)])
    problems = []
    for key in block:
        if key not in NASA7_KEYS:
            problems.append(format_problem(file, entry, f"unknown key {key!r} in nasa7 (allowed: high, low, T_ranges_K)", at(key)))
    for key in ("T_ranges_K", "low", "high"):
        if key not in block:
            problems.append(format_problem(file, entry, f"nasa7 is missing {key}", here))
    T_K = None
    if "T_ranges_K" in block:
        T = block["T_ranges_K"]
        if not (isinstance(T, list) and len(T) == 3 and all(_finite_number(t) for t in T)):
            problems.append(format_problem(file, entry, "nasa7 T_ranges_K must be three finite numbers [T_low, T_mid, T_high] in K", at("T_ranges_K")))
        elif T[0] <= 0:
            problems.append(format_problem(file, entry, "nasa7 T_ranges_K must be positive temperatures in K", at("T_ranges_K")))
        elif not T[0] < T[1] < T[2]:
            problems.append(format_problem(file, entry, f"nasa7 T_ranges_K {T} must be strictly increasing (T_low < T_mid < T_high)", at("T_ranges_K")))
        else:
            T_K = np.array(T, dtype=float)
    rows = {}
    for key in ("low", "high"):
        if key not in block:
            continue
        a = block[key]
        if not isinstance(a, list) or len(a) != 7:
            n = len(a) if isinstance(a, list) else "no list of"
            problems.append(format_problem(file, entry, f"nasa7 {key} must be a list of 7 coefficients a1..a7, got {n} values", at(key)))
        elif not all(_finite_number(v) for v in a):
            bad = next(v for v in a if not _finite_number(v))
            problems.append(format_problem(file, entry, f"nasa7 {key} coefficient {bad!r} is not a finite number", at(key)))
        else:
            rows[key] = [float(v) for v in a]
    if problems:
        raise InputError(problems)
    coeffs = np.array([rows["low"], rows["high"]], dtype=float)
    T_mid = T_K[1]
    jumps = [abs(b - a) for a, b in zip(_props(coeffs[0], T_mid), _props(coeffs[1], T_mid))]
    if any(j > lim for j, lim in zip(jumps, CONTINUITY_LIMITS)):
        raise InputError([format_problem(
            file, entry,
            f"nasa7 low and high polynomials disagree at T_mid = {T_mid:g} K (cp/R jumps by {jumps[0]:.3g}, "
            f"h/RT by {jumps[1]:.3g}, s/R by {jumps[2]:.3g}; allowed {CONTINUITY_LIMITS[0]:g}, "
            f"{CONTINUITY_LIMITS[1]:g}, {CONTINUITY_LIMITS[2]:g}): a mistyped coefficient?",
            here)])
    return coeffs, T_K


def _composition(comp, file, name, line, problems):
    if not isinstance(comp, dict) or not comp:
        problems.append(format_problem(file, name, "composition must be a mapping element -> count, e.g. {C: 1, O: 2}", line))
        return None
    out = {}
    for el, n in comp.items():
        where = line_of(comp, el) or line
        if not isinstance(el, str) or not _ELEMENT.match(el):
            problems.append(format_problem(file, name, f"composition: {el!r} is not an element symbol (electrons are E)", where))
            return None
        if not isinstance(n, int) or isinstance(n, bool) or n == 0:
            problems.append(format_problem(file, name, f"composition: count of {el} must be a non-zero integer", where))
            return None
        if el != "E" and n < 0:
            problems.append(format_problem(file, name, f"composition: count of {el} must be positive", where))
            return None
        out[el] = n
    return out


def load_thermo_library(path):
    """Read and validate a thermo library file.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    dict of str to ThermoRecord
        Species name -> record, in file order.

    Raises
    ------
    InputError
        Listing every problem found, each naming the file, line and species.
    """
    path = Path(path)
    doc = read_yaml(path)
    if not isinstance(doc, dict):
        raise InputError([format_problem(path, None, "expected a mapping with a species list")])
    problems = []
    for key in doc:
        if key not in FILE_KEYS:
            problems.append(format_problem(path, str(key), f"unknown key (allowed: {', '.join(sorted(FILE_KEYS))})", line_of(doc, key)))
    file_source = doc.get("source", "")
    if not isinstance(file_source, str):
        problems.append(format_problem(path, "source", "must be text", line_of(doc, "source")))
        file_source = ""
    file_prov = doc.get("provenance", "")
    if file_prov and file_prov not in PROVENANCE:
        problems.append(format_problem(path, "provenance", f"must be one of {', '.join(PROVENANCE)}", line_of(doc, "provenance")))
        file_prov = ""
    entries = doc.get("species")
    if not isinstance(entries, list) or not entries:
        problems.append(format_problem(path, "species", "missing or empty list", line_of(doc, "species")))
        entries = []
    records = {}
    for i, entry in enumerate(entries):
        if not isinstance(entry, dict):
            problems.append(format_problem(path, f"species[{i}]", "expected a mapping with name, composition, charge, nasa7, source, provenance", line_of(doc, "species")))
            continue
        line = line_of(entry)
        name = entry.get("name")
        if not isinstance(name, str) or not name.strip():
            problems.append(format_problem(path, f"species[{i}]", "missing name", line))
            name = f"species[{i}]"
        elif name in records:
            problems.append(format_problem(path, name, f"duplicate species (first at line {records[name].line})", line_of(entry, "name")))
        n_before = len(problems)
        for key in entry:
            if key not in SPECIES_KEYS:
                problems.append(format_problem(path, name, f"unknown key {key!r} (allowed: {', '.join(sorted(SPECIES_KEYS))})", line_of(entry, key)))
        comp = None
        if "composition" not in entry:
            problems.append(format_problem(path, name, "missing composition", line))
        else:
            comp = _composition(entry["composition"], path, name, line_of(entry, "composition"), problems)
        charge = entry.get("charge")
        if "charge" not in entry:
            problems.append(format_problem(path, name, "missing charge", line))
        elif not isinstance(charge, int) or isinstance(charge, bool):
            problems.append(format_problem(path, name, "charge must be an integer (elementary charges)", line_of(entry, "charge")))
        elif comp is not None and charge != -comp.get("E", 0):
            problems.append(format_problem(
                path, name, f"charge {charge} does not match composition (E: {comp.get('E', 0)} means charge {-comp.get('E', 0)})",
                line_of(entry, "charge")))
        coeffs = T_K = None
        if "nasa7" not in entry:
            problems.append(format_problem(path, name, "missing nasa7", line))
        else:
            try:
                coeffs, T_K = parse_nasa7(entry["nasa7"], path, name, line_of(entry, "nasa7"))
            except InputError as exc:
                problems.extend(exc.problems)
        source = entry.get("source", file_source)
        if not isinstance(source, str) or not source.strip():
            problems.append(format_problem(path, name, "missing source (the publication the numbers come from)", line_of(entry, "source") if "source" in entry else line))
        prov = entry.get("provenance", file_prov)
        if not prov:
            problems.append(format_problem(path, name, f"missing provenance ({', '.join(PROVENANCE)})", line))
        elif prov not in PROVENANCE:
            problems.append(format_problem(path, name, f"provenance {prov!r} must be one of {', '.join(PROVENANCE)}", line_of(entry, "provenance")))
        note = entry.get("note", "")
        if not isinstance(note, str):
            problems.append(format_problem(path, name, "note must be text", line_of(entry, "note")))
        if len(problems) > n_before or name in records or name.startswith("species["):
            continue
        records[name] = ThermoRecord(
            name=name, composition=comp, charge=int(charge), nasa7_coeffs=coeffs, nasa7_T_K=T_K,
            source=source.strip(), provenance=prov, note=note, path=path, line=line)
    if problems:
        raise InputError(problems)
    return records


def shipped_thermo_library():
    """Path of the shipped thermo library ``thermo/nasa7.yaml``."""
    return shipped_root() / "thermo" / "nasa7.yaml"
