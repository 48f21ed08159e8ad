"""Figures of scans, sensitivities and uncertainties (matplotlib, the ``plot`` extra).

Every function returns a :class:`matplotlib.figure.Figure` made without pyplot (no
window, no global state); save it with ``fig.savefig(path)``. Axis labels are the
parameter and figure names, which carry their units (``power.absorbed_W``,
``mean_energy_eV``).
"""

from __future__ import annotations

import math

import numpy as np


def _figure(figsize=(6.0, 4.0)):
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ImportError("plotting needs matplotlib: pip install 'plasmazero[plot]'") from None
    return Figure(figsize=figsize, layout="constrained")


def _scalar(result, figure):
    if figure not in result.figures:
        raise KeyError(f"no figure {figure!r} in the scan (figures: {', '.join(result.figures)})")
    y = result.figures[figure]
    if y.dtype == object or y.ndim != 1:
        raise ValueError(f"figure {figure!r} is an array figure; plot a scalar figure")
    return y


def _numeric(result, parameter):
    if parameter not in result.plan.parameters:
        raise KeyError(f"no parameter {parameter!r} in the scan (parameters: {', '.join(result.plan.parameters)})")
    x = result.parameter(parameter)
    if x.dtype == object:
        raise ValueError(f"parameter {parameter!r} takes words; it cannot be an axis")
    return x


def plot_versus_parameter(result, figure, parameter, *, log_x=False, log_y=False):
    """``figure`` versus ``parameter``: one line per combination of the other parameters.

    Failed points leave gaps. Returns the Figure (one Axes).
    """
    y = _scalar(result, figure)
    x = _numeric(result, parameter)
    others = [p for p in result.plan.parameters if p != parameter]
    groups = {}
    for i, row in enumerate(result.plan.values):
        key = tuple(v for p, v in zip(result.plan.parameters, row) if p != parameter)
        groups.setdefault(key, []).append(i)
    fig = _figure()
    ax = fig.add_subplot()
    for key, idx in groups.items():
        idx = sorted(idx, key=lambda i: x[i])
        label = ", ".join(f"{p} = {_fmt(v)}" for p, v in zip(others, key)) or None
        ax.plot(x[idx], y[idx], marker="o", ms=3, label=label)
    ax.set_xlabel(parameter)
    ax.set_ylabel(figure)
    if log_x:
        ax.set_xscale("log")
    if log_y:
        ax.set_yscale("log")
    if others and len(groups) <= 12:
        ax.legend(fontsize="small")
    return fig


def plot_heat_map(result, figure, x_parameter, y_parameter, *, log_x=False, log_y=False, cmap="viridis"):
    """``figure`` over a grid of two parameters as a heat map (cells centred on the values).

    The scan must be a grid in exactly these two parameters (no other parameter varied);
    failed points are blank. Returns the Figure (image Axes and colour bar).
    """
    z = _scalar(result, figure)
    x = _numeric(result, x_parameter)
    y = _numeric(result, y_parameter)
    extra = [p for p in result.plan.parameters if p not in (x_parameter, y_parameter)]
    if extra:
        raise ValueError(f"a heat map needs a scan of two parameters only; also varied: {', '.join(extra)}")
    xs, ys = np.unique(x), np.unique(y)
    grid = np.full((ys.size, xs.size), math.nan)
    seen = np.zeros_like(grid, dtype=bool)
    for i in range(len(result)):
        c, r = np.searchsorted(xs, x[i]), np.searchsorted(ys, y[i])
        if seen[r, c]:
            raise ValueError("the scan is not a grid (a cell is visited twice); use plot_versus_parameter")
        seen[r, c] = True
        grid[r, c] = z[i]
    fig = _figure()
    ax = fig.add_subplot()
    mesh = ax.pcolormesh(_edges(xs, log_x), _edges(ys, log_y), np.ma.masked_invalid(grid),
                         cmap=cmap, shading="flat")
    fig.colorbar(mesh, ax=ax, label=figure)
    ax.set_xlabel(x_parameter)
    ax.set_ylabel(y_parameter)
    if log_x:
        ax.set_xscale("log")
    if log_y:
        ax.set_yscale("log")
    return fig


def _edges(values, log):
    """Cell edges around sorted centres (midpoints; geometric midpoints for log axes)."""
    v = np.log(values) if log else np.asarray(values, dtype=float)
    if v.size == 1:
        e = np.array([v[0] - 0.5, v[0] + 0.5])
    else:
        mid = 0.5 * (v[1:] + v[:-1])
        e = np.concatenate([[v[0] - (mid[0] - v[0])], mid, [v[-1] + (v[-1] - mid[-1])]])
    return np.exp(e) if log else e


def plot_tornado(result, target, *, top=15):
    """Tornado chart of the normalised sensitivities of ``target``, largest |S| at the top.

    ``result`` is a :class:`plasmazero.workflows.sensitivity.SensitivityResult`. Returns the
    Figure; bars to the right raise the target.
    """
    from plasmazero.workflows.sensitivity import rank_sensitivities

    ranked = [r for r in rank_sensitivities(result, target, top=top) if not math.isnan(r[2])]
    fig = _figure((7.0, 0.8 + 0.35 * max(len(ranked), 1)))
    ax = fig.add_subplot()
    ypos = np.arange(len(ranked))[::-1]
    vals = [s for _, _, s in ranked]
    ax.barh(ypos, vals, color=["tab:red" if s > 0 else "tab:blue" for s in vals])
    ax.set_yticks(ypos, [label for _, label, _ in ranked], fontsize="small")
    ax.axvline(0.0, color="black", lw=0.8)
    ax.set_xlabel(f"d ln({target}) / d ln k")
    return fig


def plot_uncertainty(result, target, *, bins=30):
    """Histogram of the sampled ``target`` with its percentiles and the nominal value.

    ``result`` is a :class:`plasmazero.workflows.uncertainty.UncertaintyResult`; the histogram
    is over ln(target) when every sample is positive. Returns the Figure.
    """
    v = result.samples[target]
    v = v[np.isfinite(v)]
    log = v.size > 0 and np.all(v > 0)
    fig = _figure()
    ax = fig.add_subplot()
    edges = np.geomspace(v.min(), v.max(), bins + 1) if log and v.min() < v.max() else bins
    ax.hist(v, bins=edges, color="0.7")
    for q, p in zip(result.levels, result.percentiles[target]):
        ax.axvline(p, color="tab:blue", ls="--", lw=1)
        ax.annotate(f"{q:g} %", (p, 1.0), xycoords=("data", "axes fraction"), rotation=90,
                    va="top", ha="right", fontsize="small")
    if math.isfinite(result.nominal.get(target, math.nan)):
        ax.axvline(result.nominal[target], color="black", lw=1.2, label="nominal")
        ax.legend(fontsize="small")
    if log:
        ax.set_xscale("log")
    ax.set_xlabel(target)
    ax.set_ylabel("samples")
    return fig


def _fmt(v):
    return f"{v:.4g}" if isinstance(v, float) else str(v)
