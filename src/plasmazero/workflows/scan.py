"""The parameter-scan engine: many evaluations of one point function, checkpointed.

The point function (the contract)
---------------------------------
A point is evaluated by a module-level (picklable) callable::

    evaluate(doc: dict, context: dict) -> dict

``doc`` is the scenario mapping with the point's values applied
(:func:`plasmazero.workflows.sampling.apply_values`); ``context`` holds the fixed settings the
caller gave (e.g. the scenario file's folder, seeds), plus, set by the engine:

``rate_multipliers``
    float64 array, one factor per reaction row multiplying its rate coefficient, or None
    (sensitivity and uncertainty plans set it per point; otherwise the caller's value);
``point_index``
    the index of the point in the plan.

It returns figure names -> floats or small 1-D float arrays; names carry their units
(``power_W``, ``mean_energy_eV``) and contain no ``/``. An exception in the point function
does not stop the scan: the point is recorded as failed with the error text
(``"ValueError: ..."``). The engine takes the callable, or its dotted name
``"package.module:function"`` (which is what Dask workers import).

Where the points run
--------------------
``workers=None`` (default)
    A local process pool of one worker per core (:class:`concurrent.futures.ProcessPoolExecutor`,
    ``forkserver`` start method where the platform has it, else ``spawn``; never ``fork``,
    which copies the driver's threads' locks into the children).
``workers=n``
    n local worker processes; ``workers=0`` evaluates every point in the driver process
    (debugging, tiny scans).
``dask_address="tcp://host:8786"``
    The points go to a running ``dask.distributed`` scheduler (needs the ``scan`` extra).

At most two points per worker are in flight, so a killed driver loses little work and
memory stays flat. Local workers get the points longest first as far as that can be
told: once a few points have finished, the wall time of the others is predicted by a
least-squares fit on the numeric parameter values and the longest predicted is handed out
next, so that short points are left for the end and the workers finish together (Graham's
longest-processing-time-first rule; :func:`largest_predicted_first`). A worker process
that dies (segmentation fault, out of memory) breaks the pool; the points that were in
flight are then run again one at a time in a fresh pool, and the one that kills its
worker alone is recorded as failed. Workers watch the driver and exit within a second
when it is gone (killed). Each point gets its own copies of ``doc`` and ``context``. Dask workers must be able to import plasmazero and the point
function's module.

Compilation
-----------
The numba kernels are compiled with ``cache=True``: the machine code goes to the on-disk
cache (``__pycache__`` beside the sources, or ``NUMBA_CACHE_DIR``) and is loaded from there
by every later process. To keep the workers from compiling the same kernels in parallel
on a cold cache (two processes saving the same function's cache at once may pair an index
entry with another signature's code), the engine evaluates the first pending point in the
driver before the workers get any point (``warm_up=True``): its compilation fills the
cache, and the workers only load from it. The worker processes are started meanwhile, in
a thread (their start waits for the fork server's imports), so that this overlaps with the
driver's point. (Dask workers on other machines fill their own caches on first use.)

Checkpoint
----------
With ``scan_file``, each finished point is written as it arrives
(:mod:`plasmazero.workflows.scanfile`); running the same scan again (same base mapping,
plan, point function and context: the *fingerprint*) skips the finished points, and a
different scan on the same file is refused. Failed points are kept as failed unless
``retry_failed``.

Progress goes to stderr (count, rate, time left; :mod:`tqdm`).
"""

from __future__ import annotations

import copy
import csv
import hashlib
import importlib
import math
import multiprocessing as mp
import os
import sys
import threading
import time
from collections import deque
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from plasmazero.data.errors import InputError, format_problem

from .sampling import (apply_values, grid_points, latin_points, parse_design, parse_variations,
                       plain)
from .scanfile import (FORMAT, FORMAT_VERSION, STATUS_FAILED, STATUS_OK, STATUS_PENDING, Plan,
                       PointRecord, open_scan_file, read_scan_file, to_json)

#: points in flight per worker
IN_FLIGHT_PER_WORKER = 2
#: how often a worker checks that its parent is alive, s
PARENT_POLL_S = 0.5


