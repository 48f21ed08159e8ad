"""Dense LU factorisation with partial pivoting, compiled in numba.

The Rosenbrock stepper solves with the same matrix ``I/(gamma h) - J`` six times per step;
it is factored once per step (:func:`lu_factor`) and the six right-hand sides are solved
by forward and back substitution (:func:`lu_solve`). Mechanisms of a few hundred species
give matrices for which a dense factorisation (2/3 n^3 flops) costs well under a
millisecond, so no sparse ordering is attempted; the work arrays are allocated once by
the caller and reused.

References
----------
Golub, G. H. & Van Loan, C. F. (2013), Matrix Computations, 4th ed., Johns Hopkins
University Press, algorithm 3.4.1 (Gaussian elimination with partial pivoting, outer
product form) and algorithms 3.1.1-3.1.2 (triangular solves).
"""

from __future__ import annotations

from numba import njit


@njit(cache=True)
def lu_factor(a, piv):
    """Factor the square matrix ``a`` in place as P A = L U (partial pivoting).

    Parameters
    ----------
    a : ndarray, float64 (n, n)
        The matrix; on return its strict lower part holds L (unit diagonal implied) and its
        upper part U.
    piv : ndarray, int64 (n,)
        Output: row ``k`` was swapped with row ``piv[k]`` at elimination step ``k``.

    Returns
    -------
    int
        0 on success; ``k + 1`` when the pivot of column ``k`` is exactly zero or not
        finite (the matrix is singular to working precision), in which case ``a`` is left
        partially factored.

    References
    ----------
    Golub & Van Loan (2013), Matrix Computations, 4th ed., algorithm 3.4.1.
    """
    n = a.shape[0]
    for k in range(n):
        p = k
        big = abs(a[k, k])
        for i in range(k + 1, n):
            v = abs(a[i, k])
            if v > big:
                big = v
                p = i
        piv[k] = p
        if not (big > 0.0) or big == float("inf"):
            return k + 1
        if p != k:
            for j in range(n):
                tmp = a[k, j]
                a[k, j] = a[p, j]
                a[p, j] = tmp
        inv = 1.0 / a[k, k]
        for i in range(k + 1, n):
            a[i, k] *= inv
        for i in range(k + 1, n):
            lik = a[i, k]
            if lik != 0.0:
                for j in range(k + 1, n):
                    a[i, j] -= lik * a[k, j]
    return 0


@njit(cache=True)
def lu_solve(lu, piv, b):
    """Solve A x = b in place with the factors of :func:`lu_factor`.

    Parameters
    ----------
    lu : ndarray, float64 (n, n)
        Factors from :func:`lu_factor`.
    piv : ndarray, int64 (n,)
        Pivot record from :func:`lu_factor`.
    b : ndarray, float64 (n,)
        Right-hand side; overwritten by the solution x.

    References
    ----------
    Golub & Van Loan (2013), Matrix Computations, 4th ed., algorithms 3.1.1 and 3.1.2.
    """
    n = lu.shape[0]
    for k in range(n):
        p = piv[k]
        if p != k:
            tmp = b[k]
            b[k] = b[p]
            b[p] = tmp
    for i in range(1, n):
        s = b[i]
        for j in range(i):
            s -= lu[i, j] * b[j]
        b[i] = s
    for i in range(n - 1, -1, -1):
        s = b[i]
        for j in range(i + 1, n):
            s -= lu[i, j] * b[j]
        b[i] = s / lu[i, i]
