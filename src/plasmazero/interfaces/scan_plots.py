"""Figures of scans, sensitivities and uncertainties (matplotlib, the ``plot`` extra).

Every function returns a :class:`matplotlib.figure.Figure` made without pyplot (no
window, no global state); save it with ``fig.savefig(path)``. Axis labels are the
parameter and figure names followed by their unit in parentheses, read from the unit
suffix of the name (``power.absorbed_W (W)``, ``sei_kJ_L (kJ/L)``); ``(-)`` marks a
dimensionless quantity (conversions, selectivities, mole fractions, efficiencies).

:func:`write_scan_plots` picks the figures of a whole scan: the main figures of merit
(conversion of each reactant, energy efficiency, the leading product species of the bed
feed) versus one varied parameter as lines, over a grid of two as heat maps, and over a
Latin hypercube as scatter plots coloured by the figure.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from plasmazero.data.errors import InputError, format_problem

#: a figure spanning at least this ratio (max / min, all positive) gets a log scale
LOG_SPAN = 100.0
#: a heat map writes its values into the cells up to this many cells
ANNOTATE_CELLS = 60
#: product species of the bed feed shown by write_scan_plots, at most
BED_SPECIES = 4
#: a bed-feed species is shown when its mole fraction reaches this somewhere in the scan
BED_MIN_MOLE_FRACTION = 1e-6

#: unit suffixes of names (longest first) -> unit as printed on an axis
_UNITS = (
    ("eV_per_molecule", "eV/molecule"), ("J_per_molecule", "J/molecule"),
    ("kJ_L", "kJ/L"), ("J_L", "J/L"), ("J_m3", "J/m³"), ("W_m3", "W/m³"),
    ("m3_s", "m³/s"), ("m2_s", "m²/s"), ("m_s", "m/s"), ("m2_V_s", "m²/(V s)"),
    ("m3", "m³"), ("m2", "m²"), ("cm", "cm"), ("mm", "mm"), ("m", "m"),
    ("ms", "ms"), ("us", "µs"), ("ns", "ns"), ("s", "s"), ("Hz", "Hz"), ("kHz", "kHz"),
    ("kW", "kW"), ("W", "W"), ("kV", "kV"), ("V", "V"), ("F", "F"), ("A", "A"),
    ("K", "K"), ("Pa", "Pa"), ("bar", "bar"), ("Td", "Td"), ("eV", "eV"), ("J", "J"),
    ("sccm", "sccm"), ("slm", "slm"), ("kg", "kg"), ("amu", "amu"), ("mol", "mol"),
)
#: dimensionless figures of the discharge point function -> label
_DIMENSIONLESS = {"energy_efficiency": "energy efficiency", "element_balance_error": "element balance error"}


def _figure(figsize=(6.0, 4.0)):
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ImportError("plotting needs matplotlib: pip install 'plasmazero[plot]'") from None
    return Figure(figsize=figsize, layout="constrained")


def require_matplotlib(option="--plots"):
    """Raise a one-line :class:`InputError` when matplotlib cannot be imported.

    ``option`` names the command-line option that asked for plots.
    """
    try:
        import matplotlib  # noqa: F401
        from matplotlib.figure import Figure  # noqa: F401
    except ImportError:
        raise InputError([format_problem(None, option, "plots need matplotlib, which is not installed: "
                                         "pip install 'plasmazero[plot]'")]) from None


# ---------------------------------------------------------------- labels
def unit_of(name):
    """Unit of a parameter or figure name read from its suffix (``"W"``, ``"kJ/L"``), or ``"-"``.

    ``"-"`` means dimensionless: names without a unit suffix (conversions, selectivities,
    mole fractions, efficiencies, porosity, counts). Units in names are this project's
    convention (DEVELOPERS.md).
    """
    last = name.rsplit(".", 1)[-1]
    if _species_label(name) is not None or name in _DIMENSIONLESS:
        return "-"
    last = re.sub(r"\[\d+\]$", "", last)
    for suffix, unit in _UNITS:
        if last.endswith("_" + suffix) and len(last) > len(suffix) + 1:
            return unit
    return "-"


def _species_label(name):
    """Label of a per-species figure or parameter, or None."""
    for prefix, fmt in (("conversion_", "conversion of {}"), ("bed_mole_fraction_", "{} mole fraction, bed feed"),
                        ("feed.mole_fractions.", "{} mole fraction, feed")):
        if name.startswith(prefix) and len(name) > len(prefix):
            return fmt.format(name[len(prefix):])
    m = re.match(r"^selectivity_([A-Z][a-z]?)_(.+)$", name)
    if m:
        return f"{m.group(1)} selectivity to {m.group(2)}"
    return None


def axis_label(name):
    """Axis label of a parameter or figure: ``"power.absorbed_W (W)"``, ``"conversion of CO2 (-)"``."""
    text = _species_label(name) or _DIMENSIONLESS.get(name) or name
    return f"{text} ({unit_of(name)})"


def _value_text(name, value):
    """``"power.absorbed_W = 10 W"`` for legends."""
    unit = unit_of(name)
    v = _fmt(value)
    return f"{name} = {v}" if unit == "-" else f"{name} = {v} {unit}"


# ---------------------------------------------------------------- data access
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


def spans_decades(values, ratio=LOG_SPAN):
    """Whether the finite values are all positive and max/min >= ``ratio`` (a log scale fits)."""
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    return bool(v.size >= 2 and np.all(v > 0) and v.max() / v.min() >= ratio)


def log_parameter(result, parameter):
    """Whether ``parameter`` is best drawn on a log axis: a ``log:`` variation, or values
    spanning three decades or more."""
    for text in result.plan.variations:
        path, _, spec = text.partition("=")
        if path.strip() == parameter and spec.strip().startswith("log:"):
            return True
    x = result.parameter(parameter)
    return x.dtype != object and spans_decades(x, 1000.0)


def varied_parameters(result):
    """The parameters that take more than one value in the scan, in plan order."""
    out = []
    for c, name in enumerate(result.plan.parameters):
        if len({repr(row[c]) for row in result.plan.values}) > 1:
            out.append(name)
    return out


def _finite(result, figure):
    y = result.figures.get(figure)
    return y is not None and y.dtype != object and y.ndim == 1 and bool(np.any(np.isfinite(y)))


def main_figures(result, n_species=BED_SPECIES, species=None):
    """The main figures of merit of a scan: (conversions, efficiencies, bed-feed species).

    Conversions of every reactant (``conversion_<species>``), ``energy_efficiency``, and
    the bed-feed mole fractions of ``species`` (names), by default the ``n_species``
    product species with the largest bed-feed mole fraction anywhere in the scan, among
    those reaching ``BED_MIN_MOLE_FRACTION`` (reactants, electrons, ions, and, where the
    scan names them by their selectivities, excited states left out; the largest one
    when none reaches it). Figures with no finite value are left out. A scan of another point function (no such figures) gives all its scalar figures as
    the second item.
    """
    figs = result.figures
    conv = [n for n in figs if n.startswith("conversion_") and _finite(result, n)]
    reactants = {n[len("conversion_"):] for n in figs if n.startswith("conversion_")}
    eff = [n for n in ("energy_efficiency",) if _finite(result, n)]
    # the point function gives selectivities of parent species only (not of excited states):
    # where it does, the bed-feed species shown are among those
    parents = {m.group(1) for n in figs for m in [re.match(r"^selectivity_[A-Z][a-z]?_(.+)$", n)] if m}
    ranked = []
    for n in figs:
        if n.startswith("bed_mole_fraction_") and _finite(result, n):
            sp = n[len("bed_mole_fraction_"):]
            charged = sp.endswith(("+", "-"))
            if sp not in reactants and sp != "e" and not charged and (not parents or sp in parents):
                peak = float(np.nanmax(figs[n]))
                if peak > 0:
                    ranked.append((-peak, n))
    ranked.sort()
    bed = [n for peak, n in ranked[:n_species] if -peak >= BED_MIN_MOLE_FRACTION] or [n for _, n in ranked[:1]]
    if species is not None:
        bed = [f"bed_mole_fraction_{s}" for s in species if _finite(result, f"bed_mole_fraction_{s}")]
    if not (conv or eff or bed):
        eff = [n for n, v in figs.items() if _finite(result, n) and n not in ("point_index",)]
    return conv, eff, bed


# ---------------------------------------------------------------- figures
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
    shown = [p for p in others if p in varied_parameters(result)]
    fig = _figure()
    ax = fig.add_subplot()
    for key, idx in groups.items():
        if not np.any(np.isfinite(y[idx])):
            continue                      # every point of the line failed: no empty legend entry
        idx = sorted(idx, key=lambda i: x[i])
        label = ", ".join(_value_text(p, v) for p, v in zip(others, key) if p in shown) or None
        ax.plot(x[idx], y[idx], marker="o", ms=3, label=label)
    ax.set_xlabel(axis_label(parameter))
    ax.set_ylabel(axis_label(figure))
    if log_x:
        _log_axis(ax.xaxis, x)
    if log_y:
        _log_axis(ax.yaxis, y)
    if shown and len(groups) <= 12:
        ax.legend(fontsize="small")
    ax.grid(True, which="major", alpha=0.3)
    return fig


def plot_figures_versus_parameter(result, figures, parameter, *, log_x=False, log_y=None, ylabel=None):
    """Several figures of one unit versus the only varied ``parameter``, one line each.

    ``log_y=None`` picks a log axis when the figures together span two decades or more.
    Failed points leave gaps. Returns the Figure (one Axes).
    """
    x = _numeric(result, parameter)
    ys = {f: _scalar(result, f) for f in figures}
    order = np.argsort(x, kind="stable")
    if log_y is None:
        log_y = spans_decades(np.concatenate([y for y in ys.values()]))
    fig = _figure()
    ax = fig.add_subplot()
    for f, y in ys.items():
        ax.plot(x[order], y[order], marker="o", ms=3, label=_short_name(f))
    ax.set_xlabel(axis_label(parameter))
    if ylabel is None:
        ylabel = axis_label(figures[0]) if len(figures) == 1 else f"({unit_of(figures[0])})"
    ax.set_ylabel(ylabel)
    if log_x:
        _log_axis(ax.xaxis, x)
    if log_y:
        _log_axis(ax.yaxis, np.concatenate([y for y in ys.values()]))
    if len(figures) > 1:
        ax.legend(fontsize="small")
    ax.grid(True, which="major", alpha=0.3)
    return fig


def plot_heat_map(result, figure, x_parameter, y_parameter, *, log_x=False, log_y=False, log_z=False,
                  cmap="viridis"):
    """``figure`` over a grid of two parameters as a heat map (cells centred on the values).

    The scan must be a grid in these two parameters (no other parameter taking more than
    one value); failed points are blank. The cells carry their values when there are few
    (``ANNOTATE_CELLS``); ``log_z`` colours by the logarithm. Returns the Figure (image
    Axes and colour bar).
    """
    from matplotlib.colors import LogNorm

    z = _scalar(result, figure)
    x = _numeric(result, x_parameter)
    y = _numeric(result, y_parameter)
    extra = [p for p in varied_parameters(result) if p not in (x_parameter, y_parameter)]
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
    masked = np.ma.masked_invalid(grid)
    norm = None
    if log_z and masked.count() and float(masked.min()) > 0:
        norm = LogNorm(vmin=float(masked.min()), vmax=float(masked.max()))
    mesh = ax.pcolormesh(_edges(xs, log_x), _edges(ys, log_y), masked, cmap=cmap, shading="flat", norm=norm)
    fig.colorbar(mesh, ax=ax, label=axis_label(figure))
    ax.set_xlabel(axis_label(x_parameter))
    ax.set_ylabel(axis_label(y_parameter))
    if log_x:
        ax.set_xscale("log")
    if log_y:
        ax.set_yscale("log")
    _value_ticks(ax.xaxis, xs)
    _value_ticks(ax.yaxis, ys)
    if grid.size <= ANNOTATE_CELLS:
        for r in range(ys.size):
            for c in range(xs.size):
                if np.isfinite(grid[r, c]):
                    rgba = mesh.cmap(mesh.norm(grid[r, c]))
                    light = 0.299 * rgba[0] + 0.587 * rgba[1] + 0.114 * rgba[2] > 0.5
                    ax.text(xs[c], ys[r], f"{grid[r, c]:.3g}", ha="center", va="center", fontsize="small",
                            color="black" if light else "white")
                elif seen[r, c]:
                    ax.text(xs[c], ys[r], "no value", ha="center", va="center", fontsize="small", color="0.4")
    return fig


def plot_scatter(result, figure, pairs, *, log_axes=(), log_z=None, cmap="viridis"):
    """Points of a scan (a Latin hypercube) in the planes of parameter pairs, coloured by ``figure``.

    ``pairs`` is a list of (x parameter, y parameter), one panel each, sharing one colour
    bar; ``log_axes`` names the parameters drawn on log axes; ``log_z=None`` colours by
    the logarithm when the figure spans two decades. Failed points are grey crosses.
    Returns the Figure.
    """
    from matplotlib.colors import LogNorm, Normalize

    z = _scalar(result, figure)
    good = np.isfinite(z)
    if log_z is None:
        log_z = spans_decades(z)
    zv = z[good]
    if zv.size and log_z and zv.min() > 0:
        norm = LogNorm(vmin=zv.min(), vmax=zv.max())
    else:
        norm = Normalize(vmin=zv.min(), vmax=zv.max()) if zv.size else None
    fig = _figure((4.2 * len(pairs) + 1.2, 4.0))
    axes = fig.subplots(1, len(pairs), squeeze=False)[0]
    sc = None
    for ax, (px, py) in zip(axes, pairs):
        x, y = _numeric(result, px), _numeric(result, py)
        sc = ax.scatter(x[good], y[good], c=zv, cmap=cmap, norm=norm, s=28, edgecolors="0.2", linewidths=0.4)
        if np.any(~good):
            ax.scatter(x[~good], y[~good], marker="x", color="0.5", s=24, label="failed")
            ax.legend(fontsize="small")
        ax.set_xlabel(axis_label(px))
        ax.set_ylabel(axis_label(py))
        if px in log_axes:
            _log_axis(ax.xaxis, x)
        if py in log_axes:
            _log_axis(ax.yaxis, y)
        for name, setter, log in ((px, ax.set_xlim, px in log_axes), (py, ax.set_ylim, py in log_axes)):
            bounds = _sampled_range(result, name)
            if bounds is not None:                     # show the whole sampled range
                lo, hi = (np.log(bounds) if log else np.asarray(bounds))
                pad = 0.04 * (hi - lo)
                lo, hi = lo - pad, hi + pad
                setter(*(np.exp([lo, hi]) if log else (lo, hi)))
    fig.colorbar(sc, ax=list(axes), label=axis_label(figure))
    return fig


def _short_name(figure):
    """Legend entry of a figure among others of its kind: the species, or the label."""
    for prefix in ("conversion_", "bed_mole_fraction_"):
        if figure.startswith(prefix):
            return figure[len(prefix):]
    return _species_label(figure) or _DIMENSIONLESS.get(figure) or figure


def _log_axis(axis, values):
    """Log scale on ``axis``; over up to three decades, ticks at 1, 2, 5 x 10^k written as
    plain numbers (the default labels of minor ticks overlap on short log axes)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    if axis.axis_name == "x":
        axis.axes.set_xscale("log")
    else:
        axis.axes.set_yscale("log")
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v) & (v > 0)]
    if v.size and v.max() / v.min() <= 1e3:
        subs = (1.0, 2.0, 3.0, 5.0) if v.max() / v.min() <= 30.0 else (1.0, 2.0, 5.0)
        axis.set_major_locator(LogLocator(base=10.0, subs=subs))
        axis.set_major_formatter(FuncFormatter(lambda t, _: f"{t:g}"))
        axis.set_minor_formatter(NullFormatter())