# ---------------------------------------------------------------- results
@dataclass(frozen=True)
class ScanResult:
    """All points of a scan (finished or not), in plan order.

    Attributes
    ----------
    plan : Plan
    status : tuple of str
        ``"ok"``, ``"failed"`` or ``"pending"`` per point.
    errors : tuple of str
        Error text of failed points, ``""`` otherwise.
    wall_time_s : ndarray (n,)
        Wall time of each evaluation, s (NaN: pending).
    figures : dict
        Figure name -> ndarray: (n,) for scalar figures, (n, L) for arrays of one length,
        object array of 1-D arrays otherwise; NaN (None) where the point did not give it.
    n_evaluated : int
        Points evaluated by the run that made this result (0 when read from a file).
    path : Path or None
        The scan file.
    header : dict
        Root attributes of the scan file (fingerprint, base text, ...).
    """

    plan: Plan
    status: tuple
    errors: tuple
    wall_time_s: np.ndarray
    figures: dict
    n_evaluated: int = 0
    path: Path | None = None
    header: dict = field(default_factory=dict)

    def __len__(self):
        return len(self.plan)

    @property
    def ok(self):
        """Boolean mask of the points that succeeded."""
        return np.array([s == STATUS_OK for s in self.status], dtype=bool)

    def parameter(self, name):
        """Values of parameter ``name`` over the points (float array, or object array for words)."""
        c = self.plan.parameters.index(name)
        vals = [row[c] for row in self.plan.values]
        if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in vals):
            return np.array(vals, dtype=np.float64)
        return np.array(vals, dtype=object)


def assemble_result(plan, records, *, n_evaluated=0, path=None, header=None):
    """Build a :class:`ScanResult` from a plan and its records (index -> PointRecord)."""
    n = len(plan)
    status, errors = [], []
    wall = np.full(n, math.nan)
    for i in range(n):
        rec = records.get(i)
        status.append(STATUS_PENDING if rec is None else rec.status)
        errors.append("" if rec is None else rec.error)
        if rec is not None:
            wall[i] = rec.wall_time_s
    names = []
    for i in sorted(records):
        for name in records[i].figures:
            if name not in names:
                names.append(name)
    figures = {}
    for name in names:
        vals = [records[i].figures.get(name) if i in records else None for i in range(n)]
        given = [v for v in vals if v is not None]
        if all(not isinstance(v, np.ndarray) for v in given):
            figures[name] = np.array([math.nan if v is None else float(v) for v in vals])
        elif all(isinstance(v, np.ndarray) for v in given) and len({v.shape for v in given}) == 1:
            arr = np.full((n,) + given[0].shape, math.nan)
            for i, v in enumerate(vals):
                if v is not None:
                    arr[i] = v
            figures[name] = arr
        else:
            arr = np.empty(n, dtype=object)
            for i, v in enumerate(vals):
                arr[i] = v
            figures[name] = arr
    return ScanResult(plan=plan, status=tuple(status), errors=tuple(errors), wall_time_s=wall,
                      figures=figures, n_evaluated=n_evaluated, path=None if path is None else Path(path),
                      header=dict(header or {}))


def read_scan(path):
    """The :class:`ScanResult` held by a scan file (journal included; read-only, safe while it runs)."""
    header, plan, records = read_scan_file(path)
    return assemble_result(plan, records, path=path, header=header)


# ---------------------------------------------------------------- point functions
def resolve_point_function(spec):
    """The callable of ``spec``: a callable, or its dotted name ``"package.module:function"``.

    Raises
    ------
    InputError
        The name is malformed, or the module or function cannot be imported.
    """
    if callable(spec):
        return spec
    text = str(spec)
    module, sep, name = text.partition(":")
    if not sep or not module or not name:
        raise InputError([format_problem(None, text, "point function must be given as package.module:function")])
    try:
        obj = importlib.import_module(module)
    except ImportError as exc:
        raise InputError([format_problem(None, text, f"cannot import module {module!r} ({exc})")]) from None
    for part in name.split("."):
        obj = getattr(obj, part, None)
        if obj is None:
            raise InputError([format_problem(None, text, f"module {module!r} has no {name!r}")])
    if not callable(obj):
        raise InputError([format_problem(None, text, "is not callable")])
    return obj


