"""Variable-order BDF (numerical differentiation formulas, orders 1-5) in difference form.

The method of Shampine & Reichelt (1997): the past solution is held as the backward
differences D_0..D_k of the interpolating polynomial at equally spaced points (step h),
D_0 = y_n, D_j = nabla^j y_n; a step size change by a factor r re-interpolates the
differences on the new spacing (:func:`change_history`, their matrices R and U); the
corrector of order k solves::

    (I - c J) dy = c f(t_new, y) - psi - d,    c = h / alpha_k,
    psi = sum_{j=1..k} gamma_j D_j / alpha_k,  d = y - y_pred,  y_pred = sum_{j<=k} D_j

by a simplified Newton iteration (at most ``NEWTON_MAXITER`` iterations; the iteration
matrix is kept while the iteration converges, refreshed with a new Jacobian when it does
not), with gamma_j = sum_{m<=j} 1/m, alpha_k = (1 - kappa_k) gamma_k and the NDF
coefficients kappa of Shampine & Reichelt's Table 1 (kappa = 0 would be the plain BDF);
the local error is ``ERROR_CONST[k] * d``. Order and step are changed after k + 1 steps of
one size, to the order of the three neighbours (k - 1, k, k + 1) that allows the largest
step. The constants below (kappa, the Newton limits, the factor bounds 0.2 and 10, the
safety factor 0.9 (2 NEWTON_MAXITER + 1) / (2 NEWTON_MAXITER + n_iter)) are those of the
implementation of the same method in scipy.integrate (``solve_ivp(method="BDF")``), which
the tests also use as a reference; recalled from its source, checked against it in the
tests (same step counts on a smooth problem within a few per cent).

Dense output: the interpolating polynomial through the differences of the accepted step
(:func:`history_eval`), of order k.

The linear algebra is that of the Rosenbrock stepper: ``rosenbrock.rodas4_factor`` factors
I / (GAMMA h') - J, so the iteration matrix I / c - J is factored with h' = c / GAMMA, and
``rodas4_stage_solve`` with stage 0 solves with it (dense or sparse LU with the Woodbury
parts of the split Jacobian). (I - c J) dy = c b is the same as (I / c - J) dy = b.

References
----------
Shampine, L. F. & Reichelt, M. W. (1997), The MATLAB ODE suite, SIAM J. Sci. Comput. 18,
1-22 (NDF orders 1-5, kappa, the difference form and its step-size change). Klopfenstein,
R. W. (1971), RCA Review 32, 447 (numerical differentiation formulas). Hairer, E. &
Wanner, G. (1996), Solving Ordinary Differential Equations II, 2nd ed., Springer, section
III.5 and V.1 (variable-step BDF, simplified Newton). Virtanen, P. et al. (2020), SciPy 1.0,
Nature Methods 17, 261 (the scipy implementation of the method).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

MAX_ORDER = 5
NEWTON_MAXITER = 4
MIN_FACTOR = 0.2
MAX_FACTOR = 10.0
#: NDF coefficients kappa_k, k = 0..5 (Shampine & Reichelt 1997, Table 1; k = 5 is the BDF)
KAPPA = np.array([0.0, -0.1850, -1.0 / 9.0, -0.0823, -0.0415, 0.0])
#: gamma_k = sum_{m=1..k} 1/m
GAMMA_SUM = np.concatenate(([0.0], np.cumsum(1.0 / np.arange(1, MAX_ORDER + 1))))
#: alpha_k = (1 - kappa_k) gamma_k
ALPHA = (1.0 - KAPPA) * GAMMA_SUM
#: error constants kappa_k gamma_k + 1 / (k + 1)
ERROR_CONST = KAPPA * GAMMA_SUM + 1.0 / np.arange(1, MAX_ORDER + 2)
#: rows of the history array: D_0..D_{k+2} for k up to MAX_ORDER
HISTORY_ROWS = MAX_ORDER + 3


@njit(cache=True)
def newton_tolerance(rtol):
    """Convergence tolerance of the Newton iteration (scaled norm) for a relative
    tolerance ``rtol`` (the smallest entry of an array): max(10 eps / rtol, min(0.03,
    sqrt(rtol))), as in scipy's implementation."""
    eps = 2.220446049250313e-16
    return max(10.0 * eps / rtol, min(0.03, math.sqrt(rtol)))


@njit(cache=True)
def _ru_matrix(order, factor, out):
    """R(order, factor): out[i, j] = prod_{m=1..i} (m - 1 - factor j) / m, out[0, :] = 1."""
    for j in range(order + 1):
        out[0, j] = 1.0
    for i in range(1, order + 1):
        out[i, 0] = 0.0
        for j in range(1, order + 1):
            out[i, j] = out[i - 1, j] * (i - 1 - factor * j) / i


