"""RODAS4: a stiffly accurate, L-stable Rosenbrock method of order 4 (embedded order 3).

One step from (t0, y0) with step h, in the transformed form of Hairer & Wanner (1996,
section IV.7, eq. (7.25)) that needs no matrix-vector products::

    (I/(gamma h) - J) u_i = f(t0 + alpha_i h, y0 + sum_{j<i} a_ij u_j)
                            + sum_{j<i} (c_ij / h) u_j + h d_i f_t,       i = 1..6
    y1 = y0 + sum_i m_i u_i

with J = df/dy and f_t = df/dt at (t0, y0). RODAS4 is stiffly accurate: stages 5 and 6
are evaluated at t0 + h, the stage-6 point y0 + sum_{j<6} a_6j u_j is the embedded
order-3 solution, y1 is that point plus u_6, and u_6 itself is the error estimate
(m_i = a_6i for i < 6, m_6 = 1). Dense output of order 3 (Hairer & Wanner's continuous
extension)::

    y(t0 + theta h) = (1 - theta) y0 + theta (y1 + (1 - theta) (H1 + theta H2)),
    H1 = sum_{i<=5} h1_i u_i,  H2 = sum_{i<=5} h2_i u_i.

Provenance of the coefficients: recalled from memory of Hairer & Wanner (1996), section
IV.7, and of the coefficient list of the RODAS code published with that book (method
choice "RODAS4"), 16 significant digits. They are checked in the tests: the eight
order-4 conditions of Hairer & Wanner's Table 7.1 hold to round-off after transforming back
to (alpha_ij, gamma_ij, b_i), the embedded solution satisfies the four order-3
conditions, the dense output satisfies the order-3 continuous conditions, and the
measured order of convergence on smooth nonlinear problems is 4.

References
----------
Hairer, E. & Wanner, G. (1996), Solving Ordinary Differential Equations II: Stiff and
Differential-Algebraic Problems, 2nd ed., Springer, section IV.7 (Rosenbrock methods,
the transformed form (7.25), order conditions Table 7.1, the method RODAS and its dense
output).
"""

from __future__ import annotations

import numpy as np
from numba import njit

from .kinetics import COND_EXPANSION, RHS, evaluate, field_at
from .linalg import lu_factor, lu_solve, sparse_factor, sparse_solve

N_STAGES = 6
#: order of the method and of its embedded error estimate
ORDER = 4
EMBEDDED_ORDER = 3
#: order of the dense output
DENSE_ORDER = 3

GAMMA = 0.25

#: a_ij of the transformed form (stage points), row i uses columns j < i
A = np.zeros((6, 6))
A[1, 0] = 1.544
A[2, 0] = 0.9466785280815826
A[2, 1] = 0.2557011698983284
A[3, 0] = 3.314825187068521
A[3, 1] = 2.896124015972201
A[3, 2] = 0.9986419139977817
A[4, 0] = 1.221224509226641
A[4, 1] = 6.019134481288629
A[4, 2] = 12.53708332932087
A[4, 3] = -0.6878860361058950
A[5, 0:4] = A[4, 0:4]
A[5, 4] = 1.0

#: c_ij of the transformed form
C = np.zeros((6, 6))
C[1, 0] = -5.6688
C[2, 0] = -2.430093356833875
C[2, 1] = -0.2063599157091915
C[3, 0] = -0.1073529058151375
C[3, 1] = -9.594562251023355
C[3, 2] = -20.47028614809616
C[4, 0] = 7.496443313967647
C[4, 1] = -10.24680431464352
C[4, 2] = -33.99990352819905
C[4, 3] = 11.70890893206160
C[5, 0] = 8.083246795921522
C[5, 1] = -7.981132988064893
C[5, 2] = -31.52159432874371
C[5, 3] = 16.31930543123136
C[5, 4] = -6.058818238834054

#: alpha_i: stage times as fractions of h
ALPHA = np.array([0.0, 0.386, 0.21, 0.63, 1.0, 1.0])
#: d_i = gamma_i = sum_j gamma_ij: weights of h f_t in the stage right-hand sides
D = np.array([0.25, -0.1043, 0.1035, -0.3620000000000023e-01, 0.0, 0.0])