def dotted_name(func):
    """``"module:qualname"`` of a callable when that name imports back to it, else None."""
    if isinstance(func, str):
        return func
    module = getattr(func, "__module__", None)
    qual = getattr(func, "__qualname__", None)
    if not module or not qual or "<" in qual:
        return None
    if module == "__main__":
        return None
    try:
        if resolve_point_function(f"{module}:{qual}") is func:
            return f"{module}:{qual}"
    except InputError:
        return None
    return None


def _check_figures(out):
    """Validated figures of a point function's return value (ValueError otherwise)."""
    if not isinstance(out, dict):
        raise ValueError(f"the point function returned {type(out).__name__}, expected a dict of figures")
    figs = {}
    for name, value in out.items():
        if not isinstance(name, str) or not name or "/" in name or name == ".":
            raise ValueError(f"figure name {name!r} is not a non-empty text without '/'")
        if isinstance(value, (bool, np.bool_)):
            figs[name] = float(value)
            continue
        arr = np.asarray(value, dtype=np.float64)
        if arr.ndim == 0:
            figs[name] = float(arr)
        elif arr.ndim == 1:
            figs[name] = arr.copy()
        else:
            raise ValueError(f"figure {name!r} has {arr.ndim} dimensions; give floats or 1-D arrays")
    return figs


def evaluate_point(spec, doc, context, index):
    """Evaluate one point; never raises: an error is returned as a failed record.

    Parameters
    ----------
    spec : callable or str
        The point function or its dotted name.
    doc, context : dict
        Arguments of the point function.
    index : int
        Index of the point in the plan.

    Returns
    -------
    PointRecord
    """
    t0 = time.perf_counter()
    try:
        func = resolve_point_function(spec)
        # copies: a point function that edits its arguments must not change other points
        figs = _check_figures(func(copy.deepcopy(doc), copy.deepcopy(context)))
    except Exception as exc:  # noqa: BLE001 - a failing point is recorded, not raised
        return PointRecord(index=index, status=STATUS_FAILED, error=_error_text(exc),
                           wall_time_s=time.perf_counter() - t0)
    return PointRecord(index=index, status=STATUS_OK, wall_time_s=time.perf_counter() - t0, figures=figs)


def _error_text(exc):
    text = str(exc).strip().replace("\n", "; ")
    return f"{type(exc).__name__}: {text}" if text else type(exc).__name__


