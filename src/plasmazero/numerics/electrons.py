"""Electron coefficient tables versus reduced field, and their interpolation in numba.

Local field approximation: the electron energy distribution is assumed to follow the
instantaneous reduced field E/N, so every electron quantity the kinetics needs is a
function of E/N alone for a given gas composition. The caller (usually the Boltzmann
solver, through the workflows layer) tabulates those functions once on a grid of E/N
values; the integrator interpolates them at each right-hand-side evaluation.

Interpolation rule
------------------
* Between two positive grid values: linear in ln(E/N) (the values themselves are
  interpolated linearly; the abscissa is logarithmic, which suits grids that are
  uniform in log E/N over decades).
* A table may start with a zero-field row (E/N = 0, e.g. thermal electrons). Between that
  row and the first positive grid value the interpolation is linear in E/N (ln 0 does not
  exist); at E/N = 0 exactly the zero-field row is returned.
* Below the first grid value (tables without a zero-field row) and above the last one,
  the end row is used (flat extrapolation). Keep the grid wide enough for the run.

The local field approximation itself is not a published formula of this code; see e.g.
Hagelaar & Pitchford (2005), Plasma Sources Sci. Technol. 14, 722, section 2, for its use
and limits.

References
----------
Hagelaar, G. J. M. & Pitchford, L. C. (2005), Solving the Boltzmann equation to obtain
electron transport coefficients and rate coefficients for fluid models, Plasma Sources
Sci. Technol. 14, 722-733.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numba import njit


@dataclass(frozen=True)
class ElectronTable:
    """Electron rate coefficients and swarm data tabulated versus E/N (a record).

    Attributes
    ----------
    E_N_Td : ndarray, float64 (n_g,)
        Reduced field grid, Td, strictly increasing, >= 0 (at most the first entry 0).
    k_m3_s : ndarray, float64 (n_g, n_p)
        Rate coefficient of each electron process (columns in the order of
        ``processes``), m^3 s^-1.
    mean_energy_eV : ndarray, float64 (n_g,)
        Mean electron energy, eV (> 0).
    drift_velocity_m_s : ndarray, float64 (n_g,)
        Electron drift velocity, m/s (reported only).
    processes : tuple of str
        Process id of each column; must equal the mechanism's ``electron_processes``.
    mole_fractions : dict
        Mole fractions of the collision partners the table was computed for
        (species name -> fraction). Used to decide when the table must be rebuilt.
    """

    E_N_Td: np.ndarray
    k_m3_s: np.ndarray
    mean_energy_eV: np.ndarray
    drift_velocity_m_s: np.ndarray
    processes: tuple = ()
    mole_fractions: dict = field(default_factory=dict)

    def __post_init__(self):
        E = np.ascontiguousarray(self.E_N_Td, dtype=np.float64)
        k = np.ascontiguousarray(self.k_m3_s, dtype=np.float64)
        if k.ndim == 1:  # a single process given as one column
            k = k.reshape(-1, 1)
        mean = np.ascontiguousarray(self.mean_energy_eV, dtype=np.float64)
        drift = np.ascontiguousarray(self.drift_velocity_m_s, dtype=np.float64)
        object.__setattr__(self, "E_N_Td", E)
        object.__setattr__(self, "k_m3_s", k)
        object.__setattr__(self, "mean_energy_eV", mean)
        object.__setattr__(self, "drift_velocity_m_s", drift)
        object.__setattr__(self, "processes", tuple(self.processes))
        object.__setattr__(self, "mole_fractions", dict(self.mole_fractions))
        problems = table_problems(self)
        if problems:
            raise ValueError("electron table: " + "; ".join(problems))

    def at(self, E_N_Td):
        """Interpolated (k_m3_s (n_p,), mean_energy_eV, drift_velocity_m_s) at one E/N, Td."""
        k = np.empty(self.k_m3_s.shape[1])
        mean, drift = interpolate_table(self.E_N_Td, np.log(np.maximum(self.E_N_Td, 1e-300)),
                                        self.k_m3_s, self.mean_energy_eV,
                                        self.drift_velocity_m_s, float(E_N_Td), k)
        return k, mean, drift


def table_problems(table):
    """List of what is wrong with an :class:`ElectronTable` (empty when it is usable)."""
    out = []
    E, k = table.E_N_Td, table.k_m3_s
    n = E.shape[0] if E.ndim == 1 else -1
    if E.ndim != 1 or n < 1:
        return ["E_N_Td must be a non-empty 1-D array"]
    if k.ndim != 2 or k.shape[0] != n:
        out.append(f"k_m3_s must have shape ({n}, n_processes), got {k.shape}")
    elif table.processes and k.shape[1] != len(table.processes):
        out.append(f"k_m3_s has {k.shape[1]} columns but {len(table.processes)} processes are named")
    for name, arr in (("mean_energy_eV", table.mean_energy_eV), ("drift_velocity_m_s", table.drift_velocity_m_s)):
        if arr.shape != (n,):
            out.append(f"{name} must have shape ({n},), got {arr.shape}")
    if not np.all(np.isfinite(E)) or np.any(E < 0.0):
        out.append("E_N_Td must be finite and >= 0")
    elif n > 1 and np.any(np.diff(E) <= 0.0):
        out.append("E_N_Td must be strictly increasing")
    if k.ndim == 2 and (not np.all(np.isfinite(k)) or np.any(k < 0.0)):
        out.append("k_m3_s must be finite and >= 0")
    if table.mean_energy_eV.shape == (n,) and (not np.all(np.isfinite(table.mean_energy_eV))
                                               or np.any(table.mean_energy_eV <= 0.0)):
        out.append("mean_energy_eV must be finite and > 0")
    if table.drift_velocity_m_s.shape == (n,) and not np.all(np.isfinite(table.drift_velocity_m_s)):
        out.append("drift_velocity_m_s must be finite")
    for name, x in table.mole_fractions.items():
        if not (isinstance(x, (int, float, np.floating)) and 0.0 <= float(x) <= 1.0):
            out.append(f"mole fraction of {name!r} must be a number in [0, 1]")
    return out


def table_arrays(table, n_processes):
    """The tuple of arrays the compiled interpolation takes, for :func:`interpolate_table`.

    ``table`` None (no electron kinetics) gives a one-row table of zero rate
    coefficients, mean energy NaN (the rate-law kernel then uses Te = T_gas) and drift 0.

    Returns
    -------
    tuple
        ``(E_N_Td, ln_E_N, k_m3_s, mean_energy_eV, drift_velocity_m_s)``.
    """
    if table is None:
        return (np.zeros(1), np.zeros(1), np.zeros((1, n_processes)), np.full(1, np.nan),
                np.zeros(1))
    E = table.E_N_Td
    return (E, np.log(np.maximum(E, 1e-300)), table.k_m3_s, table.mean_energy_eV,
            table.drift_velocity_m_s)


@njit(cache=True)
def _bracket(grid, x):
    """Indices (lo, lo + 1) of the interval of the increasing ``grid`` that holds ``x``
    (grid[0] < x < grid[-1]), by bisection."""
    lo = 0
    hi = grid.shape[0] - 1
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if grid[mid] <= x:
            lo = mid
        else:
            hi = mid
    return lo, hi


@njit(cache=True)
def interpolate_table(E_N_grid, ln_E_N_grid, k_table, mean_table, drift_table, E_N_Td, k_out):
    """Interpolate an electron table at one reduced field.

    Parameters
    ----------
    E_N_grid : ndarray, float64 (n_g,)
        Grid, Td, strictly increasing, >= 0.
    ln_E_N_grid : ndarray, float64 (n_g,)
        ln of the grid (any value where the grid is 0).
    k_table : ndarray, float64 (n_g, n_p)
        Rate coefficients, m^3 s^-1.
    mean_table, drift_table : ndarray, float64 (n_g,)
        Mean energy (eV) and drift velocity (m/s).
    E_N_Td : float
        Reduced field, Td.
    k_out : ndarray, float64 (n_p,)
        Output: interpolated rate coefficients, m^3 s^-1.

    Returns
    -------
    (float, float)
        Mean energy (eV) and drift velocity (m/s) at ``E_N_Td``.

    Notes
    -----
    Linear in ln(E/N) between positive grid values, linear in E/N between a zero-field
    first row and the next, flat outside the grid (module docstring). Common practice,
    no source.
    """
    n = E_N_grid.shape[0]
    n_p = k_table.shape[1]
    if n == 1 or E_N_Td <= E_N_grid[0]:
        for p in range(n_p):
            k_out[p] = k_table[0, p]
        return mean_table[0], drift_table[0]
    if E_N_Td >= E_N_grid[n - 1]:
        for p in range(n_p):
            k_out[p] = k_table[n - 1, p]
        return mean_table[n - 1], drift_table[n - 1]
    lo, hi = _bracket(E_N_grid, E_N_Td)
    if E_N_grid[lo] <= 0.0:
        w = E_N_Td / E_N_grid[hi]
    else:
        w = (math.log(E_N_Td) - ln_E_N_grid[lo]) / (ln_E_N_grid[hi] - ln_E_N_grid[lo])
    w0 = 1.0 - w
    for p in range(n_p):
        k_out[p] = w0 * k_table[lo, p] + w * k_table[hi, p]
    return (w0 * mean_table[lo] + w * mean_table[hi],
            w0 * drift_table[lo] + w * drift_table[hi])


def mean_energy_problems(table):
    """Why ``table`` cannot be inverted in mean energy (local mean energy approximation):
    a list of one-line problems, empty when the mean energy rises strictly with E/N."""
    if table is None:
        return ["the local mean energy approximation needs an electron table"]
    m = np.asarray(table.mean_energy_eV, dtype=float)
    if m.size < 2 or not np.all(np.diff(m) > 0.0):
        return ["the mean electron energy of the table does not rise strictly with E/N, "
                "so it cannot parametrise the coefficients (local mean energy approximation)"]
    return []


@njit(cache=True)
def field_for_mean_energy(E_N_grid, ln_E_N_grid, mean_table, drift_table, mean_eV):
    """Effective reduced field at which the table's mean energy equals ``mean_eV``.

    The inverse of :func:`interpolate_table`'s mean energy on the same interpolation rule
    (the mean energy is linear in the interpolation weight on each interval), so that
    ``interpolate_table`` at the returned field gives back ``mean_eV`` and the rate
    coefficients that belong to it: the local mean energy approximation (coefficients as
    functions of the mean energy; Hagelaar & Pitchford 2005, section 3). The table's mean
    energy must rise strictly with E/N (:func:`mean_energy_problems`). Flat outside the
    table.

    Returns
    -------
    (float, float)
        Effective field (Td) and reduced mobility mu N = w / (E/N) there (m s^-1 Td^-1;
        at a zero-field end, the limit from the first positive row).
    """
    n = E_N_grid.shape[0]
    if mean_eV <= mean_table[0]:
        E = E_N_grid[0]
        drift = drift_table[0]
    elif mean_eV >= mean_table[n - 1]:
        E = E_N_grid[n - 1]
        drift = drift_table[n - 1]
    else:
        lo, hi = _bracket(mean_table, mean_eV)
        # the weight of mean_eV on [lo, hi] is the interpolation weight of E there, so the
        # drift at E follows with the same weight
        w = (mean_eV - mean_table[lo]) / (mean_table[hi] - mean_table[lo])
        if E_N_grid[lo] <= 0.0:
            E = w * E_N_grid[hi]
        else:
            E = math.exp(ln_E_N_grid[lo] + w * (ln_E_N_grid[hi] - ln_E_N_grid[lo]))
        drift = (1.0 - w) * drift_table[lo] + w * drift_table[hi]
    if E > 0.0:
        return E, drift / E
    k = 1 if n > 1 else 0        # zero field: the limit w / E from the first positive row
    return E, (drift_table[k] / E_N_grid[k] if E_N_grid[k] > 0.0 else 0.0)