def _sampled_range(result, parameter):
    """(low, high) that a Latin hypercube sampled ``parameter`` from, or None."""
    from plasmazero.workflows.sampling import parse_variation

    for text in result.plan.variations:
        if text.partition("=")[0].strip() == parameter:
            try:
                v = parse_variation(text)
            except InputError:
                return None
            if math.isfinite(v.low) and math.isfinite(v.high) and v.high > v.low:
                return float(v.low), float(v.high)
    return None


def _value_ticks(axis, values, most=10):
    """Ticks at the parameter values of a heat map's cells (when there are few)."""
    from matplotlib.ticker import FixedLocator, NullLocator

    if len(values) <= most:
        axis.set_major_locator(FixedLocator(values))
        axis.set_minor_locator(NullLocator())
        axis.set_ticklabels([_fmt(float(v)) for v in values])


def _edges(values, log):
    """Cell edges around sorted centres (midpoints; geometric midpoints for log axes)."""
    v = np.log(values) if log else np.asarray(values, dtype=float)
    if v.size == 1:
        e = np.array([v[0] - 0.5, v[0] + 0.5])
    else:
        mid = 0.5 * (v[1:] + v[:-1])
        e = np.concatenate([[v[0] - (mid[0] - v[0])], mid, [v[-1] + (v[-1] - mid[-1])]])
    return np.exp(e) if log else e