# ---------------------------------------------------------------- fingerprints
def _digest(obj):
    """JSON-able, reproducible summary of ``obj`` for the fingerprint of a scan."""
    if obj is None or isinstance(obj, (bool, str)):
        return obj
    if isinstance(obj, (int, float, np.integer, np.floating)):
        v = float(obj)
        return repr(v) if not math.isfinite(v) else v
    if isinstance(obj, Path):
        return str(obj)
    if isinstance(obj, np.ndarray):
        a = np.ascontiguousarray(obj)
        return {"array_sha256": hashlib.sha256(a.tobytes()).hexdigest(), "shape": list(a.shape),
                "dtype": str(a.dtype)}
    if isinstance(obj, dict):
        return {str(k): _digest(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_digest(v) for v in obj]
    return {"type": f"{type(obj).__module__}.{type(obj).__qualname__}"}


def scan_header(evaluate, base, plan, context, base_text=None):
    """Root attributes of the scan file of this scan, with its fingerprint.

    The fingerprint is the SHA-256 of the base mapping, the plan (values, design, seed,
    multipliers, meta), the point function's name and a digest of the context (numbers,
    texts and arrays by value; other objects by type).
    """
    from plasmazero import __version__

    base_json = to_json(plain(base))
    name = dotted_name(evaluate) or getattr(evaluate, "__qualname__", repr(evaluate))
    mult = None if plan.rate_multipliers is None else _digest(np.asarray(plan.rate_multipliers, np.float64))
    ctx = {k: v for k, v in (context or {}).items() if k not in ("rate_multipliers", "point_index")}
    ident = {
        "format_version": FORMAT_VERSION, "kind": plan.kind, "base": base_json, "evaluate": name,
        "context": _digest(ctx), "fixed_rate_multipliers": _digest((context or {}).get("rate_multipliers")),
        "parameters": list(plan.parameters), "values": [list(v) for v in plan.values],
        "design": plan.design, "seed": plan.seed, "variations": list(plan.variations),
        "edits_doc": plan.edits_doc, "multipliers": mult, "meta": plan.meta,
    }
    fingerprint = hashlib.sha256(to_json(ident).encode("utf-8")).hexdigest()
    if base_text is None:
        import yaml
        base_text = yaml.safe_dump(plain(base), sort_keys=False)
    return {
        "format": FORMAT, "format_version": FORMAT_VERSION, "fingerprint": fingerprint,
        "kind": plan.kind, "design": plan.design, "seed": -1 if plan.seed is None else int(plan.seed),
        "evaluate": name, "base_text": base_text, "base_json": base_json,
        "variations_json": to_json(list(plan.variations)), "parameters_json": to_json(list(plan.parameters)),
        "meta_json": to_json(plan.meta), "context_json": to_json(_digest(ctx)),
        "edits_doc": bool(plan.edits_doc), "n_points": len(plan),
        "created_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "plasmazero_version": __version__,
    }


# ---------------------------------------------------------------- plans
def scan_plan(variations, design="grid", seed=0, source=None):
    """The :class:`Plan` of a scan over ``variations`` (texts or parsed ``Variation``).

    Parameters
    ----------
    variations : sequence of str or Variation
        ``"key.path=spec"`` (:mod:`plasmazero.workflows.sampling`).
    design : str
        ``"grid"`` or ``"latin:N"``.
    seed : int
        Seed of the Latin hypercube (ignored by the grid).
    source : path-like or None
        Where the variations came from, for messages.
    """
    texts = [v if isinstance(v, str) else v.text for v in variations]
    parsed = parse_variations(texts, source)
    kind, n = parse_design(design)
    if kind == "grid":
        points = grid_points(parsed) if parsed else [()]
        seed_used = None
    else:
        points = latin_points(parsed, n, int(seed)) if parsed else [()]
        seed_used = int(seed)
    return Plan(kind="scan", parameters=tuple(v.path for v in parsed), values=tuple(points),
                design=design if kind == "grid" else f"latin:{n}", seed=seed_used,
                variations=tuple(texts), edits_doc=True)


def _docs(base, plan, scenario_file):
    """The mapping of every point.

    Raises
    ------
    InputError
        One line per distinct problem: a problem of every point (an unknown key path) is
        named once; one of some points names the first of them and how many others.
    """
    if not plan.edits_doc:
        doc = plain(base)
        return [doc] * len(plan)
    docs, seen = [], {}
    for i, row in enumerate(plan.values):
        try:
            docs.append(apply_values(base, dict(zip(plan.parameters, row)), file=scenario_file))
        except InputError as exc:
            for p in exc.problems:
                seen.setdefault(p, []).append(i)
            docs.append(None)
    if seen:
        lines = []
        for p, points in seen.items():
            if len(points) == len(plan):
                lines.append(p)
                continue
            row = plan.values[points[0]]
            where = ", ".join(f"{k}={v}" for k, v in zip(plan.parameters, row))
            more = f"; and {len(points) - 1} more point{'s' if len(points) > 2 else ''}" if len(points) > 1 else ""
            lines.append(f"{p} (point {points[0]}: {where}{more})")
        raise InputError(lines[:20] + ([f"... and {len(lines) - 20} more"] if len(lines) > 20 else []))
    return docs


# ---------------------------------------------------------------- running
def run_scan(evaluate, base, variations=(), *, design="grid", seed=0, context=None, scan_file=None,
             workers=None, dask_address=None, base_text=None, scenario_file=None, retry_failed=False,
             overwrite=False, progress=True, warm_up=True, fold_interval_s=30.0,
             connect_timeout_s=10.0):
    """Evaluate ``evaluate`` at every point of a scan of ``base`` over ``variations``.

    Parameters
    ----------
    evaluate : callable or str
        The point function (module docstring) or ``"package.module:function"``.
    base : dict
        The base scenario mapping (not changed).
    variations : sequence of str
        ``"key.path=start:stop:count"``, ``"key.path=log:start:stop:count"`` or
        ``"key.path=a,b,c"`` (:mod:`plasmazero.workflows.sampling`).
    design : str
        ``"grid"`` (cartesian product) or ``"latin:N"`` (Latin hypercube of N points).
    seed : int
        Seed of the Latin hypercube.
    context : dict or None
        Fixed settings handed to every point.
    scan_file : path-like or None
        The checkpoint and result file (HDF5); None keeps results in memory only.
    workers : int or None
        Local worker processes (None: one per core; 0: evaluate in this process).
    dask_address : str or None
        Address of a ``dask.distributed`` scheduler to send the points to instead.
    base_text : str or None
        The scenario file's text, recorded in the scan file (default: YAML of ``base``).
    scenario_file : path-like or None
        Named in error messages.
    retry_failed : bool
        Evaluate again the points a previous run recorded as failed.
    overwrite : bool
        Discard what ``scan_file`` holds and start afresh.
    progress : bool
        Show a progress bar on stderr.
    warm_up : bool
        Evaluate the first pending point in this process before starting local workers
        (fills the numba cache once; module docstring).
    fold_interval_s : float
        How often the journal is folded into the HDF5 file, s.
    connect_timeout_s : float
        Timeout to connect to the Dask scheduler, s.

    Returns
    -------
    ScanResult

    Raises
    ------
    InputError
        Bad variations or design, unknown key paths, impossible mole fractions, a scan file
        holding another scan or in use.
    """
    plan = scan_plan(variations, design, seed, source=None)
    return run_plan(evaluate, base, plan, context=context, scan_file=scan_file, workers=workers,
                    dask_address=dask_address, base_text=base_text, scenario_file=scenario_file,
                    retry_failed=retry_failed, overwrite=overwrite, progress=progress, warm_up=warm_up,
                    fold_interval_s=fold_interval_s, connect_timeout_s=connect_timeout_s)


def run_plan(evaluate, base, plan, *, context=None, scan_file=None, workers=None, dask_address=None,
             base_text=None, scenario_file=None, retry_failed=False, overwrite=False, progress=True,
             warm_up=True, fold_interval_s=30.0, connect_timeout_s=10.0, description=None):
    """Evaluate every point of ``plan`` (a :class:`~plasmazero.workflows.scanfile.Plan`).

    Parameters as :func:`run_scan`; ``description`` labels the progress bar.

    Returns
    -------
    ScanResult
    """
    func = resolve_point_function(evaluate)
    spec = dotted_name(evaluate) or func
    context = dict(context or {})
    docs = _docs(base, plan, scenario_file)
    header = scan_header(func if not isinstance(evaluate, str) else evaluate, base, plan, context, base_text)
    if workers is not None and int(workers) < 0:
        raise ValueError("workers must be >= 0 (0: evaluate in this process)")
    n_workers = _default_workers() if workers is None else int(workers)
    if dask_address is None and n_workers > 0:
        _check_importable(func, spec)

    sf = None
    records = {}
    if scan_file is not None:
        sf = open_scan_file(scan_file, header, plan, overwrite=overwrite, fold_interval_s=fold_interval_s)
        records = sf.records
    try:
        todo = [i for i in range(len(plan))
                if i not in records or (retry_failed and records[i].status == STATUS_FAILED)]

        def job(i):
            ctx = dict(context)
            if plan.rate_multipliers is not None:
                ctx["rate_multipliers"] = np.array(plan.rate_multipliers[i], dtype=np.float64)
            else:
                ctx.setdefault("rate_multipliers", None)
            ctx["point_index"] = i
            return i, docs[i], ctx

        bar = _progress_bar(len(plan), len(plan) - len(todo), progress, description or plan.kind)
        n_failed = [sum(r.status == STATUS_FAILED for i, r in records.items() if i not in todo)]
        evaluated = [0]

        def on_record(rec):
            if sf is not None:
                sf.append(rec)
            else:
                records[rec.index] = rec
            evaluated[0] += 1
            if rec.status == STATUS_FAILED:
                n_failed[0] += 1
            if bar is not None:
                if n_failed[0]:
                    bar.set_postfix(failed=n_failed[0], refresh=False)
                bar.update(1)

        try:
            jobs = deque(job(i) for i in todo)
            if dask_address is not None:
                _run_dask(spec, jobs, dask_address, on_record, connect_timeout_s)
            elif n_workers == 0:
                while jobs:
                    i, doc, ctx = jobs.popleft()
                    on_record(evaluate_point(func, doc, ctx, i))
            elif jobs:
                warm = None
                if warm_up:
                    first = jobs.popleft()
                    if jobs:
                        warm = (first, lambda j: on_record(evaluate_point(func, j[1], j[2], j[0])))
                    else:            # a single point: no pool
                        on_record(evaluate_point(func, first[1], first[2], first[0]))
                if jobs:
                    _run_pool(spec, jobs, n_workers, on_record, _start_method(), _preload(spec), warm=warm,
                              features=cost_features(plan))
        finally:
            if bar is not None:
                bar.close()
    finally:
        if sf is not None:
            sf.close()
    return assemble_result(plan, records, n_evaluated=evaluated[0], path=scan_file, header=header)


def _default_workers():
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def _check_importable(func, spec):
    if isinstance(spec, str):
        return
    if getattr(func, "__module__", None) == "__main__" and \
            getattr(sys.modules.get("__main__"), "__file__", None) is None:
        raise ValueError("the point function is defined in an interactive __main__ that worker "
                         "processes cannot import: put it in a module (or use workers=0)")


def _progress_bar(total, done, enabled, description):
    if not enabled:
        return None
    from tqdm import tqdm

    return tqdm(total=total, initial=done, desc=description, unit="point", file=sys.stderr,
                dynamic_ncols=True, smoothing=0.1)


def _start_method():
    return "forkserver" if "forkserver" in mp.get_all_start_methods() else "spawn"


def _preload(spec):
    mods = ["numpy", "numba", "plasmazero.workflows.scan"]
    if isinstance(spec, str):
        mods.append(spec.partition(":")[0])
    else:
        mod = getattr(spec, "__module__", None)
        if mod and mod != "__main__":
            mods.append(mod)
    return mods


def _alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # pragma: no cover - exists, owned by another user
        return True
    return True


def _watch_driver(driver_pid, parent_pid):
    """Exit this worker as soon as the driver is gone (killed) or its parent changed."""
    while True:
        time.sleep(PARENT_POLL_S)
        if os.getppid() != parent_pid or not _alive(driver_pid):
            os._exit(1)


def _worker_init(driver_pid):
    """Initializer of pool workers: start the watch on the driver (a forkserver child's
    parent is the fork server, which exits with the driver; a spawned child's is the driver)."""
    threading.Thread(target=_watch_driver, args=(driver_pid, os.getppid()), daemon=True).start()


def _start_probes(ex, spec, n_workers):
    """Start the worker processes of ``ex`` from a background thread, each first importing
    the point function; returns (thread, outcomes) for :func:`_check_probes`.

    Starting a worker waits for the fork server's imports; in a thread, that overlaps with
    what the driver does meanwhile (the warm-up point). The workers run no point yet.
    """
    outcomes = []

    def start():
        try:
            for _ in range(n_workers):
                outcomes.append(ex.submit(resolve_point_function, spec))
        except Exception as exc:  # noqa: BLE001 - reported by _check_probes
            outcomes.append(exc)

    thread = threading.Thread(target=start, name="plasmazero-pool-start", daemon=True)
    thread.start()
    return thread, outcomes


def _check_probes(ex, probes):
    """Check that the worker processes started and can import the point function.

    Without this, a pool whose workers die while starting (an unguarded main module, a
    module the workers cannot import) would be taken for a series of crashing points.
    """
    thread, outcomes = probes
    thread.join()
    try:
        for item in outcomes:
            if isinstance(item, BaseException):
                raise item
            item.result()
    except BrokenProcessPool:
        ex.shutdown(wait=False, cancel_futures=True)
        raise RuntimeError("worker processes die while starting: if the scan is started from a script, "
                           "guard it with `if __name__ == \"__main__\":`; or run with workers=0") from None
    except Exception as exc:
        ex.shutdown(wait=False, cancel_futures=True)
        raise RuntimeError(f"worker processes cannot load the point function ({_error_text(exc)})") from None


def cost_features(plan):
    """Per-point numbers that the cost of a point may depend on: (n, p) float array or None.

    The numeric parameter values of the plan (words and parameters that do not change are
    left out); None when there are none. Used by :func:`largest_predicted_first`.
    """
    cols = []
    for c in range(len(plan.parameters)):
        col = [row[c] for row in plan.values]
        if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in col):
            a = np.asarray(col, dtype=np.float64)
            if np.all(np.isfinite(a)) and np.ptp(a) > 0:
                cols.append((a - a.min()) / np.ptp(a))
    return np.column_stack(cols) if cols else None


