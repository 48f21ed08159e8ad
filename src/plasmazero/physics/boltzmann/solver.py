"""Steady two-term electron Boltzmann solver: nonlinear iterations and the automatic grid.

``solve_swarm(mixture, E_N_Td, ...)`` returns a :class:`~.swarm.SwarmTable`. Per E/N point:

1. **Grid.** A uniform grid of ``n_cells`` cells on [0, u_max]. Unless ``max_energy_eV``
   is given, u_max is adapted so that the EEDF falls by at least 10 decades from its
   maximum to the top cell: solve, measure the fall d, and move u_max along the ladder
   2**(k/4) eV until 10 <= d <= 15 (extend by extrapolating the slope of log F in the top
   quarter, shrink to where the present EEDF has fallen by 11.5 decades; when a cliff of
   the EEDF, e.g. above the first excitation threshold, leaves no ladder value in that
   window, the smallest bound with d >= 10 is kept). The points of a table are solved in
   increasing E/N, each starting from the grid of the previous one; operators of grids
   already used are kept, since everything but the field, growth and electron-electron
   terms is independent of E/N.
2. **Growth.** The net production (temporal growth: nu/N; spatial growth: alpha/N) is a
   scalar unknown of the nonlinear equation; it is found by the secant method on
   g(x) = x_from_solution(x) - x (each evaluation one linear solve) to a relative
   tolerance of 1e-11 (where the residual's rounding noise is above that, as when
   attachment nearly cancels ionization, the best iterate is kept if it is within 1e-5;
   otherwise the solve fails with ``ConvergenceError``). Growth "none" needs a single
   solve.
3. **Electron-electron collisions** (``ionization_degree`` > 0): the integrals A1, A2, A3
   and the Coulomb logarithm are taken from the previous iterate (Hagelaar and Pitchford
   2005, e-e collisions), with the e-e diffusion scaled so that the e-e term exchanges no net
   energy with the new solution (see ``_PointSolver.solve``); the iterates are mixed by
   Anderson acceleration (Walker and Ni 2011) until the EEDF changes by less than 1e-8
   (L1 norm of sqrt(u) F du).

Non-convergence raises :class:`ConvergenceError` naming the E/N and what did not converge.

Default number of cells (convergence study)
-------------------------------------------
``n_cells`` defaults to :data:`DEFAULT_CELLS`. The choice was measured with the automatic
grid: for every point, the mean energy on n cells was compared with the one on 2n cells
over the same upper bound (halving the cell size), on the shipped argon set (E/N = 1 to
1000 Td, 13 log-spaced points, T_gas = 300 K) and on the two-gas model mixture with every
process kind of ``tests/physics/test_boltzmann_numerics.py`` (1 to 300 Td, 11 points):

=========  ====================================================================
n_cells    largest relative change of the mean energy when the cell size is halved
=========  ====================================================================
100        argon 8.4e-3, model mixture 6.0e-3
200        argon 2.7e-3, model mixture 2.0e-3
400        argon 9.7e-4, model mixture 7.6e-4
500        argon 6.7e-4, model mixture 5.2e-4
800        argon 3.2e-4, model mixture 3.0e-4
=========  ====================================================================

so 500 cells keep the change below 0.1 % with a margin of 1.5 (400 would pass by 3 %
only). The worst points are argon at 1000 Td (du = 0.86 eV) and the model mixture near
10 Td, where a 0.3 eV vibrational threshold is resolved by few cells. The change falls
as du^1.5 to du^2: the scheme is second order in the bulk, and the midpoint measure
sqrt(u_i) du of the lowest cells (which the normalisation sum(sqrt(u) F du) = 1 fixes)
is of order du^1.5. The test of the numerics repeats the check at 500 cells.
Known limit of the uniform grid: processes with thresholds of a few du or less (rotational
or low vibrational levels on a grid up to hundreds of eV) are poorly resolved.

References
----------
G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005).
H. F. Walker and P. Ni, "Anderson acceleration for fixed-point iterations", SIAM J. Numer.
Anal. 49, 1715 (2011).
L. Spitzer, Physics of Fully Ionized Gases, 2nd ed., Interscience (1962) (Coulomb
logarithm ln Lambda with Lambda = 12 pi n_e lambda_D^3).
"""