@njit(cache=True)
def change_history(D, order, factor, scratch):
    """Re-interpolate the differences D[0..order] for the step size ``factor`` times the
    old one (Shampine & Reichelt 1997, section 2.3: D <- (R U)^T D). ``scratch``:
    float64 (3 (MAX_ORDER + 1) + MAX_ORDER + 1, max(n, MAX_ORDER + 1))."""
    m = order + 1
    n = D.shape[1]
    R = scratch[0:m, 0:m]
    U = scratch[MAX_ORDER + 1:MAX_ORDER + 1 + m, 0:m]
    RU = scratch[2 * (MAX_ORDER + 1):2 * (MAX_ORDER + 1) + m, 0:m]
    old = scratch[3 * (MAX_ORDER + 1):3 * (MAX_ORDER + 1) + m, 0:n]
    _ru_matrix(order, factor, R)
    _ru_matrix(order, 1.0, U)
    for i in range(m):
        for j in range(m):
            s = 0.0
            for q in range(m):
                s += R[i, q] * U[q, j]
            RU[i, j] = s
    for i in range(m):
        for k in range(n):
            old[i, k] = D[i, k]
    for j in range(m):
        for k in range(n):
            s = 0.0
            for i in range(m):
                s += RU[i, j] * old[i, k]
            D[j, k] = s


def history_scratch(n):
    """The scratch array of :func:`change_history` for n unknowns."""
    return np.zeros((4 * (MAX_ORDER + 1), max(n, MAX_ORDER + 1)))


@njit(cache=True)
def predict(D, order, atol, rtol, y_pred, psi, scale):
    """Predictor y_pred = sum_{j<=order} D_j, psi = sum_j gamma_j D_j / alpha_order and the
    error weights atol + rtol |y_pred|."""
    a = ALPHA[order]
    for i in range(D.shape[1]):
        s = 0.0
        p = 0.0
        for q in range(order + 1):
            s += D[q, i]
            if q > 0:
                p += GAMMA_SUM[q] * D[q, i]
        y_pred[i] = s
        psi[i] = p / a
        scale[i] = atol[i] + rtol[i] * abs(s)


@njit(cache=True)
def scaled_rms(v, scale, factor):
    """RMS of factor v_i / scale_i."""
    acc = 0.0
    for i in range(v.shape[0]):
        q = factor * v[i] / scale[i]
        acc += q * q
    return math.sqrt(acc / max(v.shape[0], 1))


@njit(cache=True)
def update_history(D, order, d):
    """After an accepted step with correction d (= D^{order+1} of the new point): the
    differences of the new interpolating polynomial (nabla^{j+1} y_n = nabla^j y_n -
    nabla^j y_{n-1})."""
    n = D.shape[1]
    for i in range(n):
        D[order + 2, i] = d[i] - D[order + 1, i]
        D[order + 1, i] = d[i]
    for q in range(order, -1, -1):
        for i in range(n):
            D[q, i] += D[q + 1, i]


@njit(cache=True)
def history_eval(theta, D, order, out):
    """Dense output inside the last step [t_new - h, t_new] at t_new - (1 - theta) h,
    0 <= theta <= 1: the interpolating polynomial through the differences (after
    :func:`update_history`), y = D_0 + sum_{j=1..order} D_j prod_{m<j} (m - 1 + theta) /
    (m + 1)."""
    n = D.shape[1]
    for i in range(n):
        out[i] = D[0, i]
    p = 1.0
    for j in range(1, order + 1):
        m = j - 1
        p *= (m - 1.0 + theta) / (m + 1.0)
        for i in range(n):
            out[i] += p * D[j, i]


@njit(cache=True)
def order_and_factor(D, order, err_norm, safety, scale):
    """New order and step factor after ``order + 1`` steps of one size: the neighbour
    order (k - 1, k, k + 1) whose error estimate allows the largest step (Shampine &
    Reichelt 1997, section 2.4). ``scale``: error weights at the new point."""
    em = math.inf
    ep = math.inf
    if order > 1:
        em = scaled_rms(D[order], scale, ERROR_CONST[order - 1])
    if order < MAX_ORDER:
        ep = scaled_rms(D[order + 2], scale, ERROR_CONST[order + 1])
    fm = em ** (-1.0 / order) if em > 0.0 else math.inf
    f0 = err_norm ** (-1.0 / (order + 1)) if err_norm > 0.0 else math.inf
    fp = ep ** (-1.0 / (order + 2)) if ep > 0.0 else math.inf
    best = f0
    new_order = order
    if fm > best:
        best = fm
        new_order = order - 1
    if fp > best:
        best = fp
        new_order = order + 1
    return new_order, min(MAX_FACTOR, safety * best)
