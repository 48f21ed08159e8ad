"""Energy grid of the Boltzmann solver and exact integrals of tabulated cross sections.

The grid is uniform in energy: ``n`` cells of width ``du`` between 0 and ``max_energy_eV``;
the EEDF is one value per cell (finite volumes, as in the numerical method of Hagelaar and Pitchford 2005).
The upper bound is adapted per E/N by the solver (see :mod:`.solver`); to let several E/N
points share the E/N-independent parts of the operator, automatic upper bounds are taken
from the ladder ``2**(k/4)`` eV (:func:`ladder_energy`).

Cross sections are piecewise linear in energy (plasmazero's cross-section files), so the
integral of ``u sigma(u)`` over a cell has a closed form (a cubic per segment); the
cumulative integral is tabulated once per process (:func:`integral_table`) and the cell
integrals of any grid are differences of it (:func:`integrate_u_sigma`).

References
----------
G. J. M. Hagelaar and L. C. Pitchford, "Solving the Boltzmann equation to obtain electron
transport coefficients and rate coefficients for fluid models", Plasma Sources Sci.
Technol. 14, 722 (2005) (finite-volume energy grid of their numerical method).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numba import njit


@dataclass(frozen=True)
class EnergyGrid:
    """Uniform finite-volume energy grid (eV).

    Attributes
    ----------
    faces_eV : ndarray, shape (n + 1,)
        Cell boundaries, from 0 to the upper bound.
    centres_eV : ndarray, shape (n,)
        Cell centres, where the EEDF is given.
    du_eV : float
        Cell width.
    """

    faces_eV: np.ndarray
    centres_eV: np.ndarray
    du_eV: float

    @property
    def n_cells(self):
        """Number of cells."""
        return self.centres_eV.size

    @property
    def max_energy_eV(self):
        """Upper bound of the grid, eV."""
        return float(self.faces_eV[-1])


def uniform_grid(max_energy_eV, n_cells):
    """A uniform grid of ``n_cells`` cells on [0, max_energy_eV] (eV)."""
    faces = np.linspace(0.0, float(max_energy_eV), int(n_cells) + 1)
    du = faces[1] - faces[0]
    return EnergyGrid(faces_eV=faces, centres_eV=faces[:-1] + 0.5 * du, du_eV=float(du))


def ladder_energy(energy_eV, direction="up"):
    """The ladder value ``2**(k/4)`` eV next to ``energy_eV`` (``"up"``: >= it, ``"down"``: <= it)."""
    k = 4.0 * math.log2(energy_eV)
    k = math.ceil(k - 1e-9) if direction == "up" else math.floor(k + 1e-9)
    return 2.0 ** (k / 4.0)


@dataclass(frozen=True)
class IntegralTable:
    """Piecewise-linear form of a cross section with the cumulative integral of u sigma.

    Segment k runs from ``knots[k]`` to ``knots[k+1]`` with sigma = s0[k] + slope[k] (u -
    knots[k]); above the last knot sigma = ``tail``; ``cum[k]`` is int_0^knots[k] u sigma du.
    """

    knots: np.ndarray
    s0: np.ndarray
    slope: np.ndarray
    cum: np.ndarray
    tail: float


def integral_table(process):
    """Build the :class:`IntegralTable` of ``process`` (knots: 0, table energies, threshold).

    The linear coefficients of every segment are read from two interior points, so that
    jumps of the data layer's interpolation (at the threshold, at a first table point with
    non-zero value) fall on knots and are represented exactly.
    """
    breaks = [process.energy_eV, [0.0]]
    if process.threshold_eV > 0.0:
        breaks.append([process.threshold_eV])
    knots = np.unique(np.concatenate(breaks))
    knots = knots[knots >= 0.0]
    a, b = knots[:-1], knots[1:]
    d1, d2 = (b - a) / 3.0, 2.0 * (b - a) / 3.0
    s1, s2 = process.sigma_m2(a + d1), process.sigma_m2(a + d2)
    slope = (s2 - s1) / (d2 - d1)
    s0 = s1 - slope * d1
    tau = b - a
    part = a * s0 * tau + (a * slope + s0) * tau**2 / 2.0 + slope * tau**3 / 3.0
    cum = np.concatenate(([0.0], np.cumsum(part)))
    tail = float(process.sigma_m2(np.array([knots[-1] + 1.0]))[0])
    return IntegralTable(knots=knots, s0=s0, slope=slope, cum=cum, tail=tail)


@njit(cache=True)
def _table_eval(knots, s0, slope, cum, tail, u, integral):
    """sigma(u) (``integral`` False) or int_0^u u' sigma du' (True) from an IntegralTable.

    ``u`` in increasing order is walked in O(len(u) + len(knots)); otherwise each point
    is located by bisection.
    """
    out = np.empty(u.size)
    last = knots.size - 1
    ascending = True
    for i in range(1, u.size):
        if u[i] < u[i - 1]:
            ascending = False
            break
    k = 0
    for i in range(u.size):
        x = u[i]
        if ascending:
            while k < last and knots[k + 1] <= x:
                k += 1
        else:
            k = max(np.searchsorted(knots, x, side="right") - 1, 0)
        if k >= last:
            if integral:
                out[i] = cum[last] + tail * (x * x - knots[last] ** 2) / 2.0
            else:
                out[i] = tail
            continue
        a = knots[k]
        tau = x - a
        if integral:
            out[i] = cum[k] + a * s0[k] * tau + (a * slope[k] + s0[k]) * tau * tau / 2.0 \
                + slope[k] * tau**3 / 3.0
        else:
            out[i] = s0[k] + slope[k] * tau
    return out


@njit(cache=True)
def _table_eval_rows(knots, s0, slope, cum, tail, off, rows, shifts, u, integral):
    """:func:`_table_eval` for several packed tables at once: row r uses table rows[r] at u + shifts[r]."""
    out = np.empty((rows.size, u.size))
    x = np.empty(u.size)
    for r in range(rows.size):
        k = rows[r]
        a, b = off[k], off[k + 1]
        for i in range(u.size):
            x[i] = u[i] + shifts[r]
        v = _table_eval(knots[a:b], s0[a:b], slope[a:b], cum[a:b], tail[k], x, integral)
        for i in range(u.size):     # element-wise: a row assignment compiles a shape check
            out[r, i] = v[i]        # with its error-message formatting (~1.5 s)
    return out


def pack_tables(tables):
    """Concatenate :class:`IntegralTable` records for :func:`eval_tables` (tuple of arrays)."""
    off = np.zeros(len(tables) + 1, dtype=np.int64)
    off[1:] = np.cumsum([t.knots.size for t in tables])
    return (np.concatenate([t.knots for t in tables]),
            np.concatenate([np.append(t.s0, 0.0) for t in tables]),
            np.concatenate([np.append(t.slope, 0.0) for t in tables]),
            np.concatenate([t.cum for t in tables]),
            np.array([t.tail for t in tables]), off)


def eval_tables(packed, rows, points_eV, integral, shifts=None):
    """sigma (m2) or int_0^u u sigma du (eV^2 m2) of the packed tables ``rows`` at
    ``points_eV`` (+ ``shifts[r]`` eV for row r); returns an array (len(rows), len(points))."""
    rows = np.asarray(rows, dtype=np.int64)
    shifts = np.zeros(rows.size) if shifts is None else np.asarray(shifts, dtype=float)
    u = np.ascontiguousarray(points_eV, dtype=float)
    return _table_eval_rows(*packed, rows, shifts, u, integral)


def integrate_u_sigma(table, points_eV):
    """``int_0^u u' sigma(u') du'`` at ``points_eV`` from an :class:`IntegralTable` (eV^2 m2).

    Exact for the piecewise-linear cross section (closed-form integral of a cubic per segment).
    """
    u = np.ascontiguousarray(points_eV, dtype=float)
    return _table_eval(table.knots, table.s0, table.slope, table.cum, table.tail, u.ravel(), True).reshape(u.shape)


def sigma_from_table(table, points_eV):
    """Cross section (m2) at ``points_eV`` (>= 0) from an :class:`IntegralTable`.

    The same piecewise-linear function as the data layer's interpolation; at a jump the
    value from above is returned.
    """
    u = np.ascontiguousarray(points_eV, dtype=float)
    return _table_eval(table.knots, table.s0, table.slope, table.cum, table.tail, u.ravel(), False).reshape(u.shape)


def cumulative_u_sigma(process, points_eV):
    """Exact integral ``int_0^u u' sigma(u') du'`` at each of ``points_eV`` (eV^2 m2).

    Parameters
    ----------
    process : plasmazero.data.cross_sections.Process
        Its cross section is linear between table points, zero below the threshold and
        below the first point, and constant above the last point.
    points_eV : ndarray
        Energies (>= 0).

    Returns
    -------
    ndarray
        The integral at every point, exact up to rounding.
    """
    return integrate_u_sigma(integral_table(process), points_eV)