from __future__ import annotations

import math

import numpy as np

from plasmazero.data.errors import InputError, format_problem

from .constants import (
    BOLTZMANN_EV_K,
    ELECTRON_MASS_KG,
    ELEMENTARY_CHARGE_C,
    EPSILON_0_F_M,
    GAMMA_M_S_EV,
    TOWNSEND_V_M2,
)
from .grid import ladder_energy, uniform_grid
from .mixture import OPERATOR_CACHE_SIZE, level_populations
from .operator import build_operator, linear_solve
from .swarm import SwarmTable, point_results

#: default number of energy cells (convergence study in the module docstring)
DEFAULT_CELLS = 500
#: the EEDF must fall by at least this many decades over the automatic grid
MIN_TAIL_DECADES = 10.0
#: automatic grids where it falls by more than this are shrunk
MAX_TAIL_DECADES = 15.0
#: gas density used for the Coulomb logarithm when electron_density_m3 is not given
#: (ideal gas at 101325 Pa and 300 K; common practice, no source)
REFERENCE_GAS_DENSITY_M3 = 101325.0 / (BOLTZMANN_EV_K * ELEMENTARY_CHARGE_C * 300.0)
GROWTH_MODELS = ("temporal", "spatial", "none")
SHARING_MODELS = ("equal", "one_takes_all")
_GROWTH_TOL = 1e-11
#: accepted instead when the secant iteration stalls on the residual's rounding noise
#: (relative to the gross ionization + attachment; a choice of this code)
_GROWTH_FLOOR_TOL = 1e-5
_EE_TOL = 1e-8  # L1 of sqrt(u) F du; the iteration reaches a rounding floor near 5e-10
_EE_ENERGY_TOL = 1e-13  # net e-e power relative to the gross e-e energy flow


class ConvergenceError(RuntimeError):
    """A nonlinear iteration of the Boltzmann solver did not converge."""


def _ee_prefactor(mean_energy_eV, n_e_m3):
    """Prefactor a of the e-e terms (to be multiplied by n_e/N), m3 s^-1 eV^3/2.

    a = 2 Gamma / (3 gamma^3) with Gamma = e^4 ln(Lambda) / (4 pi eps0^2 m^2), from the
    isotropic Rosenbluth-Fokker-Planck operator written in energy; it equals
    e^2 gamma ln(Lambda) / (24 pi eps0^2). Lambda = 12 pi n_e lambda_D^3 with
    k T_e = (2/3) <u>.

    References
    ----------
    M. N. Rosenbluth, W. M. MacDonald and D. L. Judd, Phys. Rev. 107, 1 (1957).
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
    (e-e collisions).
    L. Spitzer, Physics of Fully Ionized Gases, 2nd ed., Interscience (1962) (Lambda).
    """
    e, eps0 = ELEMENTARY_CHARGE_C, EPSILON_0_F_M
    kTe_J = max(2.0 / 3.0 * mean_energy_eV, 1e-6) * e
    debye = math.sqrt(eps0 * kTe_J / (n_e_m3 * e * e))
    ln_lambda = max(math.log(12.0 * math.pi * n_e_m3 * debye**3), 1.0)
    big_gamma = e**4 * ln_lambda / (4.0 * math.pi * eps0**2 * ELECTRON_MASS_KG**2)
    return 2.0 * big_gamma / (3.0 * GAMMA_M_S_EV**3)


def _ee_faces(op, F, a_ee):
    """Electron-electron convection and diffusion at the faces from the EEDF ``F``.

    W_ee = -3 a_ee A1, D_ee = 2 a_ee (A2 + u^(3/2) A3) with A1 = sum_(i<f) sqrt(u_i) F_i du,
    A2 = sum_(i<f) u_i^(3/2) F_i du, A3 = sum_(i>=f) F_i du (``a_ee`` = a n_e/N).

    References
    ----------
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
    (e-e collisions); S. D. Rockwood, Phys. Rev. A 8, 2348 (1973).
    """
    g = op.grid
    u_c, u_f, h = g.centres_eV, g.faces_eV, g.du_eV
    m = np.sqrt(u_c) * h
    A1 = np.concatenate(([0.0], np.cumsum(m * F)))
    A2 = np.concatenate(([0.0], np.cumsum(u_c * m * F)))
    A3 = np.concatenate((np.cumsum((F * h)[::-1])[::-1], [0.0]))
    return -3.0 * a_ee * A1, 2.0 * a_ee * (A2 + u_f**1.5 * A3)


