"""The scan file: plan, checkpoint and results of a scan in one HDF5 file.

Why a journal beside the HDF5 file
----------------------------------
A scan must lose no finished point and leave no corrupt file when its driver is killed
at any instant (SIGKILL, power loss after the data reached the disk). HDF5 files written
in place are not safe against that: a write updates data and file metadata (B-trees, heaps,
superblock) in several places, and a kill in between can leave a file the library cannot
open. Two designs avoid in-place writes:

1. rewrite the whole HDF5 file to a temporary name after each point, fsync, and
   ``os.replace`` it over the old one (atomic on POSIX); simple, but each point costs a full
   rewrite, O(N) per point and O(N^2) for the scan;
2. append each finished point as one line to a journal file beside the HDF5 file
   (``<file>.journal``, fsynced), and fold the journal into the HDF5 file now and then by
   design 1.

This module uses design 2: a point costs one short append and one fsync whatever the
size of the scan, and the HDF5 file itself is only ever replaced whole. A journal line
carries a CRC-32 of its text, so a line torn by a kill (or garbage after a crash) is
recognised and ignored; the point it held is simply computed again. A kill between the
replacement of the HDF5 file and the removal of the journal leaves records in both, which
are identical and merged by point index. Readers (:func:`read_scan_file`) merge the journal
in memory without writing, so a running scan can be inspected at any time.

One driver at a time: a writer takes an exclusive ``flock`` on ``<file>.lock`` (released
by the operating system when the process dies, so a killed driver never leaves a stale
lock); a second driver on the same file is refused. The empty lock file stays beside the
scan file (removing it would let two drivers lock two different files of the same name).

Layout (format ``plasmazero-scan``, version 1)
---------------------------------------------
::

    /                         attributes: format, format_version, fingerprint, kind, design,
                              seed (-1: none), evaluate, base_text, base_json,
                              variations_json, parameters_json, meta_json, context_json,
                              edits_doc, n_points, created_utc, plasmazero_version
    /plan/values_json         (n,) str      JSON list of each point's parameter values
    /plan/values              (n, p) f8     the same as numbers (NaN for words)
    /plan/rate_multipliers    (n, r) f8     per-point rate-coefficient factors (when any)
    /points/index             (m,) i8       finished points, ascending
    /points/status            (m,) str      "ok" or "failed"
    /points/error             (m,) str      error text of failed points ("" otherwise)
    /points/wall_time_s       (m,) f8       wall time of the evaluation
    /points/figures/<name>    (m,) f8       scalar figures (NaN where absent), or
                              (m,) vlen f8  array figures (attribute shape: "array")
    /points/present/<name>    (m,) bool     whether the point returned the figure
    /points                   attribute figure_names_json: the figure names in order

The journal's first line is a header naming the fingerprint of its scan; every further
line is one point: ``{"i": index, "s": status, "e": error, "t": wall_time_s,
"f": {name: number or list}}``, a tab, and the CRC-32 of the JSON text in hex. Floats are
written by ``repr`` (shortest round-trip form), so values read back are bit-identical.
"""

from __future__ import annotations

import json
import math
import os
import time
import zlib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from plasmazero.data.errors import InputError, format_problem

FORMAT = "plasmazero-scan"
FORMAT_VERSION = 1
STATUS_OK = "ok"
STATUS_FAILED = "failed"
STATUS_PENDING = "pending"

try:  # POSIX
    import fcntl
except ImportError:  # pragma: no cover - Windows: no cross-process lock
    fcntl = None


@dataclass(frozen=True)
class Plan:
    """What a scan evaluates: one entry of ``values`` per point.

    Attributes
    ----------
    kind : str
        ``"scan"``, ``"sensitivity"`` or ``"uncertainty"``.
    parameters : tuple of str
        Names of the per-point values (key paths of the scenario for scans).
    values : tuple of tuple
        Per point, one value per parameter (numbers or words).
    design : str
        ``"grid"``, ``"latin:N"``, ``"central"``, ``"forward"``, ``"monte_carlo"``.
    seed : int or None
        Seed of the random design, when it has one.
    variations : tuple of str
        The variations as written.
    edits_doc : bool
        The values are key-path edits of the scenario mapping.
    rate_multipliers : ndarray (n_points, n_rows) or None
        Factors on every rate coefficient, per point (sensitivity and uncertainty).
    meta : dict
        JSON-able extras (reaction labels, perturbation factor, ...).
    """

    kind: str
    parameters: tuple
    values: tuple
    design: str = "grid"
    seed: int | None = None
    variations: tuple = ()
    edits_doc: bool = True
    rate_multipliers: np.ndarray | None = None
    meta: dict = field(default_factory=dict)

    def __len__(self):
        return len(self.values)


