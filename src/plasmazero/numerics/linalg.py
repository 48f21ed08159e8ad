"""Dense and sparse LU factorisations, compiled in numba.

The Rosenbrock stepper solves with the same matrix ``I/(gamma h) - J`` six times per step;
it is factored once per step and the six right-hand sides are solved by forward and back
substitution. The work arrays are allocated once by the caller and reused.

Dense
-----
:func:`lu_factor` / :func:`lu_solve`: Gaussian elimination with partial pivoting
(2/3 n^3 flops). Used for small systems and as the fallback of the sparse path.

Sparse, on the known pattern
----------------------------
The pattern of J is known from the stoichiometry before the run (reactants of a reaction
-> its net species; third-body efficiencies; linear terms; the diagonal), so the symbolic
work is done once per integration (:func:`sparse_symbolic`):

* Fill-reducing ordering: exact minimum degree on the symmetrised pattern (P + P^T),
  ties broken by the lowest index (Tinney & Walker 1967; George & Liu 1989). The
  elimination graph is simulated on a dense boolean adjacency matrix (O(n^2) memory,
  fine for the few hundred species of a plasma mechanism); its final edges are the
  pattern of L + U.
* Static pivoting: the diagonal pivots are taken in that order (a symmetric permutation);
  no row exchanges, so the pattern and the operation sequence are fixed. For
  I/(gamma h) - J of kinetics this is the usual choice (the diagonal holds 1/(gamma h) plus
  each species' loss frequency). It is guarded: :func:`sparse_factor` reports failure when
  a pivot is not finite or smaller than ``PIVOT_TOLERANCE`` times the largest entry of its
  row of the matrix, or when the growth max|U| / max|A| exceeds ``GROWTH_LIMIT``; the
  stepper then factors that step's matrix densely with partial pivoting (counted in
  ``Counters.n_lu_dense_fallback``).
* Numeric factorisation (:func:`sparse_factor`) row by row (the "ikj" form of Gaussian
  elimination, each row scattered into a dense work vector), on the filled pattern in
  compressed rows; :func:`sparse_solve` does the permuted triangular solves.

Two parts of J are dense but of rank one (:mod:`plasmazero.numerics.kinetics`, mode
``JACOBIAN_SPLIT``): the third-body terms of collision partners with the default
efficiency 1, w 1^T (every species is a partner, so each three-body reaction fills whole
rows: with them in the pattern the shipped CO2/H2 mechanism's pattern is 85 % full and
its LU 94 % of the dense work, without them 33 % and 12 %), and the expansion term
-u c^T (a full matrix). The sparse path factors the rest, A, and adds both by the
Woodbury formula (Woodbury 1950; Sherman & Morrison 1950 for rank one) with
U = [-w, u], V = [1, c]: (A + U V^T)^{-1} b = x - Z (I + V^T Z)^{-1} V^T x, x = A^{-1} b,
Z = A^{-1} U (two extra solves per factorisation, a 2 x 2 system and two updates per
solve). Including the dense rows and column in the pattern would fill the matrix.

References
----------
Golub, G. H. & Van Loan, C. F. (2013), Matrix Computations, 4th ed., Johns Hopkins
University Press, algorithm 3.4.1 (Gaussian elimination with partial pivoting, outer
product form), algorithms 3.1.1-3.1.2 (triangular solves), section 3.4.4 (growth
factor). Tinney, W. F. & Walker, J. W. (1967), Direct solutions of sparse network
equations by optimally ordered triangular factorization, Proc. IEEE 55, 1801-1809
(minimum degree, their "scheme 2"). George, A. & Liu, J. W. H. (1989), The evolution of
the minimum degree ordering algorithm, SIAM Review 31, 1-19. Duff, I. S., Erisman, A. M.
& Reid, J. K. (1986), Direct Methods for Sparse Matrices, Oxford University Press,
chapters 7 and 9 (static pivoting on a fixed pattern). Sherman, J. & Morrison, W. J.
(1950), Adjustment of an inverse matrix corresponding to a change in one element of a
given matrix, Ann. Math. Stat. 21, 124-127. Woodbury, M. A. (1950), Inverting modified
matrices, Memorandum Report 42, Statistical Research Group, Princeton University.
"""

from __future__ import annotations

import numpy as np
from numba import njit

#: smallest |pivot| of the static-pivot sparse LU, relative to the largest |entry| of the
#: pivot's row of the matrix (a choice of this code, no source)
PIVOT_TOLERANCE = 1e-10
#: largest growth factor max|U| / max|A| accepted from the sparse LU (a choice of this
#: code; partial pivoting keeps it below ~10 in practice, Golub & Van Loan 2013, 3.4.4)
GROWTH_LIMIT = 1e8


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


