"""Reduced-field profiles E/N(t): piecewise linear in time, cut into restart segments.

A profile is given by its breakpoints (times_s, E_N_Td) and is linear between them,
constant before the first and after the last. A time given twice is a jump (the first
value is the left limit, the second the right limit). The integrator restarts at every
breakpoint inside the run, so each integration segment sees an E/N that is exactly linear
in time, and a jump is followed exactly (no step straddles it).
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