#: m_i: weights of the solution (stiffly accurate: the last row of A, plus u_6)
M = np.array([A[4, 0], A[4, 1], A[4, 2], A[4, 3], 1.0, 1.0])
#: weights of the embedded (order-3) solution: the stage-6 point
M_EMBEDDED = np.array([A[4, 0], A[4, 1], A[4, 2], A[4, 3], 1.0, 0.0])

#: dense-output coefficients (on u_1..u_5)
H1 = np.array([10.12623508344586, -7.487995877610167, -34.80091861555747,
               -7.992771707568823, 1.025137723295662])
H2 = np.array([-0.6762803392801253, 6.087714651680015, 16.43084320892478,
               24.76722511418386, -6.594389125716872])


def standard_form():
    """The method in the standard Rosenbrock form (alpha_ij, gamma_ij, b_i, b_hat_i).

    Transformation of Hairer & Wanner (1996), section IV.7, after eq. (7.25):
    Gamma^{-1} = diag(1/gamma) - C, alpha_ij = (A Gamma)_ij, b = m Gamma.

    Returns
    -------
    dict
        ``alpha`` (6, 6), ``gamma`` (6, 6) (with ``GAMMA`` on the diagonal), ``b`` (6,),
        ``b_hat`` (6,) and ``dense(theta)`` -> b(theta) (6,) of the continuous extension.
    """
    g_inv = np.eye(N_STAGES) / GAMMA - C
    gam = np.linalg.inv(g_inv)
    alpha = A @ gam
    b = M @ gam
    b_hat = M_EMBEDDED @ gam

    def dense(theta):
        h1 = np.r_[H1, 0.0]
        h2 = np.r_[H2, 0.0]
        w = theta * M + theta * (1.0 - theta) * (h1 + theta * h2)
        return w @ gam

    return {"alpha": alpha, "gamma": gam, "b": b, "b_hat": b_hat, "dense": dense}


#: smallest |det| of the 2 x 2 Woodbury capacitance matrix relative to the sum of the
#: magnitudes of its two terms (a choice of this code, no source): below it the step is
#: factored densely
WOODBURY_TOLERANCE = 1e-8


#: slots of the Woodbury scratch ``wb`` (float64 (6,)) shared by the stage kernels
_WB_C11, _WB_C12, _WB_C21, _WB_C22, _WB_DET, _WB_SPARSE = range(6)
WB_SIZE = 6


