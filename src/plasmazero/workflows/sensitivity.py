"""Normalised sensitivity coefficients of chosen figures to every rate coefficient.

S_ij = d ln(target_i) / d ln(k_j), evaluated by perturbation runs of the point function
(the point function reads ``context["rate_multipliers"]``, one factor per reaction row,
and multiplies each rate coefficient by its factor) spread over the scan engine's workers.

Differences
-----------
``central`` (default)
    S_ij = [ln T_i(k_j f) - ln T_i(k_j / f)] / (2 ln f), 2 n + 1 runs (the nominal run is
    kept for the nominal values). The truncation error is (ln f)^2 / 6 times the third
    derivative of ln T in ln k: for f = 1.05 (ln f = 0.049), about 4e-4 of a smooth
    response, against (ln f)/2 times the second derivative, about 2.4 %, for a one-sided
    difference. The factor is large enough that a relative integration error eps of the
    targets adds only about eps / ln f (2e-5 for eps = 1e-6) to S. Central differences
    cost twice the runs of one-sided ones and are used because sensitivities of
    nonlinear chemistry are often far from linear in ln k over a few per cent.
``forward``
    S_ij = [ln T_i(k_j f) - ln T_i(k)] / ln f, n + 1 runs.

Both are the usual finite-difference approximations of the normalised (logarithmic)
sensitivity coefficients of chemical kinetics (Turanyi, T. (1990), Sensitivity analysis
of complex kinetic systems. Tools and applications, J. Math. Chem. 5, 203-248).

Tied rows
---------
``tie_to[j] >= 0`` makes row j carry the same factor as row ``tie_to[j]`` and not be
perturbed on its own: pass the compiled mechanism's ``reverse_of`` so that a reversible
reaction is perturbed as one reaction (its reverse rate follows from detailed balance).
The integrator's ``rate_multipliers`` option (:func:`plasmazero.numerics.integrate`)
multiplies REVERSE rows too, after their evaluation from the forward rate coefficient, so
the same factor on both rows keeps detailed balance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from plasmazero.data.errors import InputError, format_problem

from .scan import ScanResult, run_plan
from .scanfile import STATUS_OK, Plan

DEFAULT_FACTOR = 1.05


@dataclass(frozen=True)
class SensitivityResult:
    """Normalised sensitivity coefficients.

    Attributes
    ----------
    targets : tuple of str
        Figure names.
    labels : tuple of str
        One label per reaction row.
    coefficients : ndarray (n_targets, n_rows)
        S_ij; NaN for rows not perturbed (tied or excluded), failed runs and targets <= 0.
    nominal : dict
        Target -> value of the nominal run (NaN if it failed).
    factor : float
        Perturbation factor f.
    method : str
        ``"central"`` or ``"forward"``.
    perturbed : ndarray of int
        Rows perturbed.
    scan : ScanResult
        All runs (point 0 is the nominal run).
    """

    targets: tuple
    labels: tuple
    coefficients: np.ndarray
    nominal: dict
    factor: float
    method: str
    perturbed: np.ndarray
    scan: ScanResult


def _tied_rows(n_rows, tie_to):
    if tie_to is None:
        return np.full(n_rows, -1, dtype=np.int64)
    tie = np.asarray(tie_to, dtype=np.int64)
    if tie.shape != (n_rows,) or np.any(tie >= n_rows):
        raise ValueError(f"tie_to needs {n_rows} entries, each -1 or a row index")
    if np.any(tie[tie >= 0] == np.nonzero(tie >= 0)[0]) or np.any(tie[tie[tie >= 0]] >= 0):
        raise ValueError("tie_to must tie rows to untied rows other than themselves")
    return tie


def expand_tied(multipliers, tie):
    """Copy the factor of each base row onto the rows tied to it (in place; returns it)."""
    rows = np.nonzero(tie >= 0)[0]
    multipliers[..., rows] = multipliers[..., tie[rows]]
    return multipliers


def sensitivity_plan(labels, *, factor=DEFAULT_FACTOR, method="central", rows=None, tie_to=None):
    """The :class:`~plasmazero.workflows.scanfile.Plan` of the perturbation runs.

    Point 0 is the nominal run (all factors 1). Then, for each perturbed row p in order,
    one point with k_p times ``factor`` and, for ``central``, one with k_p divided by it.
    Parameters of each point: ``reaction`` (row index, -1 for the nominal run) and
    ``multiplier``.

    Parameters
    ----------
    labels : sequence of str
        One label per reaction row (e.g. the compiled mechanism's ``reactions``).
    factor : float
        f > 1.
    method : {"central", "forward"}
    rows : sequence of int or None
        Rows to perturb (default: every row not tied to another).
    tie_to : array (n_rows,) of int or None
        Module docstring.
    """
    labels = tuple(str(x) for x in labels)
    n = len(labels)
    if not (isinstance(factor, (int, float)) and math.isfinite(factor) and factor > 1.0):
        raise ValueError("factor must be a number > 1")
    if method not in ("central", "forward"):
        raise ValueError("method must be 'central' or 'forward'")
    tie = _tied_rows(n, tie_to)
    if rows is None:
        perturbed = np.nonzero(tie < 0)[0]
    else:
        perturbed = np.asarray(sorted(set(int(r) for r in rows)), dtype=np.int64)
        if perturbed.size and (perturbed.min() < 0 or perturbed.max() >= n):
            raise ValueError(f"rows must be between 0 and {n - 1}")
        if np.any(tie[perturbed] >= 0):
            raise ValueError("a row tied to another (tie_to >= 0) cannot be perturbed on its own")
    steps = (factor, 1.0 / factor) if method == "central" else (factor,)
    values = [(-1, 1.0)]
    for p in perturbed:
        values += [(int(p), float(s)) for s in steps]
    mult = np.ones((len(values), n))
    for i, (p, s) in enumerate(values):
        if p >= 0:
            mult[i, p] = s
    expand_tied(mult, tie)
    return Plan(kind="sensitivity", parameters=("reaction", "multiplier"), values=tuple(values),
                design=method, seed=None, edits_doc=False, rate_multipliers=mult,
                meta={"labels": list(labels), "factor": float(factor), "method": method,
                      "tie_to": tie.tolist(), "perturbed": perturbed.tolist()})


def sensitivities_from_scan(scan, targets):
    """Sensitivity coefficients from the runs of a sensitivity plan (:func:`sensitivity_plan`)."""
    plan = scan.plan
    meta = plan.meta
    labels = tuple(meta["labels"])
    factor, method = float(meta["factor"]), meta["method"]
    perturbed = np.asarray(meta["perturbed"], dtype=np.int64)
    targets = tuple(targets)
    missing = [t for t in targets if t not in scan.figures]
    if missing and any(scan.ok):
        raise InputError([format_problem(None, "targets", f"{t!r} is not a figure of the point function "
                                         f"(figures: {', '.join(scan.figures)})") for t in missing])
    ok = scan.ok
    coeffs = np.full((len(targets), len(labels)), math.nan)
    nominal = {}
    where = {(int(r), float(m)): i for i, (r, m) in enumerate(plan.values)}
    for t_i, t in enumerate(targets):
        vals = scan.figures.get(t, np.full(len(scan), math.nan))
        if vals.ndim != 1:
            raise InputError([format_problem(None, "targets",
                                             f"target {t!r} is an array figure; give a scalar figure")])
        with np.errstate(divide="ignore", invalid="ignore"):
            logs = np.where(ok & (vals > 0), np.log(np.where(vals > 0, vals, 1.0)), math.nan)
        nominal[t] = float(vals[0]) if ok[0] else math.nan
        for p in perturbed:
            up = logs[where[(int(p), factor)]]
            down = logs[where[(int(p), 1.0 / factor)]] if method == "central" else logs[0]
            span = 2.0 * math.log(factor) if method == "central" else math.log(factor)
            coeffs[t_i, p] = (up - down) / span
    return SensitivityResult(targets=targets, labels=labels, coefficients=coeffs, nominal=nominal,
                             factor=factor, method=method, perturbed=perturbed, scan=scan)


def run_sensitivity(evaluate, base, targets, labels, *, factor=DEFAULT_FACTOR, method="central",
                    rows=None, tie_to=None, context=None, scan_file=None, workers=None,
                    dask_address=None, progress=True, **engine_options):
    """Normalised sensitivities of ``targets`` to every rate coefficient (module docstring).

    Parameters
    ----------
    evaluate : callable or str
        Point function reading ``context["rate_multipliers"]``
        (:mod:`plasmazero.workflows.scan`).
    base : dict
        The scenario mapping, the same for every run.
    targets : sequence of str
        Scalar figures of the point function, positive.
    labels : sequence of str
        One label per reaction row; its length is the number of multipliers.
    factor, method, rows, tie_to
        See :func:`sensitivity_plan`.
    context, scan_file, workers, dask_address, progress, engine_options
        As for :func:`plasmazero.workflows.scan.run_plan`.

    Returns
    -------
    SensitivityResult

    References
    ----------
    Turanyi, T. (1990), J. Math. Chem. 5, 203-248 (normalised sensitivity coefficients and
    their finite-difference estimate).
    """
    plan = sensitivity_plan(labels, factor=factor, method=method, rows=rows, tie_to=tie_to)
    scan = run_plan(evaluate, base, plan, context=context, scan_file=scan_file, workers=workers,
                    dask_address=dask_address, progress=progress, description="sensitivity",
                    **engine_options)
    return sensitivities_from_scan(scan, targets)


def rank_sensitivities(result, target, top=None):
    """Rows ordered by |S| for ``target``, largest first (NaN last).

    Returns
    -------
    list of (row, label, S)
    """
    t = result.targets.index(target)
    s = result.coefficients[t]
    rows = [int(j) for j in result.perturbed]
    rows.sort(key=lambda j: (math.isnan(s[j]), 0.0 if math.isnan(s[j]) else -abs(s[j]), j))
    out = [(j, result.labels[j], float(s[j])) for j in rows]
    return out if top is None else out[:top]


def failed_runs(result):
    """Indices and errors of the runs that failed (their coefficients are NaN)."""
    return [(i, result.scan.errors[i]) for i in range(len(result.scan)) if result.scan.status[i] != STATUS_OK]
