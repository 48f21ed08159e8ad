"""Reduced-field profiles E/N(t): piecewise linear in time, cut into restart segments.

A profile is given by its breakpoints (times_s, E_N_Td) and is linear between them,
constant before the first and after the last. A time given twice is a jump (the first
value is the left limit, the second the right limit). The integrator restarts at every
breakpoint inside the run, so each integration segment sees an E/N that is exactly linear
in time, and a jump is followed exactly (no step straddles it).

Prescribed electron density
---------------------------
:class:`ElectronDensityProfile` (times_s, n_e_m3) is built the same way, with one
difference: a NaN value means "free". An interval between two consecutive times whose
values are both finite is *prescribed* (there n_e is linear in time and the integrator
imposes it); every other interval, and everything before the first and after the last
time, is free (the electrons follow the kinetics). This is how the discharge layer
imposes the electron density that the deposited power requires (P = e n_e w E, w the
drift velocity) while the kinetics keeps the other species.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class FieldProfile:
    """Reduced field versus time, piecewise linear (a record).

    Attributes
    ----------
    times_s : ndarray (n,)
        Non-decreasing times, s; a time given twice is a jump (left value, right value).
    E_N_Td : ndarray (n,)
        Reduced field at those times, Td, >= 0. Constant before the first and after the
        last time.
    """

    times_s: np.ndarray
    E_N_Td: np.ndarray

    def __post_init__(self):
        t = np.atleast_1d(np.asarray(self.times_s, dtype=np.float64))
        e = np.atleast_1d(np.asarray(self.E_N_Td, dtype=np.float64))
        if t.ndim != 1 or t.shape != e.shape or t.size == 0:
            raise ValueError("field: times_s and E_N_Td must be 1-D arrays of the same non-zero length")
        if not (np.all(np.isfinite(t)) and np.all(np.isfinite(e))):
            raise ValueError("field: times_s and E_N_Td must be finite")
        if np.any(e < 0.0):
            raise ValueError("field: E_N_Td must be >= 0 (the magnitude of the reduced field)")
        d = np.diff(t)
        if np.any(d < 0.0):
            raise ValueError("field: times_s must be non-decreasing")
        if np.any((d[:-1] == 0.0) & (d[1:] == 0.0)):
            raise ValueError("field: a time may appear at most twice (a jump)")
        object.__setattr__(self, "times_s", t)
        object.__setattr__(self, "E_N_Td", e)

    def at(self, t_s):
        """E/N (Td) at ``t_s``; the right limit at a jump."""
        t = self.times_s
        i = np.searchsorted(t, t_s, side="right") - 1
        if i < 0:
            return float(self.E_N_Td[0])
        if i >= t.size - 1:
            return float(self.E_N_Td[-1])
        w = (t_s - t[i]) / (t[i + 1] - t[i])
        return float(self.E_N_Td[i] + w * (self.E_N_Td[i + 1] - self.E_N_Td[i]))


def as_field(field):
    """A :class:`FieldProfile` from a profile, a (times_s, E_N_Td) pair, a constant or None (0 Td)."""
    if field is None:
        return FieldProfile(np.zeros(1), np.zeros(1))
    if isinstance(field, FieldProfile):
        return field
    if np.ndim(field) == 0:
        return FieldProfile(np.zeros(1), np.full(1, float(field)))
    if hasattr(field, "times_s") and hasattr(field, "E_N_Td"):
        return FieldProfile(field.times_s, field.E_N_Td)
    times, values = field
    return FieldProfile(times, values)


def segments(field, t0, t1, breakpoints):
    """Cut [t0, t1] at the field's times and the breakpoints.

    Returns
    -------
    (stops, E0, slope)
        ``stops`` (n + 1,) increasing times, s; per segment k the field at its start
        ``E0[k]`` (Td, the right limit at a jump) and its slope ``slope[k]`` (Td/s), so
        that E/N(t) = E0[k] + slope[k] (t - stops[k]) on [stops[k], stops[k + 1]].
    """
    inner = [float(b) for b in np.atleast_1d(np.asarray(breakpoints, dtype=float)) if t0 < b < t1]
    inner += [float(b) for b in field.times_s if t0 < b < t1]
    stops = np.unique(np.array([t0, t1] + inner, dtype=np.float64))
    n = stops.size - 1
    E0 = np.empty(n)
    slope = np.empty(n)
    t, e = field.times_s, field.E_N_Td
    for k in range(n):
        a, b = stops[k], stops[k + 1]
        mid = 0.5 * (a + b)
        i = int(np.searchsorted(t, mid, side="right")) - 1
        if i < 0:
            E0[k], slope[k] = e[0], 0.0
        elif i >= t.size - 1:
            E0[k], slope[k] = e[-1], 0.0
        else:
            s = (e[i + 1] - e[i]) / (t[i + 1] - t[i])
            E0[k], slope[k] = e[i] + s * (a - t[i]), s
    return stops, E0, slope


@dataclass(frozen=True)
class ElectronDensityProfile:
    """Prescribed electron density versus time, piecewise linear; NaN = free (a record).

    Attributes
    ----------
    times_s : ndarray (n,)
        Non-decreasing times, s; a time given twice is a jump.
    n_e_m3 : ndarray (n,)
        Electron density at those times, m^-3 (>= 0), or NaN. An interval whose two end
        values are finite is prescribed; other intervals, and the time before the first
        and after the last entry, are free (module docstring).
    """

    times_s: np.ndarray
    n_e_m3: np.ndarray

    def __post_init__(self):
        t = np.atleast_1d(np.asarray(self.times_s, dtype=np.float64))
        v = np.atleast_1d(np.asarray(self.n_e_m3, dtype=np.float64))
        if t.ndim != 1 or t.shape != v.shape or t.size == 0:
            raise ValueError("electron density profile: times_s and n_e_m3 must be 1-D arrays "
                             "of the same non-zero length")
        if not np.all(np.isfinite(t)):
            raise ValueError("electron density profile: times_s must be finite")
        if np.any(np.isinf(v)) or np.any(v[np.isfinite(v)] < 0.0):
            raise ValueError("electron density profile: n_e_m3 must be >= 0 or NaN (free)")
        d = np.diff(t)
        if np.any(d < 0.0):
            raise ValueError("electron density profile: times_s must be non-decreasing")
        if np.any((d[:-1] == 0.0) & (d[1:] == 0.0)):
            raise ValueError("electron density profile: a time may appear at most twice (a jump)")
        object.__setattr__(self, "times_s", t)
        object.__setattr__(self, "n_e_m3", v)

    def at(self, t_s):
        """Prescribed n_e (m^-3) at ``t_s`` (the right limit at a jump); NaN where free."""
        t = self.times_s
        i = int(np.searchsorted(t, t_s, side="right")) - 1
        if i < 0 or i >= t.size - 1:
            return float("nan")
        a, b = self.n_e_m3[i], self.n_e_m3[i + 1]
        w = (t_s - t[i]) / (t[i + 1] - t[i])
        return float(a + w * (b - a))


def as_density_profile(profile):
    """An :class:`ElectronDensityProfile` from a profile, a (times_s, n_e_m3) pair or None."""
    if profile is None or isinstance(profile, ElectronDensityProfile):
        return profile
    if hasattr(profile, "times_s") and hasattr(profile, "n_e_m3"):
        return ElectronDensityProfile(profile.times_s, profile.n_e_m3)
    times, values = profile
    return ElectronDensityProfile(times, values)


def density_segments(profile, stops):
    """Per integration segment: [prescribed (1/0), n_e at its start (m^-3), slope (m^-3/s)].

    ``stops`` must contain the profile's times inside the run (they are restart times),
    so that each segment lies within one interval of the profile.

    Returns
    -------
    ndarray float64 (len(stops) - 1, 3)
    """
    n = stops.size - 1
    out = np.zeros((n, 3))
    if profile is None:
        return out
    t, v = profile.times_s, profile.n_e_m3
    for k in range(n):
        a, b = stops[k], stops[k + 1]
        i = int(np.searchsorted(t, 0.5 * (a + b), side="right")) - 1
        if i < 0 or i >= t.size - 1 or not (np.isfinite(v[i]) and np.isfinite(v[i + 1])):
            continue
        s = (v[i + 1] - v[i]) / (t[i + 1] - t[i])
        out[k] = (1.0, max(v[i] + s * (a - t[i]), 0.0), s)
    return out


def node_crossings(stops, E0, slope, grid_Td):
    """Times at which a linear field segment crosses a node of the electron table, s.

    The electron coefficients are interpolated linearly between the table's nodes
    (:mod:`plasmazero.numerics.electrons`), so they are continuous in E/N but their
    derivative jumps at every node. A step that straddles such a kink sees an error an
    order lower than the method's, and the controller answers with step sizes collapsing
    by orders of magnitude and rebuilding over several steps (measured on the shipped
    CO2/H2 mechanism: about ten extra steps per node crossed in a field ramp). For a field
    linear in time the crossing times are known beforehand, so the integrator lands on
    them (as on any breakpoint) but keeps its step size across (the solution itself is
    smooth there). Stopping at known derivative discontinuities: Hairer, Norsett &
    Wanner (1993), Solving Ordinary Differential Equations I, section II.6 ("a
    discontinuity ... the integration should be stopped there and restarted"; recalled
    from memory).

    Parameters
    ----------
    stops, E0, slope : ndarray
        Segments from :func:`segments`.
    grid_Td : ndarray
        The table's E/N nodes, Td (the zero row included; E/N = 0 is also the kink of the
        clipped field).

    Returns
    -------
    ndarray
        Sorted crossing times strictly inside the segments (ends excluded), s.
    """
    grid = np.unique(np.r_[np.asarray(grid_Td, dtype=np.float64), 0.0])
    out = []
    for k in range(stops.size - 1):
        s = slope[k]
        if s == 0.0:
            continue
        a, b = stops[k], stops[k + 1]
        ea, eb = E0[k], E0[k] + s * (b - a)
        lo, hi = min(ea, eb), max(ea, eb)
        # nodes strictly inside (a relative margin keeps nodes at a segment end out)
        margin = 1e-9 * max(abs(lo), abs(hi), 1e-30)
        inside = grid[(grid > lo + margin) & (grid < hi - margin)]
        for g in inside:
            t = a + (g - ea) / s
            if a < t < b:
                out.append(t)
    return np.array(sorted(out), dtype=np.float64)
