"""Figures of a discharge result (matplotlib, the ``plot`` extra), built without pyplot.

Each function takes the dict of :func:`plasmazero.interfaces.result_file.read_result`
and returns a :class:`matplotlib.figure.Figure`.
"""

from __future__ import annotations

import numpy as np


def _figure(width=8.0, height=4.8):
    try:
        from matplotlib.figure import Figure
    except ImportError as exc:  # pragma: no cover - depends on the install
        raise RuntimeError("plots need matplotlib: pip install 'plasmazero[plot]'") from exc
    return Figure(figsize=(width, height), layout="constrained")


def _time_axis(data):
    t = data["time_s"]
    return np.maximum(t, t[t > 0].min() if np.any(t > 0) else 1e-12)


def densities(data, top=12):
    """Mole fractions of the main species: the whole run (linear time) and the last filament
    with its afterglow (log time since the filament began)."""
    fig = _figure(11.0, 4.8)
    ax, ax2 = fig.subplots(1, 2)
    t = data["time_s"]
    x = data["densities_m3"] / data["densities_m3"].sum(axis=1, keepdims=True)
    names = data["species"]
    order = [i for i in np.argsort(-x.max(axis=0)) if names[i] != "e"][:top]
    on = data["in_pulse"].astype(bool)
    starts = np.flatnonzero(on[1:] & ~on[:-1]) + 1
    last = int(starts[-1]) if starts.size else 0
    zone0 = data["zone"] == 0
    stop = int(np.flatnonzero(zone0)[-1]) + 1
    dt = t[last:stop] - t[last]
    floor = 1e-14
    for i in order:
        ax.plot(t * 1e3, np.maximum(x[:, i], floor), lw=1.0, label=names[i])
        ax2.plot(np.maximum(dt, 1e-12), np.maximum(x[last:stop, i], floor), lw=1.2)
    ax.set_yscale("log")
    ax.set_ylim(floor, 2.0)
    ax.set_xlabel("time along the reactor (ms)")
    ax.set_ylabel("mole fraction")
    ax.set_title("whole residence time (spikes: filaments)", fontsize=10)
    ax.legend(ncol=2, fontsize=7, loc="lower right")
    ax2.set_xscale("log")
    ax2.set_yscale("log")
    ax2.set_ylim(floor, 2.0)
    if starts.size:
        pulse_len = t[last:stop][~on[last:stop]][0] - t[last] if np.any(~on[last:stop]) else dt[-1]
        ax2.axvspan(1e-12, max(pulse_len, 1e-12), color="0.88", lw=0)
    ax2.set_xlabel("time since the last filament began (s)")
    ax2.set_title("last filament (grey) and its afterglow", fontsize=10)
    return fig


def _shade_pulses(ax, data):
    t = data["time_s"]
    on = data["in_pulse"].astype(bool)
    edges = np.flatnonzero(np.diff(on.astype(int)))
    start = None
    if on[0]:
        start = t[0]
    for k in edges:
        if on[k + 1]:
            start = t[k + 1]
        elif start is not None:
            ax.axvspan(start, t[k], color="0.85", lw=0)
            start = None


def electrons(data):
    """Electron density and E/N through the last filament and its afterglow (log time)."""
    fig = _figure()
    ax = fig.add_subplot()
    t = data["time_s"]
    on = data["in_pulse"].astype(bool)
    starts = np.flatnonzero(on[1:] & ~on[:-1]) + 1
    last = int(starts[-1]) if starts.size else 0
    stop = int(np.flatnonzero(data["zone"] == 0)[-1]) + 1
    dt = np.maximum(t[last:stop] - t[last], 1e-12)
    ax.plot(dt, np.maximum(data["electron_density_m3"][last:stop], 1e6), color="C0", lw=1.2)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("time since the last filament began (s)")
    ax.set_ylabel("electron density (m$^{-3}$)", color="C0")
    ax2 = ax.twinx()
    ax2.plot(dt, data["E_N_Td"][last:stop], color="C3", lw=1.0)
    ax2.set_ylabel("E/N (Td)", color="C3")
    ax.set_title("electrons in the last filament: prescribed by the power, then free in the afterglow",
                 fontsize=10)
    return fig


def gas_temperature(data):
    """Gas temperature along the reactor (energy equation), with the filaments shaded; None
    when the temperature is fixed (nothing to look at)."""
    T = np.asarray(data["gas_temperature_K"], dtype=float)
    if T.size == 0 or np.ptp(T) <= 1e-9 * T.max():
        return None
    fig = _figure(8.0, 4.0)
    ax = fig.add_subplot()
    t = data["time_s"]
    ax.plot(t * 1e3, T, color="C3", lw=1.0)
    ax.set_xlabel("time along the reactor (ms)")
    ax.set_ylabel("gas temperature (K)")
    ax.set_title("gas temperature (energy equation): each spike is a filament", fontsize=10)
    return fig


def eedfs(data):
    """EEDFs at the pulse field and in the afterglow (eV^-3/2, log scale)."""
    fig = _figure()
    ax = fig.add_subplot()
    for label, en, energy, f in data["eedf"]:
        ok = f > 0
        ax.plot(energy[ok], f[ok], label=f"{label}, {en:.4g} Td")
    ax.set_yscale("log")
    ax.set_xlim(0, None)
    ax.set_xlabel("electron energy (eV)")
    ax.set_ylabel("EEDF (eV$^{-3/2}$)")
    ax.set_title("electron energy distribution functions")
    ax.legend(fontsize=8)
    return fig


def pathway_bars(pathways):
    """Horizontal bars of production (positive) and consumption (negative) percentages."""
    fig = _figure(8.0, 0.9 + 0.32 * (len(pathways["production"]) + len(pathways["consumption"])))
    ax = fig.add_subplot()
    rows = [(r["reaction"], r["percent"]) for r in pathways["production"]] + \
           [(r["reaction"], -r["percent"]) for r in pathways["consumption"]]
    y = np.arange(len(rows))[::-1]
    ax.barh(y, [v for _, v in rows], color=["C2" if v > 0 else "C3" for _, v in rows])
    ax.set_yticks(y, [name for name, _ in rows], fontsize=7)
    ax.axvline(0, color="k", lw=0.8)
    ax.set_xlabel("share of production (+) and consumption (-) (%)")
    ax.set_title(f"pathways of {pathways['species']} ({pathways['zone']} zone)")
    return fig


def bed_feed_bars(data, top=15):
    """Bar chart of the bed-feed mole fractions (log scale)."""
    rows = [r for r in data["bed_feed"]["rows"] if r["mole_fraction"] > 0][:top]
    fig = _figure()
    ax = fig.add_subplot()
    ax.bar(range(len(rows)), [r["mole_fraction"] for r in rows], color="C0")
    ax.set_xticks(range(len(rows)), [r["species"] for r in rows], rotation=60, fontsize=8)
    ax.set_yscale("log")
    ax.set_ylabel("mole fraction")
    ax.set_title("bed feed: " + data["bed_feed"]["where"], fontsize=9)
    return fig