@njit(cache=True)
def rodas4_factor(h, J, expand, u, c, w, lu, piv, sp, wb):
    """Factor the stage matrix I/(gamma h) - J of one RODAS4 step (:func:`rodas4_step`).

    Sparse LU with the Woodbury capacitance matrix of the rank-one parts in ``wb``, or the
    dense LU (also the fallback when a sparse pivot is tiny). ``expand``: the expansion
    term is on; ``u``, ``c``, ``w``: the rank-one vectors of the split Jacobian
    (``model[5][7:10]``, kinetics docstring). The kernel takes these arrays rather than the
    whole model tuple: a large tuple argument costs compile time in every kernel that
    takes it. Returns 0 or the singular pivot code of
    :func:`plasmazero.numerics.linalg.lu_factor`.
    """
    n = J.shape[0]
    inv_gh = 1.0 / (GAMMA * h)
    configured = sp[0][0] == 1
    # rank-one parts of M = I/(gamma h) - J_split + U V^T: U = [-w, u], V = [1, c]
    tb = configured and sp[0][1] == 1
    ex = configured and expand
    order, indptr, indices, diag, orow, ocol, val, wv, Z, stats = (
        sp[1], sp[2], sp[3], sp[4], sp[5], sp[6], sp[7], sp[8], sp[9], sp[10])
    sparse = configured
    C11 = 1.0
    C12 = 0.0
    C21 = 0.0
    C22 = 1.0
    det = 1.0
    info = 0
    if sparse:
        for p in range(val.shape[0]):
            val[p] = -J[orow[p], ocol[p]]
        for k in range(n):
            val[diag[k]] += inv_gh
        info = sparse_factor(indptr, indices, diag, val, wv)
        if info == 0 and (tb or ex):
            # Woodbury: Z = A^{-1} U, capacitance matrix I + V^T Z
            if tb:
                for i in range(n):
                    Z[0, i] = -w[i]
                sparse_solve(indptr, indices, diag, val, order, Z[0], wv)
                for i in range(n):
                    C11 += Z[0, i]
            if ex:
                for i in range(n):
                    Z[1, i] = u[i]
                sparse_solve(indptr, indices, diag, val, order, Z[1], wv)
                for i in range(n):
                    C22 += c[i] * Z[1, i]
            if tb and ex:
                for i in range(n):
                    C12 += Z[1, i]
                    C21 += c[i] * Z[0, i]
            det = C11 * C22 - C12 * C21
            # relative to its two terms: invariant under rescaling u -> u/a, c -> a c
            if not (abs(det) > WOODBURY_TOLERANCE * (abs(C11 * C22) + abs(C12 * C21))):
                info = n + 2
        if info == 0:
            stats[0] += 1
        else:
            sparse = False
            stats[1] += 1
    wb[_WB_C11] = C11
    wb[_WB_C12] = C12
    wb[_WB_C21] = C21
    wb[_WB_C22] = C22
    wb[_WB_DET] = det
    wb[_WB_SPARSE] = 1.0 if sparse else 0.0
    if not sparse:
        for i in range(n):
            for m in range(n):
                lu[i, m] = -J[i, m]
            if tb:
                wi = w[i]
                for m in range(n):
                    lu[i, m] -= wi
            if ex:
                ui = u[i]
                for m in range(n):
                    lu[i, m] += ui * c[m]
            lu[i, i] += inv_gh
        info = lu_factor(lu, piv)
    return info


@njit(cache=True)
def rodas4_stage_state(s, t, y, h, U, ystage):
    """State ``ystage`` = y + sum_m A[s, m] U_m of stage ``s`` >= 1; returns its time, s."""
    n = y.shape[0]
    for i in range(n):
        v = y[i]
        for m in range(s):
            v += A[s, m] * U[m, i]
        ystage[i] = v
    return t + ALPHA[s] * h


@njit(cache=True)
def rodas4_stage_solve(s, h, fstage, fdt, use_fdt, expand, c, lu, piv, U, sp, wb):
    """Stage vector U_s from f at the stage state (``fstage``): solve with the factors of
    :func:`rodas4_factor` (Woodbury correction on the sparse path; ``expand`` and ``c``
    as there)."""
    n = fstage.shape[0]
    inv_h = 1.0 / h
    for i in range(n):
        v = fstage[i]
        for m in range(s):
            v += C[s, m] * inv_h * U[m, i]
        if use_fdt:
            v += h * D[s] * fdt[i]
        U[s, i] = v
    if wb[_WB_SPARSE] != 0.0:
        configured = sp[0][0] == 1
        tb = configured and sp[0][1] == 1
        ex = configured and expand
        order, indptr, indices, diag, val, wv, Z = sp[1], sp[2], sp[3], sp[4], sp[7], sp[8], sp[9]
        us = U[s]
        sparse_solve(indptr, indices, diag, val, order, us, wv)
        if tb or ex:
            C11 = wb[_WB_C11]
            C12 = wb[_WB_C12]
            C21 = wb[_WB_C21]
            C22 = wb[_WB_C22]
            det = wb[_WB_DET]
            t1 = 0.0
            t2 = 0.0
            for i in range(n):
                if tb:
                    t1 += us[i]
                if ex:
                    t2 += c[i] * us[i]
            s1 = (C22 * t1 - C12 * t2) / det
            s2 = (C11 * t2 - C21 * t1) / det
            for i in range(n):
                if tb:
                    us[i] -= Z[0, i] * s1
                if ex:
                    us[i] -= Z[1, i] * s2
    else:
        lu_solve(lu, piv, U[s])