def largest_predicted_first(pending, features, done):
    """Position in ``pending`` of the point with the largest predicted wall time.

    A point's wall time is predicted by least squares of the wall times of the points
    finished so far (``done``: index -> s) on an affine function of their ``features``
    (:func:`cost_features`). Handing out the longest points first leaves short ones for
    the end of the scan, so that the workers finish together: the longest-processing-
    time-first rule of Graham (1969), SIAM J. Appl. Math. 17, 416, with predicted times.
    Before there are enough finished points for the fit (one more than coefficients),
    or without features, it is the first pending point (plan order).

    Parameters
    ----------
    pending : sequence of int
        Indices of the points not yet handed out.
    features : ndarray (n, p) or None
    done : dict
        Index -> wall time of finished points, s.
    """
    if features is None or len(pending) < 2:
        return 0
    idx = [i for i, t in done.items() if math.isfinite(t)]
    p = features.shape[1]
    if len(idx) < p + 2:
        return 0
    a = np.column_stack([np.ones(len(idx)), features[idx]])
    coef, *_ = np.linalg.lstsq(a, np.array([done[i] for i in idx]), rcond=None)
    pred = coef[0] + features[list(pending)] @ coef[1:]
    return int(np.argmax(pred))


def _run_pool(spec, jobs, n_workers, on_record, start_method, preload, warm=None, features=None):
    """Run ``jobs`` (deque of (index, doc, context)) on a local process pool.

    ``warm`` is (job, evaluate) or None: the job is evaluated by ``evaluate(job)`` in this
    process after the pool has started (its worker processes start and import while the
    driver computes; they get no point before it has finished, module docstring). With
    ``features`` (:func:`cost_features`), the points are handed out longest predicted
    first (:func:`largest_predicted_first`).
    """
    ctx = mp.get_context(start_method)
    if start_method == "forkserver":
        ctx.set_forkserver_preload(preload)
    suspects = deque()
    wall_s = {}                 # index -> wall time of the points finished here, s
    pending = list(jobs)
    jobs.clear()

    def next_job():
        return pending.pop(largest_predicted_first([j[0] for j in pending], features, wall_s))

    while pending or suspects or warm is not None:
        ex = ProcessPoolExecutor(max_workers=n_workers, mp_context=ctx, initializer=_worker_init,
                                 initargs=(os.getpid(),))
        try:
            probes = _start_probes(ex, spec, n_workers)
            if warm is not None:
                (j, evaluate), warm = warm, None
                evaluate(j)
            _check_probes(ex, probes)
        except BaseException:
            ex.shutdown(wait=False, cancel_futures=True)
            raise
        inflight = {}
        broken = False
        try:
            while (pending or suspects or inflight) and not broken:
                isolating = bool(suspects)
                limit = 1 if isolating else IN_FLIGHT_PER_WORKER * n_workers
                while (suspects if isolating else pending) and len(inflight) < limit:
                    j = suspects.popleft() if isolating else next_job()
                    try:
                        inflight[ex.submit(evaluate_point, spec, j[1], j[2], j[0])] = (j, isolating)
                    except BrokenProcessPool:      # broken by a point in flight, or a worker died
                        if isolating:
                            suspects.appendleft(j)
                        else:
                            pending.insert(0, j)
                        broken = True
                        break
                if broken or not inflight:
                    continue
                done, _ = wait(inflight, return_when=FIRST_COMPLETED)
                for fut in done:
                    j, alone = inflight.pop(fut)
                    try:
                        rec = fut.result()
                    except BrokenProcessPool:
                        broken = True
                        if alone:
                            on_record(PointRecord(index=j[0], status=STATUS_FAILED,
                                                  error="the worker process died while evaluating this point"))
                        else:
                            suspects.append(j)
                        continue
                    except Exception as exc:  # noqa: BLE001 - e.g. arguments that do not pickle
                        rec = PointRecord(index=j[0], status=STATUS_FAILED, error=_error_text(exc))
                    if rec.status == STATUS_OK:
                        wall_s[rec.index] = rec.wall_time_s
                    on_record(rec)
            if broken:
                for fut, (j, alone) in inflight.items():
                    suspects.append(j)
                inflight.clear()
        except BaseException:
            ex.shutdown(wait=False, cancel_futures=True)
            raise
        ex.shutdown(wait=True, cancel_futures=True)


