"""Electron-impact cross-section files: plasmazero's own YAML schema.

One file per target gas::

    gas: Ar                     # species name as used by mechanisms
    mass_amu: 39.948
    source: "..."               # default citation for the file
    provenance: recalled        # taken | recalled | fitted | adjusted (optional default)
    processes:
      - id: ar_momentum         # unique within the file
        kind: momentum_transfer # total_momentum_transfer, excitation, ionization, attachment
        data: [[0.0, 7.5e-20], [0.1, 1.2e-20]]   # [energy_eV, cross_section_m2]
      - id: ar_excitation
        kind: excitation
        threshold_eV: 11.5
        weight_ratio: 1.0       # g_upper/g_lower: enables the superelastic reverse process
        data_file: ar_exc.txt   # two columns, eV and m2, relative to this file
        source: "..."

Cross sections are interpolated linearly between the tabulated points and taken as the
last tabulated value above the table (flat extrapolation), zero below the first point.
``momentum_transfer`` is the elastic momentum-transfer cross section;
``total_momentum_transfer`` already includes the inelastic momentum transfer. The
Boltzmann solver forms what it needs from either (Reid 1979, Aust. J. Phys. 32, 231, eq. 4).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError, format_problem
from .yamlio import is_finite_number, line_of, read_yaml

KINDS = ("momentum_transfer", "total_momentum_transfer", "excitation", "ionization", "attachment")
PROVENANCE = ("taken", "recalled", "fitted", "adjusted", "invented")
FILE_KEYS = {"gas", "mass_amu", "source", "provenance", "note", "processes"}
PROCESS_KEYS = {
    "id", "kind", "threshold_eV", "weight_ratio", "data", "data_file", "source",
    "provenance", "note", "products",
}


@dataclass(frozen=True)
class Process:
    """One electron-impact process of a target gas (SI cross sections, eV energies)."""

    id: str
    kind: str
    gas: str
    energy_eV: np.ndarray
    cross_section_m2: np.ndarray
    threshold_eV: float = 0.0
    weight_ratio: float | None = None
    source: str = ""
    provenance: str = ""
    products: str = ""

    def sigma_m2(self, energy_eV):
        """Cross section in m2 at ``energy_eV`` (linear interpolation, flat above the table)."""
        e = np.asarray(energy_eV, dtype=float)
        s = np.interp(e, self.energy_eV, self.cross_section_m2, left=0.0,
                      right=self.cross_section_m2[-1])
        if self.threshold_eV > 0.0:
            s = np.where(e < self.threshold_eV, 0.0, s)
        return s


@dataclass(frozen=True)
class CrossSectionSet:
    """All processes of one target gas, as read from one file."""

    gas: str
    mass_amu: float
    processes: tuple
    source: str = ""
    path: Path | None = None
    by_id: dict = field(default_factory=dict, compare=False, repr=False)

    def process(self, process_id):
        """The process with id ``process_id`` (KeyError if absent)."""
        return self.by_id[process_id]


def _finite_number(value):
    return is_finite_number(value)


def _read_table(path, base, pid, problems, file, line=None):
    table_path = (base / path) if not Path(path).is_absolute() else Path(path)
    try:
        text = table_path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        problems.append(format_problem(file, pid, f"data_file {path!r} not found or unreadable", line))
        return None
    rows = []
    for no, raw in enumerate(text.splitlines(), 1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        cols = line.replace(",", " ").split()
        if len(cols) != 2:
            problems.append(format_problem(table_path, pid, "expected two columns (energy_eV cross_section_m2)", no))
            return None
        try:
            rows.append((float(cols[0]), float(cols[1])))
        except ValueError:
            problems.append(format_problem(table_path, pid, f"not a number in {line!r}", no))
            return None
    return rows


def _check_table(rows, pid, file, line, problems):
    """Validate ``rows`` of [energy_eV, sigma_m2]; return two arrays or None."""
    if not isinstance(rows, list) or len(rows) < 2:
        problems.append(format_problem(file, pid, "data needs at least two [energy_eV, cross_section_m2] points", line))
        return None
    e, s = [], []
    for row in rows:
        if not (isinstance(row, (list, tuple)) and len(row) == 2):
            problems.append(format_problem(file, pid, f"data point {row!r} is not a pair [energy_eV, cross_section_m2]", line))
            return None
        if not (_finite_number(row[0]) and _finite_number(row[1])):
            problems.append(format_problem(file, pid, f"data point {row!r} is not two finite numbers", line))
            return None
        e.append(float(row[0]))
        s.append(float(row[1]))
    e = np.array(e)
    s = np.array(s)
    if e[0] < 0.0:
        problems.append(format_problem(file, pid, "negative energy in data", line))
        return None
    if np.any(np.diff(e) <= 0.0):
        bad = int(np.argmax(np.diff(e) <= 0.0))
        problems.append(format_problem(file, pid, f"energies not strictly increasing at {e[bad + 1]:g} eV", line))
        return None
    if np.any(s < 0.0):
        problems.append(format_problem(file, pid, f"negative cross section at {e[np.argmax(s < 0)]:g} eV", line))
        return None
    return e, s


def load_cross_sections(path):
    """Read and validate a cross-section file.

    Returns
    -------
    CrossSectionSet

    Raises
    ------
    InputError
        Listing every problem found, each naming the file, process id and line.
    """
    path = Path(path)
    doc = read_yaml(path)
    problems = []
    if not isinstance(doc, dict):
        raise InputError([format_problem(path, None, "expected a mapping with keys gas, mass_amu, processes")])
    for key in doc:
        if key not in FILE_KEYS:
            problems.append(format_problem(path, str(key), f"unknown key (allowed: {', '.join(sorted(FILE_KEYS))})", line_of(doc, key)))
    gas = doc.get("gas")
    if not isinstance(gas, str) or not gas.strip():
        problems.append(format_problem(path, "gas", "missing or not a name", line_of(doc, "gas")))
        gas = "?"
    mass = doc.get("mass_amu")
    if not _finite_number(mass) or mass <= 0:
        problems.append(format_problem(path, "mass_amu", "missing or not a positive number", line_of(doc, "mass_amu")))
        mass = float("nan")
    file_source = doc.get("source", "")
    file_prov = doc.get("provenance", "")
    if file_prov and file_prov not in PROVENANCE:
        problems.append(format_problem(path, "provenance", f"must be one of {', '.join(PROVENANCE)}", line_of(doc, "provenance")))
    entries = doc.get("processes")
    if not isinstance(entries, list) or not entries:
        problems.append(format_problem(path, "processes", "missing or empty list", line_of(doc, "processes")))
        entries = []
    processes, seen = [], set()
    for i, entry in enumerate(entries):
        if not isinstance(entry, dict):
            problems.append(format_problem(path, f"processes[{i}]", "expected a mapping", line_of(doc, "processes")))
            continue
        pid = entry.get("id")
        line = line_of(entry)
        if not isinstance(pid, str) or not pid:
            problems.append(format_problem(path, f"processes[{i}]", "missing id", line))
            pid = f"processes[{i}]"
        elif pid in seen:
            problems.append(format_problem(path, pid, "duplicate id", line))
        seen.add(pid)
        for key in entry:
            if key not in PROCESS_KEYS:
                problems.append(format_problem(path, pid, f"unknown key {key!r} (allowed: {', '.join(sorted(PROCESS_KEYS))})", line_of(entry, key)))
        kind = entry.get("kind")
        if kind not in KINDS:
            problems.append(format_problem(path, pid, f"unknown kind {kind!r} (allowed: {', '.join(KINDS)})", line_of(entry, "kind")))
            continue
        thr = entry.get("threshold_eV", 0.0)
        if not _finite_number(thr) or thr < 0:
            problems.append(format_problem(path, pid, "threshold_eV must be a non-negative number", line_of(entry, "threshold_eV")))
            continue
        if kind in ("excitation", "ionization") and thr <= 0:
            problems.append(format_problem(path, pid, f"{kind} needs a positive threshold_eV", line))
            continue
        if kind in ("momentum_transfer", "total_momentum_transfer") and thr != 0:
            problems.append(format_problem(path, pid, "momentum transfer takes no threshold_eV", line_of(entry, "threshold_eV")))
            continue
        wr = entry.get("weight_ratio")
        if wr is not None:
            if kind != "excitation":
                problems.append(format_problem(path, pid, "weight_ratio applies to excitation only", line_of(entry, "weight_ratio")))
                continue
            if not _finite_number(wr) or wr <= 0:
                problems.append(format_problem(path, pid, "weight_ratio must be a positive number", line_of(entry, "weight_ratio")))
                continue
        prov = entry.get("provenance", file_prov)
        if "provenance" in entry and prov not in PROVENANCE:  # a bad file default is reported once
            problems.append(format_problem(path, pid, f"provenance must be one of {', '.join(PROVENANCE)}", line_of(entry, "provenance")))
        has_data, has_file = "data" in entry, "data_file" in entry
        if has_data == has_file:
            problems.append(format_problem(path, pid, "give exactly one of data or data_file", line))
            continue
        if has_file:
            rows = _read_table(str(entry["data_file"]), path.parent, pid, problems, path,
                               line_of(entry, "data_file"))
            if rows is None:
                continue
        else:
            rows = entry["data"]
        table = _check_table(rows, pid, path, line_of(entry, "data_file" if has_file else "data"), problems)
        if table is None:
            continue
        e, s = table
        if thr > 0 and np.any(s[e < thr] > 0):
            problems.append(format_problem(path, pid, f"non-zero cross section below threshold_eV {thr:g}", line_of(entry, "data_file" if has_file else "data")))
            continue
        processes.append(Process(
            id=pid, kind=kind, gas=gas, energy_eV=e, cross_section_m2=s,
            threshold_eV=float(thr), weight_ratio=None if wr is None else float(wr),
            source=str(entry.get("source", file_source) or ""), provenance=str(prov or ""),
            products=str(entry.get("products", "") or ""),
        ))
    n_mt = sum(p.kind in ("momentum_transfer", "total_momentum_transfer") for p in processes)
    if entries and not problems and n_mt != 1:
        problems.append(format_problem(path, "processes", f"needs exactly one momentum_transfer or total_momentum_transfer process, found {n_mt}", line_of(doc, "processes")))
    if problems:
        raise InputError(problems)
    procs = tuple(processes)
    return CrossSectionSet(gas=gas, mass_amu=float(mass), processes=procs, source=str(file_source),
                           path=path, by_id={p.id: p for p in procs})


def make_cross_section_set(gas, mass_amu, processes, source=""):
    """Build a :class:`CrossSectionSet` in memory (model gases, tests, synthetic benchmarks).

    Parameters
    ----------
    gas : str
    mass_amu : float
    processes : iterable of (id, kind, energy_eV, cross_section_m2, threshold_eV, weight_ratio)
        ``weight_ratio`` None for no superelastic reverse. Tables are not validated here:
        write a file and use :func:`load_cross_sections` for user data.
    """
    procs = tuple(
        Process(id=i, kind=k, gas=gas, energy_eV=np.asarray(e, float),
                cross_section_m2=np.asarray(s, float), threshold_eV=float(t), weight_ratio=w, source=source)
        for i, k, e, s, t, w in processes)
    return CrossSectionSet(gas=gas, mass_amu=float(mass_amu), processes=procs, source=source,
                           by_id={p.id: p for p in procs})