class _PointSolver:
    """Solves one E/N point on one grid operator (growth and e-e iterations)."""

    def __init__(self, op, en, kT, growth, E_N_Td, scratch):
        self.op, self.en, self.kT, self.growth, self.E_N_Td = op, en, kT, growth, E_N_Td
        n = op.grid.n_cells
        if n not in scratch:
            scratch[n] = np.zeros((n, n))  # elimination work space, shared by the points of a call
        self.work = scratch[n]
        g = op.grid
        self.m = np.sqrt(g.centres_eV) * g.du_eV
        self.zeros = np.zeros(g.faces_eV.size)
        self.solves = 0

    def linear(self, nu, alpha, ee):
        op = self.op
        g = op.grid
        if ee is None:
            W_ee = D_ee = self.zeros
        else:
            W_ee, D_ee = ee
        out = np.empty((9, g.faces_eV.size))
        F = linear_solve(g.faces_eV, op.sigma_m_f, op.sigma_eps_f, g.du_eV, self.en, self.kT,
                         nu if self.growth == "temporal" else 0.0,
                         alpha if self.growth == "spatial" else 0.0, W_ee, D_ee, op.loss,
                         self.m, op.transfer_lo, op.transfer_glo, op.transfer_ghi,
                         op.lower_bandwidth, op.marchable, self.work, out)
        self.solves += 1
        if F is None or not np.all(np.isfinite(F)):
            raise ConvergenceError(f"E/N = {self.E_N_Td:g} Td: the linear system could not be "
                                   f"solved (grid up to {g.max_energy_eV:g} eV)")
        faces = {"c": out[0], "W_el": out[1], "D_th": out[2], "W_ee": W_ee, "D_ee": D_ee,
                 "wl": out[7], "wr": out[8]}
        return F, faces

    def _drift(self, F, faces, alpha):
        h = self.op.grid.du_eV
        sl = slice(1, F.size)
        fhat = faces["wl"][sl] * F[:-1] + faces["wr"][sl] * F[1:]
        j = -faces["c"][sl] * (self.en * (F[1:] - F[:-1]) / h + alpha * fhat)
        return float(np.sum(j) * h)

    def growth_solve(self, ee, guess):
        """Solve with the growth parameter made self-consistent; returns (F, faces, (nu, alpha))."""
        op = self.op
        tol = _GROWTH_TOL
        if self.growth == "none" or not np.any(op.production_row):
            F, faces = self.linear(0.0, 0.0, ee)
            return F, faces, (0.0, 0.0)
        spatial = self.growth == "spatial"

        def evaluate(x):
            if spatial:
                F, faces = self.linear(0.0, x, ee)
                W = self._drift(F, faces, x)
                prod = float(op.production_row @ F)
                if W <= 0.0:
                    raise ConvergenceError(f"E/N = {self.E_N_Td:g} Td: spatial growth: the flux drift "
                                           f"velocity is not positive (alpha/N = {x:.3e} m2)")
                new = prod / W
                gross = float((op.ionization_row + op.attachment_row) @ F) / W
            else:
                F, faces = self.linear(x, 0.0, ee)
                new = float(op.production_row @ F)
                gross = float((op.ionization_row + op.attachment_row) @ F)
            return F, faces, new - x, gross

        x0 = guess
        F, faces, g0, gross = evaluate(x0)
        # |gross|: far-tail round-off can leave it a tiny negative number when nothing ionizes
        if abs(g0) <= tol * abs(gross) or g0 == 0.0:
            return F, faces, (0.0, x0) if spatial else (x0, 0.0)
        x1 = x0 + g0
        best = (abs(g0) / max(abs(gross), 1e-300), x0, F, faces)
        for _ in range(60):
            F, faces, g1, gross = evaluate(x1)
            if abs(g1) <= tol * abs(gross) or g1 == 0.0:
                return F, faces, (0.0, x1) if spatial else (x1, 0.0)
            rel = abs(g1) / max(abs(gross), 1e-300)
            if rel < best[0]:
                best = (rel, x1, F, faces)
            x2 = x1 + g1 if g1 == g0 else x1 - g1 * (x1 - x0) / (g1 - g0)
            x0, g0, x1 = x1, g1, x2
        if best[0] <= _GROWTH_FLOOR_TOL:
            # the residual hit its rounding floor above tol (seen where attachment nearly
            # cancels ionization: alpha/N ~ 1e-31 m^2, residual noise ~1e-7 relative)
            _, x, F, faces = best
            return F, faces, (0.0, x) if spatial else (x, 0.0)
        what = "alpha/N (spatial growth)" if spatial else "nu/N (temporal growth)"
        raise ConvergenceError(f"E/N = {self.E_N_Td:g} Td: {what} did not converge in 60 iterations "
                               f"(last relative change {abs(g1) / max(gross, 1e-300):.2e})")

    def _ee_power(self, F, faces):
        """Power lost by e-e collisions (eV m3/s) and the gross e-e energy flow."""
        h = self.op.grid.du_eV
        sl = slice(1, F.size)
        fhat = faces["wl"][sl] * F[:-1] + faces["wr"][sl] * F[1:]
        conv = faces["W_ee"][sl] * fhat * h
        diff = faces["D_ee"][sl] * (F[1:] - F[:-1])
        return -float(np.sum(conv - diff)), float(np.sum(np.abs(conv)) + np.sum(np.abs(diff)))

    def solve(self, ee_density, n_e_m3, guess_growth, guess_F):
        """Full solve; returns (F, faces, nu, alpha).

        With electron-electron collisions, each outer iteration takes A1, A2, A3 and the
        Coulomb logarithm from the present iterate and scales the e-e diffusion by a factor
        lambda found (secant method) such that the e-e collisions exchange no net energy
        with the new solution: without it the lagged operator acts as a thermostat at the
        temperature of the previous iterate and the iteration crawls; at convergence lambda
        differs from 1 by the discretisation error only and the e-e term conserves energy
        exactly on the grid. The outer iterates are mixed by Anderson acceleration.
        """
        spatial = self.growth == "spatial"
        if ee_density <= 0.0:
            F, faces, (nu, alpha) = self.growth_solve(None, guess_growth)
            return F, faces, nu, alpha
        if guess_F is None:
            F, faces, (nu, alpha) = self.growth_solve(None, guess_growth)
        else:
            F = guess_F
            nu = guess_growth if self.growth == "temporal" else 0.0
            alpha = guess_growth if spatial else 0.0
        u_c = self.op.grid.centres_eV
        history_x, history_g = [], []
        x = F
        lam = 1.0
        change = float("inf")
        for _ in range(200):
            mean = float(np.sum(u_c * self.m * x))
            a_ee = ee_density * _ee_prefactor(mean, n_e_m3)
            W_ee, D_ee = _ee_faces(self.op, np.maximum(x, 0.0), a_ee)
            tol = _EE_ENERGY_TOL

            def run(lmb, growth_guess):
                Fr, fr, (nr, ar) = self.growth_solve((W_ee, lmb * D_ee), growth_guess)
                p, gross = self._ee_power(Fr, fr)
                return Fr, fr, nr, ar, p, gross

            guess = alpha if spatial else nu
            l0 = lam
            Fn, faces, nu, alpha, p0, gross = run(l0, guess)
            if abs(p0) > tol * gross:
                l1 = l0 * (1.05 if p0 > 0.0 else 0.95)
                for _k in range(40):
                    Fn, faces, nu, alpha, p1, gross = run(l1, alpha if spatial else nu)
                    if abs(p1) <= tol * gross or p1 == p0:
                        break
                    l2 = l1 - p1 * (l1 - l0) / (p1 - p0)
                    l2 = min(max(l2, 0.5 * l1), 2.0 * l1)
                    l0, p0, l1 = l1, p1, l2
                else:
                    raise ConvergenceError(f"E/N = {self.E_N_Td:g} Td: the energy balance of the "
                                           f"electron-electron term did not converge")
                lam = l1
            g = Fn - x
            change = float(np.sum(np.abs(g) * self.m))
            if change < _EE_TOL:
                return Fn, faces, nu, alpha
            history_x.append(x)
            history_g.append(g)
            if len(history_x) > 6:
                history_x.pop(0)
                history_g.pop(0)
            if len(history_g) >= 2:  # Anderson acceleration (Walker and Ni 2011)
                dG = np.array([history_g[k + 1] - history_g[k] for k in range(len(history_g) - 1)]).T
                dX = np.array([history_x[k + 1] - history_x[k] for k in range(len(history_x) - 1)]).T
                coef, *_ = np.linalg.lstsq(dG * self.m[:, None], g * self.m, rcond=None)
                x = np.maximum(x + g - (dX + dG) @ coef, 0.0)
                x /= float(np.sum(self.m * x))
            else:
                x = Fn
        raise ConvergenceError(f"E/N = {self.E_N_Td:g} Td: the EEDF with electron-electron "
                               f"collisions did not converge in 200 iterations "
                               f"(last change {change:.2e})")