def _run_dask(spec, jobs, address, on_record, connect_timeout_s):
    """Run ``jobs`` on the dask.distributed scheduler at ``address``."""
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise InputError([format_problem(None, "dask_address", "dask.distributed is not installed "
                                         "(pip install 'plasmazero[scan]')")]) from None
    try:
        client = Client(address, timeout=connect_timeout_s, set_as_default=False)
    except (OSError, TimeoutError) as exc:
        raise InputError([format_problem(None, "dask_address", f"cannot reach the scheduler at "
                                         f"{address} ({exc})")]) from None
    try:
        n_threads = max(1, sum(client.nthreads().values()))
        limit = IN_FLIGHT_PER_WORKER * n_threads
        owner = {}

        def submit():
            i, doc, ctx = jobs.popleft()
            fut = client.submit(evaluate_point, spec, doc, ctx, i, pure=False)
            owner[fut.key] = i
            return fut

        first = [submit() for _ in range(min(limit, len(jobs)))]
        if not first:
            return
        pending = as_completed(first, loop=client.loop)
        for fut in pending:
            i = owner.pop(fut.key)
            try:
                rec = fut.result()
            except Exception as exc:  # noqa: BLE001 - a worker lost for good (KilledWorker...)
                rec = PointRecord(index=i, status=STATUS_FAILED, error=_error_text(exc))
            fut.release()
            on_record(rec)
            if jobs:
                pending.add(submit())
    finally:
        client.close()