# ---------------------------------------------------------------- a whole scan
def scan_figures(result, n_species=BED_SPECIES, species=None):
    """The figures of a whole scan: file stem -> Figure (see the module docstring).

    One varied parameter: ``conversion`` (all reactants), ``energy_efficiency`` and
    ``bed_feed`` (the leading product species) as lines. A grid of two numeric
    parameters: a heat map per figure of merit. A Latin hypercube of two or more: a
    scatter per figure of merit in the planes of the first parameter pairs. Anything else
    (three or more grid parameters, word parameters): lines of each figure versus the
    numeric parameter with the most values, one line per combination of the others.

    Raises
    ------
    ValueError
        No point has succeeded, or no numeric parameter is varied.
    """
    if not np.any(result.ok):
        raise ValueError("no point of the scan has succeeded yet: nothing to plot")
    varied = varied_parameters(result)
    numeric = [p for p in varied if result.parameter(p).dtype != object]
    if not numeric:
        raise ValueError("the scan varies no numeric parameter: nothing to plot against")
    conv, eff, bed = main_figures(result, n_species, species)
    logs = {p: log_parameter(result, p) for p in numeric}
    out = {}
    if len(varied) == 1:
        p = numeric[0]
        if conv:
            out["conversion"] = plot_figures_versus_parameter(result, conv, p, log_x=logs[p],
                                                              ylabel="conversion (-)" if len(conv) > 1 else None)
        for f in eff:
            out[f] = plot_figures_versus_parameter(result, [f], p, log_x=logs[p])
        if bed:
            out["bed_feed"] = plot_figures_versus_parameter(result, bed, p, log_x=logs[p],
                                                            ylabel="mole fraction, bed feed (-)")
        return out
    every = conv + eff + bed
    if not result.plan.design.startswith("latin") and len(varied) == 2 and len(numeric) == 2:
        px, py = numeric
        for f in every:
            out[f] = plot_heat_map(result, f, px, py, log_x=logs[px], log_y=logs[py],
                                   log_z=spans_decades(result.figures[f]))
        return out
    if result.plan.design.startswith("latin") and len(numeric) >= 2:
        pairs = [(a, b) for k, a in enumerate(numeric) for b in numeric[k + 1:]][:3]
        for f in every:
            out[f] = plot_scatter(result, f, pairs, log_axes=[p for p in numeric if logs[p]])
        return out
    p = max(numeric, key=lambda q: len(np.unique(result.parameter(q))))
    for f in every:
        out[f] = plot_versus_parameter(result, f, p, log_x=logs[p], log_y=spans_decades(result.figures[f]))
    return out


def write_scan_plots(result, folder, *, n_species=BED_SPECIES, species=None, dpi=110):
    """Write :func:`scan_figures` of ``result`` as ``<folder>/<stem>.png``; returns the paths.

    Each PNG is written to a temporary name and renamed.
    """
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for stem, fig in scan_figures(result, n_species, species).items():
        stem = re.sub(r"[^A-Za-z0-9_.+-]", "_", stem)      # CO2(v1) -> CO2_v1_
        path = out / f"{stem}.png"
        tmp = out / f".{stem}.png.tmp"
        fig.savefig(tmp, dpi=dpi, format="png")
        tmp.replace(path)
        paths.append(path)
    return paths


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
    """Short text of a value: 4 significant digits, without an exponent between 1e-3 and 1e6."""
    if not isinstance(v, float):
        return str(v)
    text = f"{v:.4g}"
    if "e" in text and 1e-3 <= abs(v) < 1e6:
        text = f"{v:.6g}"
    return text