def _next_max_energy(grid, F, d):
    """Next ladder upper bound to try, or None to accept this grid (module docstring).

    Too short a tail (d < 10 decades): extrapolate the logarithmic slope of the top quarter
    of the grid to 11.5 decades. Too long (d > 15): the smallest ladder value at which the
    present EEDF has fallen by 11.5 decades, if below the present bound.
    """
    u = grid.centres_eV
    u_max = grid.max_energy_eV
    target = 0.5 * (MIN_TAIL_DECADES + MAX_TAIL_DECADES) - 1.0
    if d < MIN_TAIL_DECADES:
        q = slice(3 * u.size // 4, None)
        pos = F[q] > 0.0
        slope = 0.0
        if np.count_nonzero(pos) >= 2:
            slope = -np.polyfit(u[q][pos], np.log10(F[q][pos]), 1)[0]
        est = u_max + (target - d) / slope if slope > 0.0 else 2.0 * u_max
        est = min(max(est, 1.1 * u_max), 4.0 * u_max)
        return ladder_energy(est)
    if d > MAX_TAIL_DECADES:
        with np.errstate(divide="ignore"):
            fall = np.log10(F.max() / np.maximum(F, 1e-300))
        above = np.nonzero(fall >= target)[0]
        if above.size == 0:
            return None
        new = ladder_energy(u[above[0]] + 0.5 * grid.du_eV)
        return new if new < u_max * (1.0 - 1e-9) else None
    return None


def _tail_decades(F):
    """log10(max F / F of the top cell); 300 when the top cell holds nothing."""
    top = F[-1]
    peak = F.max()
    if not peak > 0.0:
        return 0.0
    if top <= 0.0:
        return 300.0
    return math.log10(peak) - math.log10(top)


def _check_options(E_N_Td, T_gas_K, n_cells, max_energy_eV, growth, sharing, ionization_degree,
                   electron_density_m3):
    problems = []
    try:
        en = np.atleast_1d(np.asarray(E_N_Td, dtype=float))
    except (TypeError, ValueError):
        raise InputError([format_problem(None, "E/N", f"not numbers: {E_N_Td!r}")]) from None
    if en.ndim != 1 or en.size == 0:
        problems.append(format_problem(None, "E/N", "give one or more values"))
    elif not np.all(np.isfinite(en)) or np.any(en < 0.0):
        bad = en[~np.isfinite(en) | (en < 0.0)][0]
        problems.append(format_problem(None, "E/N", f"{bad:g} Td is not a finite number >= 0"))
    if not (isinstance(T_gas_K, (int, float, np.integer, np.floating)) and not isinstance(T_gas_K, bool)
            and math.isfinite(T_gas_K) and T_gas_K >= 0.0):
        problems.append(format_problem(None, "T_gas_K", f"{T_gas_K!r} is not a temperature >= 0 K"))
    if n_cells is not None and (int(n_cells) != n_cells or n_cells < 20):
        problems.append(format_problem(None, "n_cells", f"{n_cells!r} is not an integer >= 20"))
    if max_energy_eV is not None and not (math.isfinite(max_energy_eV) and max_energy_eV > 0.0):
        problems.append(format_problem(None, "max_energy_eV", f"{max_energy_eV!r} is not a positive energy"))
    if growth not in GROWTH_MODELS:
        problems.append(format_problem(None, "growth", f"{growth!r} is not one of {', '.join(GROWTH_MODELS)}"))
    if sharing not in SHARING_MODELS:
        problems.append(format_problem(None, "sharing", f"{sharing!r} is not one of {', '.join(SHARING_MODELS)}"))
    if not (math.isfinite(ionization_degree) and 0.0 <= ionization_degree < 1.0):
        problems.append(format_problem(None, "ionization_degree", f"{ionization_degree!r} is not in [0, 1)"))
    if electron_density_m3 is not None and not (math.isfinite(electron_density_m3) and electron_density_m3 > 0):
        problems.append(format_problem(None, "electron_density_m3", f"{electron_density_m3!r} is not a positive density"))
    if problems:
        raise InputError(problems)
    if np.any(en == 0.0) and T_gas_K == 0.0:
        raise InputError([format_problem(None, "E/N", "E/N = 0 at T_gas = 0 K has no steady EEDF "
                                         "(every electron comes to rest)")])
    if np.any(en == 0.0) and growth == "spatial":
        raise InputError([format_problem(None, "E/N", "spatial growth needs E/N > 0 (no drift at zero field)")])
    return en


def solve_swarm(mixture, E_N_Td, T_gas_K=300.0, *, n_cells=None, max_energy_eV=None,
                growth="temporal", sharing="equal", excited_fractions=None,
                ionization_degree=0.0, electron_density_m3=None):
    """Steady EEDF and swarm parameters of ``mixture`` for every reduced field of ``E_N_Td``.

    Two-term expansion, finite-volume energy grid and exponential scheme (Hagelaar and
    Pitchford 2005); see the docstrings of this module, :mod:`.operator` and :mod:`.swarm`.

    Parameters
    ----------
    mixture : Mixture
        From :func:`.mixture.build_mixture`.
    E_N_Td : float or array_like
        Reduced fields, Td (>= 0).
    T_gas_K : float
        Gas temperature, K (0 allowed when E/N > 0).
    n_cells : int, optional
        Number of energy cells (default :data:`DEFAULT_CELLS`).
    max_energy_eV : float, optional
        Fixed upper bound of the grid, eV; default: adapted per E/N (module docstring).
    growth : {"temporal", "spatial", "none"}
        Growth of the electron number: exponential in time (default), in space (steady
        Townsend), or none (the operator then conserves electrons: ionization without its
        secondary, attachment without electron loss).
    sharing : {"equal", "one_takes_all"}
        Energy sharing after ionization.
    excited_fractions : dict, "boltzmann" or None
        Upper-level populations for superelastic collisions (:func:`.mixture.level_populations`).
    ionization_degree : float
        n_e/N; > 0 switches electron-electron collisions on.
    electron_density_m3 : float, optional
        n_e for the Coulomb logarithm; default ``ionization_degree`` times
        :data:`REFERENCE_GAS_DENSITY_M3`.

    Returns
    -------
    SwarmTable

    Raises
    ------
    InputError
        For invalid options.
    ConvergenceError
        When a nonlinear iteration does not converge (message names E/N and what).
    """
    en_Td = _check_options(E_N_Td, T_gas_K, n_cells, max_energy_eV, growth, sharing,
                           float(ionization_degree), electron_density_m3)
    n = DEFAULT_CELLS if n_cells is None else int(n_cells)
    forward, upper = level_populations(mixture, T_gas_K, excited_fractions)
    kT = BOLTZMANN_EV_K * T_gas_K
    n_e = electron_density_m3 if electron_density_m3 is not None else \
        max(ionization_degree, 1e-30) * REFERENCE_GAS_DENSITY_M3
    ops = mixture.operator_cache
    scratch = {}
    pop_key = (forward.tobytes(), upper.tobytes())

    def operator(u_max):
        key = (u_max, n, growth, sharing, pop_key)
        op = ops.pop(key, None)
        if op is None:
            op = build_operator(mixture, uniform_grid(u_max, n), forward, upper, growth, sharing)
        ops[key] = op  # most recently used last
        while len(ops) > OPERATOR_CACHE_SIZE:
            ops.pop(next(iter(ops)))
        return op

    order = np.argsort(en_Td, kind="stable")
    results = [None] * en_Td.size
    u_guess = None
    growth_guess = 0.0
    prev_F = None
    for idx in order:
        E_N = float(en_Td[idx])
        en = E_N * TOWNSEND_V_M2
        if max_energy_eV is not None:
            u_max = float(max_energy_eV)
        elif u_guess is not None:
            u_max = u_guess
        else:
            u_max = ladder_energy(max(16.0, 40.0 * kT)) if E_N > 0.0 else ladder_energy(40.0 * kT)
        tried = {}
        solves = 0
        while True:
            op = operator(u_max)
            ps = _PointSolver(op, en, kT, growth, E_N, scratch)
            guess_F = None
            if prev_F is not None and ionization_degree > 0.0:
                gF = np.interp(op.grid.centres_eV, prev_F[0], prev_F[1], right=0.0)
                guess_F = gF / float(np.sum(ps.m * gF))
            F, faces, nu, alpha = ps.solve(ionization_degree, n_e, growth_guess, guess_F)
            solves += ps.solves
            growth_guess = alpha if growth == "spatial" else nu
            d = _tail_decades(F)
            tried[u_max] = (d, op, F, faces, nu, alpha)
            if max_energy_eV is not None:
                break
            new = _next_max_energy(op.grid, F, d)
            if new is None:
                break
            if new in tried or new > 2.0**17 or new < 2.0**-10:
                ok = [u for u, t in tried.items() if t[0] >= MIN_TAIL_DECADES]
                if not ok:
                    raise ConvergenceError(f"E/N = {E_N:g} Td: no grid up to {max(tried):g} eV lets "
                                           f"the EEDF fall by {MIN_TAIL_DECADES:g} decades")
                u_max = min(ok)
                break
            u_max = new
        d, op, F, faces, nu, alpha = tried[u_max]
        res = point_results(op, F, faces, en, alpha, nu, growth)
        res.update(F=F, grid=op.grid, decades=d, solves=solves)
        results[idx] = res
        u_guess = u_max
        growth_guess = alpha if growth == "spatial" else nu
        prev_F = (op.grid.centres_eV, F)
    return _table(mixture, en_Td, T_gas_K, growth, sharing, ionization_degree, results, n)


def _table(mixture, en_Td, T_gas_K, growth, sharing, ionization_degree, results, n):
    def col(key):
        return np.array([r[key] for r in results], dtype=float)

    ids = list(results[0]["rates"].keys())
    frac_keys = list(results[0]["fractions"].keys())
    if ionization_degree <= 0.0:
        frac_keys.remove("electron_electron")
    return SwarmTable(
        E_N_Td=en_Td.copy(), T_gas_K=float(T_gas_K), growth=growth, sharing=sharing,
        energy_eV=np.array([r["grid"].centres_eV for r in results]),
        eedf_eV_m3_2=np.array([r["F"] for r in results]),
        max_energy_eV=np.array([r["grid"].max_energy_eV for r in results]),
        tail_decades=col("decades"),
        mean_energy_eV=col("mean_energy_eV"),
        drift_velocity_m_s=col("drift_velocity_m_s"),
        reduced_mobility_1_mVs=col("reduced_mobility_1_mVs"),
        reduced_diffusion_1_ms=col("reduced_diffusion_1_ms"),
        characteristic_energy_eV=col("characteristic_energy_eV"),
        townsend_ionization_m2=col("townsend_ionization_m2"),
        townsend_attachment_m2=col("townsend_attachment_m2"),
        net_production_m3_s=col("net_production_m3_s"),
        field_power_eV_m3_s=col("field_power_eV_m3_s"),
        rate_coefficients_m3_s={k: np.array([r["rates"][k] for r in results]) for k in ids},
        power_fractions={k: np.array([r["fractions"][k] for r in results]) for k in frac_keys},
        power_balance_residual=col("residual"),
        process_ids=tuple(ids),
        iterations=np.array([r["solves"] for r in results], dtype=np.int64),
        ionization_degree=float(ionization_degree),
        inputs={"n_cells": n, "gases": list(mixture.gases),
                "fractions": [float(x) for x in mixture.gas_fractions], "files": list(mixture.files)},
    )
