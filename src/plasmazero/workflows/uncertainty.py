"""Monte Carlo propagation of rate-coefficient uncertainty to chosen figures.

Method
------
Every rate coefficient is sampled from a log-normal distribution around its nominal value,
all independently, the model is run for every sample, and the distribution of each target
is summarised by percentiles (5, 50, 95 by default); the reactions whose uncertainty drives
a target most are those whose ln k is most strongly correlated with ln(target) over the
samples. This is the procedure of Turner (2015) for a helium-oxygen chemistry (recalled
from memory of the paper: log-normal rate constants, Monte Carlo sampling, ranking of the
reactions by the correlation of the outputs with the rate constants).

The uncertainty factor as a log-normal width
--------------------------------------------
A reaction's uncertainty factor F (>= 1; ``CompiledMechanism.uncertainty_factor``) is read
as a *geometric standard deviation*: ln k is normal with mean ln k_0 and standard deviation
sigma = ln(F) / ``coverage_sigmas``, with ``coverage_sigmas = 1`` by default, so that
k_0/F <= k <= k_0 F holds with a probability of about 68 %. This is the convention the
KIDA kinetic database documents for its log-normal uncertainty factors
(Pr(k_0/F <= k <= k_0 F) ~ 68 %, taken from the database's help page on uncertainties; the
database paper is Wakelam, V. et al. (2012), recalled from memory). Evaluations
that quote F as a ~95 % bound correspond to ``coverage_sigmas = 2``. Whether Turner (2015)
read his factors as one or two standard deviations is not recalled with certainty; choose
``coverage_sigmas`` to match the source of your factors. A reaction without a factor
(NaN) takes ``default_factor`` (2 by default: a choice of this code, no source; a factor
of 2 is a common rough uncertainty of plasma-chemistry rate coefficients). F = 1 means
exact (not sampled).

The sampled multipliers exp(sigma_j xi_j), xi_j standard normal from
``numpy.random.default_rng(seed)``, reach the point function as
``context["rate_multipliers"]``; rows tied to others (``tie_to``, e.g. the compiled
mechanism's ``reverse_of``) take the factor of the row they are tied to.

References
----------
Turner, M. M. (2015), Uncertainty and error in complex plasma chemistry models, Plasma
Sources Sci. Technol. 24, 035027.
Wakelam, V. et al. (2012), A kinetic database for astrochemistry (KIDA), Astrophys. J.
Suppl. Ser. 199, 21 (recalled from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from plasmazero.data.errors import InputError, format_problem

from .scan import ScanResult, run_plan
from .scanfile import Plan
from .sensitivity import _tied_rows, expand_tied

DEFAULT_FACTOR = 2.0
DEFAULT_PERCENTILES = (5.0, 50.0, 95.0)


@dataclass(frozen=True)
class UncertaintyResult:
    """Percentiles of the targets and the reactions that drive them.

    Attributes
    ----------
    targets : tuple of str
    labels : tuple of str
        One label per reaction row.
    levels : tuple of float
        Percentile levels, per cent.
    percentiles : dict
        Target -> ndarray of its percentiles at ``levels`` over the successful samples.
    nominal : dict
        Target -> value of the nominal run (all factors 1).
    samples : dict
        Target -> ndarray (n_samples,), NaN where the run failed.
    correlations : ndarray (n_targets, n_rows)
        Pearson correlation of ln(target) with ln(multiplier) over the samples; NaN for rows
        not sampled (F = 1, tied) and targets that are not all positive.
    sigma : ndarray (n_rows,)
        Standard deviation of ln k of each row.
    n_failed : int
        Sample runs that failed.
    seed : int
    scan : ScanResult
        All runs (point 0 nominal, then the samples).
    """

    targets: tuple
    labels: tuple
    levels: tuple
    percentiles: dict
    nominal: dict
    samples: dict
    correlations: np.ndarray
    sigma: np.ndarray
    n_failed: int
    seed: int
    scan: ScanResult


def lognormal_sigma(uncertainty_factor, *, default_factor=DEFAULT_FACTOR, coverage_sigmas=1.0):
    """Standard deviation of ln k from uncertainty factors (module docstring).

    Parameters
    ----------
    uncertainty_factor : array_like
        F >= 1 per row; NaN takes ``default_factor``.
    default_factor : float
        F of rows without one (>= 1).
    coverage_sigmas : float
        Number of standard deviations of ln k that ln F spans (1: geometric standard
        deviation, 2: a ~95 % bound).

    Returns
    -------
    ndarray
        sigma = ln(F) / coverage_sigmas.
    """
    f = np.array(uncertainty_factor, dtype=np.float64, ndmin=1)
    if not (math.isfinite(default_factor) and default_factor >= 1.0):
        raise ValueError("default_factor must be a number >= 1")
    if not (math.isfinite(coverage_sigmas) and coverage_sigmas > 0.0):
        raise ValueError("coverage_sigmas must be a positive number")
    f = np.where(np.isnan(f), default_factor, f)
    if np.any(~np.isfinite(f)) or np.any(f < 1.0):
        raise ValueError("uncertainty factors must be finite and >= 1")
    return np.log(f) / coverage_sigmas


def sample_multipliers(uncertainty_factor, n_samples, seed, *, default_factor=DEFAULT_FACTOR,
                       coverage_sigmas=1.0, tie_to=None):
    """Log-normal rate-coefficient factors, (n_samples, n_rows) (module docstring)."""
    sigma = lognormal_sigma(uncertainty_factor, default_factor=default_factor,
                            coverage_sigmas=coverage_sigmas)
    tie = _tied_rows(sigma.size, tie_to)
    if int(n_samples) < 2:
        raise ValueError("n_samples must be at least 2")
    rng = np.random.default_rng(seed)
    xi = rng.standard_normal((int(n_samples), sigma.size))
    mult = np.exp(xi * sigma)
    return expand_tied(mult, tie), sigma


def uncertainty_plan(uncertainty_factor, labels=None, *, n_samples=200, seed=0,
                     default_factor=DEFAULT_FACTOR, coverage_sigmas=1.0, tie_to=None):
    """The :class:`~plasmazero.workflows.scanfile.Plan` of a Monte Carlo run.

    Point 0 is the nominal run (all factors 1, parameter ``sample`` = -1); points 1..N the
    samples 0..N-1.
    """
    mult, sigma = sample_multipliers(uncertainty_factor, n_samples, seed, default_factor=default_factor,
                                     coverage_sigmas=coverage_sigmas, tie_to=tie_to)
    n_rows = sigma.size
    labels = tuple(str(x) for x in labels) if labels is not None else tuple(f"row {j}" for j in range(n_rows))
    if len(labels) != n_rows:
        raise ValueError(f"{len(labels)} labels for {n_rows} uncertainty factors")
    all_mult = np.vstack([np.ones((1, n_rows)), mult])
    values = ((-1,),) + tuple((s,) for s in range(mult.shape[0]))
    tie = _tied_rows(n_rows, tie_to)
    return Plan(kind="uncertainty", parameters=("sample",), values=values, design="monte_carlo",
                seed=int(seed), edits_doc=False, rate_multipliers=all_mult,
                meta={"labels": list(labels), "sigma": sigma.tolist(), "tie_to": tie.tolist(),
                      "default_factor": float(default_factor), "coverage_sigmas": float(coverage_sigmas)})


def uncertainty_from_scan(scan, targets, levels=DEFAULT_PERCENTILES):
    """Percentiles and driving reactions from the runs of an uncertainty plan."""
    plan = scan.plan
    labels = tuple(plan.meta["labels"])
    sigma = np.asarray(plan.meta["sigma"], dtype=np.float64)
    tie = np.asarray(plan.meta["tie_to"], dtype=np.int64)
    targets = tuple(targets)
    levels = tuple(float(q) for q in levels)
    missing = [t for t in targets if t not in scan.figures]
    if missing and any(scan.ok):
        raise InputError([format_problem(None, "targets", f"{t!r} is not a figure of the point function "
                                         f"(figures: {', '.join(scan.figures)})") for t in missing])
    ok = scan.ok[1:]
    log_mult = np.log(plan.rate_multipliers[1:])
    sampled = (sigma > 0.0) & (tie < 0)
    pct, nominal, samples = {}, {}, {}
    corr = np.full((len(targets), len(labels)), math.nan)
    for t_i, t in enumerate(targets):
        vals = scan.figures.get(t, np.full(len(scan), math.nan))
        if vals.ndim != 1:
            raise InputError([format_problem(None, "targets",
                                             f"target {t!r} is an array figure; give a scalar figure")])
        nominal[t] = float(vals[0]) if scan.ok[0] else math.nan
        v = np.where(ok, vals[1:], math.nan)
        samples[t] = v
        good = v[ok]
        pct[t] = np.percentile(good, levels) if good.size else np.full(len(levels), math.nan)
        if good.size >= 3 and np.all(good > 0):
            y = np.log(good)
            if np.ptp(y) > 0:
                for j in np.nonzero(sampled)[0]:
                    corr[t_i, j] = np.corrcoef(log_mult[ok, j], y)[0, 1]
    return UncertaintyResult(targets=targets, labels=labels, levels=levels, percentiles=pct, nominal=nominal,
                             samples=samples, correlations=corr, sigma=sigma,
                             n_failed=int(np.sum(~ok)), seed=int(plan.seed), scan=scan)


def run_uncertainty(evaluate, base, targets, uncertainty_factor, labels=None, *, n_samples=200, seed=0,
                    default_factor=DEFAULT_FACTOR, coverage_sigmas=1.0, tie_to=None,
                    levels=DEFAULT_PERCENTILES, context=None, scan_file=None, workers=None,
                    dask_address=None, progress=True, **engine_options):
    """Monte Carlo uncertainty of ``targets`` from rate-coefficient uncertainty factors.

    Parameters
    ----------
    evaluate : callable or str
        Point function reading ``context["rate_multipliers"]``.
    base : dict
        The scenario mapping, the same for every run.
    targets : sequence of str
        Scalar figures of the point function.
    uncertainty_factor : array (n_rows,)
        F per reaction row, NaN where absent (``CompiledMechanism.uncertainty_factor``).
    labels : sequence of str or None
        One label per row (``CompiledMechanism.reactions``).
    n_samples, seed, default_factor, coverage_sigmas, tie_to
        Module docstring.
    levels : sequence of float
        Percentile levels, per cent.
    context, scan_file, workers, dask_address, progress, engine_options
        As for :func:`plasmazero.workflows.scan.run_plan`.

    Returns
    -------
    UncertaintyResult

    References
    ----------
    Turner, M. M. (2015), Plasma Sources Sci. Technol. 24, 035027.
    """
    plan = uncertainty_plan(uncertainty_factor, labels, n_samples=n_samples, seed=seed,
                            default_factor=default_factor, coverage_sigmas=coverage_sigmas, tie_to=tie_to)
    scan = run_plan(evaluate, base, plan, context=context, scan_file=scan_file, workers=workers,
                    dask_address=dask_address, progress=progress, description="uncertainty",
                    **engine_options)
    return uncertainty_from_scan(scan, targets, levels)


def rank_drivers(result, target, top=None):
    """Rows ordered by |correlation| with ``target``, largest first (rows not sampled left out).

    Returns
    -------
    list of (row, label, correlation)
    """
    t = result.targets.index(target)
    r = result.correlations[t]
    rows = [j for j in range(r.size) if not math.isnan(r[j])]
    rows.sort(key=lambda j: (-abs(r[j]), j))
    out = [(int(j), result.labels[j], float(r[j])) for j in rows]
    return out if top is None else out[:top]