@njit(cache=True)
def sparse_symbolic(pattern):
    """Minimum-degree order and the filled pattern of L + U, in compressed rows.

    Parameters
    ----------
    pattern : ndarray, bool (n, n)
        Structural non-zeros of the matrix (the diagonal is always included).

    Returns
    -------
    order : ndarray int64 (n,)
        ``order[k]``: the original index eliminated at step k (permuted row/column k).
    indptr, indices : ndarray int64 (n + 1,), (nnz,)
        Filled pattern of the permuted matrix, rows in compressed form, columns sorted.
    diag : ndarray int64 (n,)
        Position of the diagonal entry of each row in ``indices``.
    flops : float
        Multiply-add count of one numeric factorisation (for the dense/sparse choice).

    References
    ----------
    Tinney & Walker (1967), Proc. IEEE 55, 1801 (minimum degree); George & Liu (1989),
    SIAM Review 31, 1.
    """
    n = pattern.shape[0]
    adj = np.zeros((n, n), dtype=np.bool_)
    deg = np.zeros(n, dtype=np.int64)
    for i in range(n):
        for j in range(n):
            if i != j and (pattern[i, j] or pattern[j, i]):
                adj[i, j] = True
    for i in range(n):
        d = 0
        for j in range(n):
            if adj[i, j]:
                d += 1
        deg[i] = d
    done = np.zeros(n, dtype=np.bool_)
    order = np.empty(n, dtype=np.int64)
    nbr = np.empty(n, dtype=np.int64)
    for k in range(n):
        best = -1
        bd = n + 1
        for v in range(n):
            if not done[v] and deg[v] < bd:
                bd = deg[v]
                best = v
        order[k] = best
        done[best] = True
        m = 0
        for w in range(n):
            if adj[best, w] and not done[w]:
                nbr[m] = w
                m += 1
        for a in range(m):
            va = nbr[a]
            deg[va] -= 1
            for b in range(m):
                vb = nbr[b]
                if a != b and not adj[va, vb]:
                    adj[va, vb] = True
                    deg[va] += 1
    # adj is now the filled graph; rows of the permuted matrix in compressed form
    nnz = n
    for i in range(n):
        for j in range(n):
            if adj[i, j]:
                nnz += 1
    indptr = np.zeros(n + 1, dtype=np.int64)
    indices = np.empty(nnz, dtype=np.int64)
    diag = np.empty(n, dtype=np.int64)
    p = 0
    for k in range(n):
        v = order[k]
        for l in range(n):
            if l == k or adj[v, order[l]]:
                if l == k:
                    diag[k] = p
                indices[p] = l
                p += 1
        indptr[k + 1] = p
    flops = 0.0
    for i in range(n):
        for p in range(indptr[i], diag[i]):
            kk = indices[p]
            flops += 1.0 + (indptr[kk + 1] - diag[kk] - 1)
    return order, indptr, indices, diag, flops


@njit(cache=True)
def sparse_factor(indptr, indices, diag, val, w):
    """Factor in place A = L U on the filled pattern with diagonal (static) pivots.

    Parameters
    ----------
    indptr, indices, diag : ndarray int64
        From :func:`sparse_symbolic`.
    val : ndarray float64 (nnz,)
        Entries of the permuted matrix on the filled pattern (zeros at fill positions);
        on return L (strict lower part, unit diagonal implied) and U, with the
        reciprocal of each pivot stored on the diagonal (the solves multiply instead of
        dividing: a division costs several multiplications' time).
    w : ndarray float64 (n,)
        Work vector, zero on entry and on return.

    Returns
    -------
    int
        0 on success; ``k + 1`` when the pivot of row k is not finite or below
        ``PIVOT_TOLERANCE`` times the row's largest entry, or ``n + 1`` when the growth
        max|U| / max|A| exceeds ``GROWTH_LIMIT`` (module docstring): factor densely.

    References
    ----------
    Duff, Erisman & Reid (1986), Direct Methods for Sparse Matrices, chapters 7 and 9;
    Golub & Van Loan (2013), section 3.4.4 (growth factor).
    """
    n = indptr.shape[0] - 1
    a_max = 0.0
    u_max = 0.0
    for i in range(n):
        r_max = 0.0
        for p in range(indptr[i], indptr[i + 1]):
            v = val[p]
            w[indices[p]] = v
            if abs(v) > r_max:
                r_max = abs(v)
        if r_max > a_max:
            a_max = r_max
        for p in range(indptr[i], diag[i]):
            k = indices[p]
            lik = w[k] * val[diag[k]]       # the diagonal of a finished row holds 1/pivot
            w[k] = lik
            if lik != 0.0:
                for q in range(diag[k] + 1, indptr[k + 1]):
                    w[indices[q]] -= lik * val[q]
        for p in range(indptr[i], indptr[i + 1]):
            c = indices[p]
            val[p] = w[c]
            w[c] = 0.0
            if c >= i and abs(val[p]) > u_max:
                u_max = abs(val[p])
        piv = val[diag[i]]
        if not (abs(piv) > PIVOT_TOLERANCE * r_max) or not (abs(piv) < np.inf):
            return i + 1
        val[diag[i]] = 1.0 / piv
    if not (u_max <= GROWTH_LIMIT * a_max):
        return n + 1
    return 0


@njit(cache=True)
def _row_dot(val, indices, w, lo, hi):
    """sum of val[p] w[indices[p]] over p in [lo, hi), as two partial sums (they halve
    the chain of dependent multiply-adds of a triangular solve)."""
    s0 = 0.0
    s1 = 0.0
    p = lo
    while p + 1 < hi:
        s0 += val[p] * w[indices[p]]
        s1 += val[p + 1] * w[indices[p + 1]]
        p += 2
    if p < hi:
        s0 += val[p] * w[indices[p]]
    return s0 + s1


@njit(cache=True)
def sparse_solve(indptr, indices, diag, val, order, b, w):
    """Solve A x = b in place with the factors of :func:`sparse_factor`.

    ``b`` is in the original order (overwritten by x); ``w`` (n,) is work space.

    References
    ----------
    Golub & Van Loan (2013), algorithms 3.1.1 and 3.1.2, on the permuted system.
    """
    n = order.shape[0]
    for k in range(n):
        w[k] = b[order[k]]
    for i in range(n):
        w[i] -= _row_dot(val, indices, w, indptr[i], diag[i])
    for i in range(n - 1, -1, -1):
        # the diagonal holds 1/pivot (sparse_factor)
        w[i] = (w[i] - _row_dot(val, indices, w, diag[i] + 1, indptr[i + 1])) * val[diag[i]]
    for k in range(n):
        b[order[k]] = w[k]
        w[k] = 0.0