@njit(cache=True)
def rodas4_finish(y, U, ynew):
    """The new solution y + sum_s M_s U_s."""
    for i in range(y.shape[0]):
        v = y[i]
        for s in range(N_STAGES):
            v += M[s] * U[s, i]
        ynew[i] = v


@njit(cache=True)
def rodas4_step(t, y, h, f0, J, fdt, use_fdt, model, lu, piv, U, ystage, fstage, ynew, sp):
    """One RODAS4 step: stage vectors ``U`` (6, n) and the new solution ``ynew``.

    Parameters
    ----------
    t : float
        Start of the step, s.
    y : ndarray (n,)
        Solution at ``t``, m^-3.
    h : float
        Step size, s.
    f0 : ndarray (n,)
        f(t, y).
    J : ndarray (n, n)
        df/dy at (t, y).
    fdt : ndarray (n,)
        df/dt at (t, y) (read only when ``use_fdt``).
    use_fdt : bool
        Whether f depends on t explicitly on this step.
    model : tuple
        Passed to :func:`plasmazero.numerics.kinetics.evaluate` (field of the current
        segment in ``model[4]``).
    lu, piv, U, ystage, fstage, ynew : ndarray
        Work arrays (n, n), (n,), (6, n), (n,), (n,); ``ynew`` (n,) is the output.
    sp : tuple
        Linear solver (``integrate.linear_solver_arrays``): ``sp[0][0] == 1`` selects the
        sparse LU on the filled pattern, otherwise the dense LU. With the sparse LU, ``J``
        is the ``JACOBIAN_SPLIT`` Jacobian of :mod:`plasmazero.numerics.kinetics`: the
        rank-one parts w 1^T (third bodies, when ``sp[0][1] == 1``) and -u c^T
        (expansion) are added by the Woodbury formula (:mod:`plasmazero.numerics.linalg`).
        ``sp[10]`` counts [sparse factorisations, dense fallbacks].

    Returns
    -------
    int
        0 on success, otherwise the singular-pivot code of
        :func:`plasmazero.numerics.linalg.lu_factor` (nothing else is computed then).
        Stage 6's vector ``U[5]`` is the error estimate. The step loop of
    :mod:`plasmazero.numerics.integrate` runs the same stages through
    :func:`rodas4_factor`, :func:`rodas4_stage_state`, :func:`rodas4_stage_solve` and
    :func:`rodas4_finish` with its own call of the right-hand side, so that this kernel
    (which links the right-hand side again) is not compiled there.

    References
    ----------
    Hairer & Wanner (1996), Solving ODEs II, section IV.7, eq. (7.25) and the RODAS
    method.
    """
    wb = np.zeros(WB_SIZE)
    expand = model[4][COND_EXPANSION] != 0.0
    info = rodas4_factor(h, J, expand, model[5][7], model[5][8], model[5][9], lu, piv, sp, wb)
    if info != 0:
        return info
    for s in range(N_STAGES):
        if s == 0:
            for i in range(y.shape[0]):
                fstage[i] = f0[i]
        else:
            ts = rodas4_stage_state(s, t, y, h, U, ystage)
            evaluate(field_at(model[4], ts), ystage, model, fstage, J, RHS)
        rodas4_stage_solve(s, h, fstage, fdt, use_fdt, expand, model[5][8], lu, piv, U, sp, wb)
    rodas4_finish(y, U, ynew)
    return 0


@njit(cache=True)
def dense_coefficients(U, h1_out, h2_out):
    """H1 and H2 of the dense output from the stage vectors of an accepted step."""
    n = U.shape[1]
    for i in range(n):
        a = 0.0
        b = 0.0
        for s in range(5):
            a += H1[s] * U[s, i]
            b += H2[s] * U[s, i]
        h1_out[i] = a
        h2_out[i] = b


@njit(cache=True)
def dense_eval(theta, y0, y1, h1, h2, out):
    """Dense output at t0 + theta h (0 <= theta <= 1), order 3 (module docstring)."""
    s1 = 1.0 - theta
    for i in range(y0.shape[0]):
        out[i] = s1 * y0[i] + theta * (y1[i] + s1 * (h1[i] + theta * h2[i]))
