"""Step-size control, kept apart from the stepper: a PI controller on the error norm.

The stepper returns a scaled error norm ``err`` (accept when ``err <= 1``); the controller
turns it into the next step size. For an accepted step the proportional-integral rule of
Gustafsson, Lundh & Söderlind is used,

    h_new = h * clip(safety * err^(-k_I) * err_prev^(k_P), fac_min, fac_max),
    k_I = 0.7 / q,  k_P = 0.4 / q,

with ``q`` = (order of the embedded error estimate) + 1 = 4 for RODAS4 (the estimate is
O(h^4)) and ``err_prev`` the norm of the previous accepted step. A rejected step uses the
plain (elementary) rule ``h * max(fac_min, safety * err^(-1/q))`` and no growth is allowed
on the step that follows a rejection (Hairer, Nørsett & Wanner 1993, section II.4).

References
----------
Gustafsson, K., Lundh, M. & Söderlind, G. (1988), A PI stepsize control for the numerical
solution of ordinary differential equations, BIT 28, 270-287.
Gustafsson, K. (1991), Control theoretic techniques for stepsize selection in explicit
Runge-Kutta methods, ACM Trans. Math. Softw. 17, 533-554.
Hairer, E., Nørsett, S. P. & Wanner, G. (1993), Solving Ordinary Differential Equations I,
2nd ed., Springer, section II.4, eqs. (4.12)-(4.13) and the PI form with the exponents
0.7/q and 0.4/q (recalled from memory of that section).
"""

from __future__ import annotations

from numba import njit

#: q = order of the error estimate + 1 (RODAS4: embedded order 3)
ERROR_EXPONENT_ORDER = 4.0
SAFETY = 0.9
#: smallest and largest factor h_new / h (common practice, no source; Hairer & Wanner use 0.2 and 6)
FAC_MIN = 0.2
FAC_MAX = 6.0
#: floor of err used in the power laws (avoids division by zero for exact steps)
ERR_FLOOR = 1e-10


@njit(cache=True)
def next_step_accepted(h, err, err_prev, after_reject):
    """Step size after an accepted step (PI control, Gustafsson et al. 1988).

    Parameters
    ----------
    h : float
        Size of the accepted step, s.
    err : float
        Scaled error norm of the accepted step (<= 1).
    err_prev : float
        Scaled error norm of the previous accepted step (1.0 after a restart).
    after_reject : bool
        True when the step before this one was rejected: no growth allowed.

    Returns
    -------
    float
        Proposed next step size, s.

    References
    ----------
    Gustafsson, Lundh & Söderlind (1988), BIT 28, 270; Hairer, Nørsett & Wanner (1993),
    Solving ODEs I, section II.4.
    """
    q = ERROR_EXPONENT_ORDER
    e = max(err, ERR_FLOOR)
    ep = max(err_prev, ERR_FLOOR)
    fac = SAFETY * e ** (-0.7 / q) * ep ** (0.4 / q)
    top = 1.0 if after_reject else FAC_MAX
    fac = min(top, max(FAC_MIN, fac))
    return h * fac


@njit(cache=True)
def next_step_rejected(h, err):
    """Step size after a rejected step (elementary controller, err > 1).

    Parameters
    ----------
    h : float
        Size of the rejected step, s.
    err : float
        Its scaled error norm (> 1; ``inf`` for a step that gave non-finite values).

    Returns
    -------
    float
        Step size for the retry, s: between ``FAC_MIN * h`` and ``SAFETY * h``.

    References
    ----------
    Hairer, Nørsett & Wanner (1993), Solving ODEs I, section II.4, eq. (4.13).
    """
    q = ERROR_EXPONENT_ORDER
    if not (err < float("inf")):
        return FAC_MIN * h
    fac = SAFETY * err ** (-1.0 / q)
    return h * max(FAC_MIN, min(SAFETY, fac))


@njit(cache=True)
def error_norm(y0, y1, err_vec, atol, rtol):
    """Scaled root-mean-square error of a step and the component that dominates it.

    ``err = sqrt(mean((e_i / sc_i)^2))`` with ``sc_i = atol_i + rtol_i max(|y0_i|, |y1_i|)``
    (Hairer, Nørsett & Wanner 1993, Solving ODEs I, section II.4, eq. (4.11), recalled
    from memory; the same norm is used for the stiff codes of Hairer & Wanner 1996).

    Returns
    -------
    (float, int)
        The norm (``inf`` when any component is not finite) and the index of the
        component with the largest |e_i| / sc_i.
    """
    n = y0.shape[0]
    acc = 0.0
    worst = 0
    big = -1.0
    for i in range(n):
        sc = atol[i] + rtol[i] * max(abs(y0[i]), abs(y1[i]))
        q = abs(err_vec[i]) / sc
        if not (q < float("inf")):
            return float("inf"), i
        if q > big:
            big = q
            worst = i
        acc += q * q
    return (acc / max(n, 1)) ** 0.5, worst