# ---------------------------------------------------------------- tables
def summary_table(result):
    """Header and rows of the summary table of a scan.

    Columns: ``index``, ``status``, every parameter, every figure (array figures one
    column per element, ``name[k]``), ``wall_time_s``, ``error``. The units are those in
    the parameter and figure names. Numbers are written in their shortest round-trip form.
    """
    figs = result.figures
    cols = []
    for name, arr in figs.items():
        if arr.dtype == object:
            width = max((np.size(v) for v in arr if v is not None), default=0)
        else:
            width = 0 if arr.ndim == 1 else arr.shape[1]
        cols.append((name, width))
    header = ["index", "status", *result.plan.parameters]
    for name, width in cols:
        header += [name] if width == 0 else [f"{name}[{k}]" for k in range(width)]
    header += ["wall_time_s", "error"]
    rows = []
    for i in range(len(result)):
        row = [str(i), result.status[i], *(_cell(v) for v in result.plan.values[i])]
        for name, width in cols:
            v = figs[name][i]
            if width == 0:
                row.append(_cell(v))
            else:
                vals = [] if v is None else list(np.atleast_1d(v))
                row += [_cell(vals[k]) if k < len(vals) else "" for k in range(width)]
        row += [_cell(result.wall_time_s[i]), result.errors[i]]
        rows.append(row)
    return header, rows


def _cell(v):
    if v is None:
        return ""
    if isinstance(v, (float, np.floating)):
        return "" if math.isnan(v) else repr(float(v))
    return str(v)


def write_summary_csv(result, path):
    """Write :func:`summary_table` of ``result`` as CSV to ``path`` (temporary name, then renamed)."""
    header, rows = summary_table(result)
    path = Path(path)
    tmp = path.with_name(f".{path.name}.tmp")
    with open(tmp, "w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)
    os.replace(tmp, path)