@dataclass(frozen=True)
class PointRecord:
    """The outcome of one point: figures (floats or 1-D float arrays) or an error."""

    index: int
    status: str
    error: str = ""
    wall_time_s: float = math.nan
    figures: dict = field(default_factory=dict)


# ---------------------------------------------------------------- JSON helpers
def to_json(obj):
    """Compact JSON text of ``obj`` (NaN and inf allowed, keys sorted)."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), default=_json_default)


def _json_default(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, (np.floating, np.integer, np.bool_)):
        return obj.item()
    if isinstance(obj, Path):
        return str(obj)
    return str(obj)


def _record_json(rec):
    figs = {k: (v.tolist() if isinstance(v, np.ndarray) else float(v)) for k, v in rec.figures.items()}
    return to_json({"i": int(rec.index), "s": rec.status, "e": rec.error,
                    "t": float(rec.wall_time_s), "f": figs})


def _record_from_json(obj):
    figs = {k: (np.asarray(v, dtype=np.float64) if isinstance(v, list) else float(v))
            for k, v in obj["f"].items()}
    return PointRecord(index=int(obj["i"]), status=str(obj["s"]), error=str(obj["e"]),
                       wall_time_s=float(obj["t"]), figures=figs)


def _line(text):
    return f"{text}\t{zlib.crc32(text.encode('utf-8')):08x}\n".encode("utf-8")


def _parse_line(raw):
    """JSON object of a journal line, or None when the line is torn or corrupt."""
    try:
        text = raw.decode("utf-8")
        body, crc = text.rsplit("\t", 1)
        if f"{zlib.crc32(body.encode('utf-8')):08x}" != crc:
            return None
        return json.loads(body)
    except (UnicodeDecodeError, ValueError):
        return None


def journal_path(path):
    """``<path>.journal``."""
    return Path(str(path) + ".journal")


def lock_path(path):
    """``<path>.lock``."""
    return Path(str(path) + ".lock")


def _read_journal(path, fingerprint):
    """Records of the journal at ``path`` (complete lines only); [] when absent.

    Raises
    ------
    InputError
        The journal belongs to another scan.
    """
    try:
        data = Path(path).read_bytes()
    except FileNotFoundError:
        return []
    lines = data.split(b"\n")[:-1]      # the part after the last newline is torn
    if not lines:
        return []
    head = _parse_line(lines[0])
    if head is None or head.get("journal") != FORMAT:
        return []                        # torn header: nothing was journalled after it
    if head.get("fingerprint") != fingerprint:
        raise InputError([format_problem(path, None, "journal of a different scan than its HDF5 file; "
                                         "move it away to keep the HDF5 results")])
    out = []
    for raw in lines[1:]:
        obj = _parse_line(raw)
        if obj is not None:
            out.append(_record_from_json(obj))
    return out


# ---------------------------------------------------------------- HDF5 reading / writing
def _attr_text(value):
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)


def read_hdf5(path):
    """Header dict, :class:`Plan` and finished records of the HDF5 part of a scan file.

    Raises
    ------
    InputError
        The file is not a readable plasmazero scan file.
    """
    import h5py

    path = Path(path)
    try:
        f = h5py.File(path, "r")
    except FileNotFoundError:
        raise InputError([format_problem(path, None, "scan file not found")]) from None
    except OSError as exc:
        raise InputError([format_problem(path, None, f"not a readable HDF5 file ({exc})")]) from None
    with f:
        if _attr_text(f.attrs.get("format", "")) != FORMAT:
            raise InputError([format_problem(path, None, "not a plasmazero scan file")])
        version = int(f.attrs["format_version"])
        if version > FORMAT_VERSION:
            raise InputError([format_problem(path, None, f"scan file format version {version} is newer "
                                             f"than this plasmazero reads ({FORMAT_VERSION})")])
        header = {k: (_attr_text(v) if isinstance(v, (str, bytes)) else v.item() if hasattr(v, "item") else v)
                  for k, v in f.attrs.items()}
        seed = int(header["seed"])
        mult = f["plan/rate_multipliers"][...] if "plan/rate_multipliers" in f else None
        values = tuple(tuple(json.loads(_attr_text(t))) for t in f["plan/values_json"][...])
        plan = Plan(kind=header["kind"], parameters=tuple(json.loads(header["parameters_json"])),
                    values=values, design=header["design"], seed=None if seed < 0 else seed,
                    variations=tuple(json.loads(header["variations_json"])),
                    edits_doc=bool(header["edits_doc"]), rate_multipliers=mult,
                    meta=json.loads(header["meta_json"]))
        pts = f["points"]
        index = pts["index"][...]
        status = [_attr_text(s) for s in pts["status"][...]]
        error = [_attr_text(s) for s in pts["error"][...]]
        wall = pts["wall_time_s"][...]
        figs = {}
        for name in json.loads(_attr_text(pts.attrs["figure_names_json"])):
            ds = pts["figures"][name]
            figs[name] = (_attr_text(ds.attrs.get("shape", "scalar")), ds[...], pts["present"][name][...])
        records = []
        for r in range(index.size):
            fr = {}
            for name, (shape, data, present) in figs.items():
                if present[r]:
                    fr[name] = np.asarray(data[r], dtype=np.float64) if shape == "array" else float(data[r])
            records.append(PointRecord(index=int(index[r]), status=status[r], error=error[r],
                                       wall_time_s=float(wall[r]), figures=fr))
    return header, plan, records


def _fsync_dir(folder):
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:  # pragma: no cover - platforms without directory fds
        return
    try:
        os.fsync(fd)
    except OSError:  # pragma: no cover
        pass
    finally:
        os.close(fd)


def write_hdf5_atomic(path, header, plan, records):
    """Write the whole scan file to a temporary name, fsync it and replace ``path`` atomically.

    Parameters
    ----------
    header : dict
        Attributes of the root group (strings, numbers).
    plan : Plan
    records : iterable of PointRecord
        Finished points (any order; one per index).
    """
    import h5py

    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp")
    recs = sorted(records, key=lambda r: r.index)
    str_dt = h5py.string_dtype("utf-8")
    with h5py.File(tmp, "w") as f:
        for key, value in header.items():
            f.attrs[key] = value
        g = f.create_group("plan")
        g.create_dataset("values_json", data=np.array([to_json(list(v)) for v in plan.values], dtype=object),
                         dtype=str_dt)
        numeric = np.full((len(plan.values), len(plan.parameters)), np.nan)
        for i, row in enumerate(plan.values):
            for c, v in enumerate(row):
                if isinstance(v, (int, float)) and not isinstance(v, bool):
                    numeric[i, c] = v
        g.create_dataset("values", data=numeric)
        if plan.rate_multipliers is not None:
            g.create_dataset("rate_multipliers", data=np.asarray(plan.rate_multipliers, dtype=np.float64))
        p = f.create_group("points")
        p.create_dataset("index", data=np.array([r.index for r in recs], dtype=np.int64))
        p.create_dataset("status", data=np.array([r.status for r in recs], dtype=object), dtype=str_dt)
        p.create_dataset("error", data=np.array([r.error for r in recs], dtype=object), dtype=str_dt)
        p.create_dataset("wall_time_s", data=np.array([r.wall_time_s for r in recs], dtype=np.float64))
        fg = p.create_group("figures")
        pg = p.create_group("present")
        names = []
        for r in recs:
            for name in r.figures:
                if name not in names:
                    names.append(name)
        p.attrs["figure_names_json"] = to_json(names)
        for name in names:
            vals = [r.figures.get(name) for r in recs]
            pg.create_dataset(name, data=np.array([v is not None for v in vals], dtype=bool))
            if all(v is None or not isinstance(v, np.ndarray) for v in vals):
                data = np.array([math.nan if v is None else float(v) for v in vals], dtype=np.float64)
                ds = fg.create_dataset(name, data=data)
                ds.attrs["shape"] = "scalar"
            else:
                ds = fg.create_dataset(name, shape=(len(recs),), dtype=h5py.vlen_dtype(np.float64))
                for r, v in enumerate(vals):
                    ds[r] = np.zeros(0) if v is None else np.atleast_1d(np.asarray(v, dtype=np.float64))
                ds.attrs["shape"] = "array"
    fd = os.open(tmp, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)
    os.replace(tmp, path)
    _fsync_dir(path.parent)


def read_scan_file(path):
    """Header, plan and records of a scan file, the journal merged in (read-only).

    Returns
    -------
    (header : dict, plan : Plan, records : dict index -> PointRecord)
    """
    header, plan, records = read_hdf5(path)
    merged = {r.index: r for r in records}
    for r in _read_journal(journal_path(path), header["fingerprint"]):
        if 0 <= r.index < len(plan):
            merged[r.index] = r
    return header, plan, merged


# ---------------------------------------------------------------- the writer
class ScanFile:
    """A scan file open for writing by one driver (holds the lock). Use :func:`open_scan_file`.

    Attributes
    ----------
    path : Path
    header : dict
    plan : Plan
    records : dict
        index -> PointRecord of every finished point so far.
    """

    def __init__(self, path, header, plan, records, lock_fd, fold_interval_s):
        self.path = Path(path)
        self.header = header
        self.plan = plan
        self.records = records
        self._lock_fd = lock_fd
        self._journal_fd = None
        self._fold_interval_s = fold_interval_s
        self._last_fold = time.monotonic()
        self._unfolded = 0

    def append(self, record):
        """Record a finished point: one journal line, written and fsynced before returning."""
        if self._journal_fd is None:
            self._open_journal()
        os.write(self._journal_fd, _line(_record_json(record)))
        os.fsync(self._journal_fd)
        self.records[record.index] = record
        self._unfolded += 1
        if time.monotonic() - self._last_fold >= self._fold_interval_s:
            self.fold()

    def _open_journal(self):
        jp = journal_path(self.path)
        fd = os.open(jp, os.O_RDWR | os.O_CREAT | os.O_APPEND, 0o644)
        size = os.fstat(fd).st_size
        if size:
            # drop a torn last line, so that the next line starts on a line of its own
            data = os.pread(fd, size, 0)
            keep = data.rfind(b"\n") + 1
            if keep != size:
                os.ftruncate(fd, keep)
            if keep == 0:
                size = 0
        if not size:
            os.write(fd, _line(to_json({"journal": FORMAT, "fingerprint": self.header["fingerprint"]})))
            os.fsync(fd)
            _fsync_dir(self.path.parent)
        self._journal_fd = fd

    def fold(self):
        """Fold the journal into the HDF5 file (atomic replace), then remove the journal."""
        write_hdf5_atomic(self.path, self.header, self.plan, self.records.values())
        if self._journal_fd is not None:
            os.close(self._journal_fd)
            self._journal_fd = None
        try:
            os.remove(journal_path(self.path))
            _fsync_dir(self.path.parent)
        except FileNotFoundError:
            pass
        self._last_fold = time.monotonic()
        self._unfolded = 0

    def close(self):
        """Fold what is left and release the lock."""
        try:
            if self._unfolded or journal_path(self.path).exists():
                self.fold()
        finally:
            if self._journal_fd is not None:
                os.close(self._journal_fd)
                self._journal_fd = None
            if self._lock_fd is not None:
                os.close(self._lock_fd)
                self._lock_fd = None

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


def acquire_lock(path):
    """Exclusive lock of the scan file ``path`` (a file descriptor to close to release it).

    Raises
    ------
    InputError
        Another process holds the lock.
    """
    fd = os.open(lock_path(path), os.O_RDWR | os.O_CREAT, 0o644)
    if fcntl is not None:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            os.close(fd)
            raise InputError([format_problem(path, None, "scan file is in use by another running scan "
                                             f"(lock {lock_path(path).name} is held)")]) from None
    return fd


def open_scan_file(path, header, plan, *, overwrite=False, fold_interval_s=30.0):
    """Open (create, or resume) the scan file ``path`` for writing.

    Parameters
    ----------
    path : path-like
    header : dict
        Root attributes; ``header["fingerprint"]`` identifies the scan.
    plan : Plan
    overwrite : bool
        Start afresh even when the file holds another scan or finished points.
    fold_interval_s : float
        Fold the journal into the HDF5 file at most this often (and at the end).

    Returns
    -------
    ScanFile
        With ``records`` holding the points finished by earlier runs.

    Raises
    ------
    InputError
        The file holds a different scan, is not a scan file, or is in use.
    """
    path = Path(path)
    lock_fd = acquire_lock(path)
    try:
        records = {}
        if path.exists() and not overwrite:
            old_header, _, _ = read_hdf5(path)
            if old_header.get("fingerprint") != header["fingerprint"]:
                raise InputError([format_problem(
                    path, None, "holds a different scan (base scenario, variations, design, seed, point "
                    "function or context differ); choose another file or remove this one")])
            _, _, records = read_scan_file(path)
            header = dict(header, created_utc=old_header.get("created_utc", header.get("created_utc", "")))
        elif overwrite:
            try:
                os.remove(journal_path(path))
            except FileNotFoundError:
                pass
        sf = ScanFile(path, header, plan, records, lock_fd, fold_interval_s)
        sf.fold()        # creates the file, or folds a journal left by a killed driver
        return sf
    except BaseException:
        os.close(lock_fd)
        raise
