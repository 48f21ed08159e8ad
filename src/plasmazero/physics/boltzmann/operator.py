"""Discrete operator of the two-term Boltzmann equation on an energy grid (numba assembly).

The steady two-term equation for the isotropic part F0(u) of the EEDF (u in eV,
normalised as sum(sqrt(u) F0 du) = 1) is written, as in Hagelaar and Pitchford (2005,
their two-term equation), as a continuity equation in energy space,

    d/du [ W F0 - D dF0/du ] = S(F0),

with the flux coefficients (faces of the grid)

    W = -gamma u^2 sigma_eps                                  (elastic recoil)
        - (gamma/3) (E/N) (alpha/N) u / sigma_m               (spatial growth only)
        - 3 a (n_e/N) A1                                      (electron-electron)
    D = (gamma/3) (E/N)^2 u / sigma~                          (field)
        + gamma (k T_gas/e) u^2 sigma_eps                     (elastic, gas temperature)
        + 2 a (n_e/N) (A2 + u^(3/2) A3)                       (electron-electron)

where sigma_eps = sum_k (2 m/M_k) x_k sigma_el,k, sigma_m is the total momentum-transfer
cross section (elastic plus every inelastic and superelastic process, isotropic inelastic
scattering, Reid 1979 eq. 4) and sigma~ = sigma_m + (nu/N)/(gamma sqrt(u)) for temporal
growth (sigma_m otherwise). ``gamma = (2e/m)^(1/2)``.

Momentum transfer (documented choice): a gas given with ``momentum_transfer`` (elastic
only) contributes x sigma_el to sigma_eps and x sigma_el + x_lower sum_k sigma_k (+ the
superelastic cross sections) to sigma_m, i.e. inelastic collisions are taken to scatter
isotropically and to transfer all their momentum (Reid 1979, eq. 4). A gas given with
``total_momentum_transfer`` has its elastic part sigma_el = max(sigma_total - sum_k
sigma_k, 0) formed for the energy-loss term sigma_eps, and then enters sigma_m the same
way, which gives back sigma_total where the inelastic cross sections are below it.
Excited molecules get the elastic cross section of the ground state.

Field and elastic terms: exponential scheme
-------------------------------------------
The flux through a face between cells i and i+1 (spacing h) is the Scharfetter-Gummel
(1969) exponential scheme used by Hagelaar and Pitchford (2005, numerical method):
J = (D/h) [B(-z) F_i - B(z) F_(i+1)], z = W h / D, B(z) = z/(exp(z) - 1), exact for
constant W and D; J = W F_upwind where D = 0 (cold gas at zero field). Both end faces carry
no flux. The same flux is written J = W F^ - D (F_(i+1) - F_i)/h with the face value
F^ = [(B(-z) - 1) F_i + (1 - B(z)) F_(i+1)] / z, which splits it exactly into its field,
elastic and electron-electron parts for the power balance.

Inelastic terms: exact particle and energy conservation ("lever rule")
--------------------------------------------------------------------
For every collision process the electrons leaving cell j are counted with the exact cell
integral c_j = int_cell u sigma(u) du (loss gamma x c_j F_j). They arrive at the energy
t_j that the collision gives them (u_j - u_k for an excitation, (u_j - u_i)/2 twice for
ionization with equal sharing, u_j - u_i - u_0 plus a secondary in the lowest cell for
one-takes-all, u_j + u_k for a superelastic collision), and are shared between the two
cell centres that bracket t_j with the weights of linear interpolation. Each transfer then
moves exactly one (or two) electrons and exactly the energy u_k on the grid's discrete
measure (energy u_i for electrons of cell i), so the power balance closes to rounding.
This replaces Hagelaar and Pitchford's overlap of shifted cells by an equivalent scheme
that conserves energy exactly as well as particles (documented choice). Where t_j would
fall below the lowest centre u_0 (only in the cell that contains the threshold, t > -du),
the weights of cells 0 and 1 extrapolate linearly (the weight of cell 1 is then negative,
at most the small share of that cell above threshold), which keeps number and energy
exact and the scheme second order; superelastic transfers whose t would lie above the
highest centre are dropped (the EEDF there is >= 10 decades below its peak).

Growth and electron-electron terms
----------------------------------
Temporal growth adds (nu/N) sqrt(u) F0 to the loss side and the growth frequency to sigma~;
spatial growth adds the source -(alpha/N) j(u), with j = -(gamma/3)(u/sigma_m)((E/N) F0' +
(alpha/N) F0) the anisotropic current, shared half-half between the two cells of each face
(Hagelaar and Pitchford 2005, growth models). Electron-electron collisions
enter W and D through the integrals A1 = int_0^u sqrt(u') F0, A2 = int_0^u u'^(3/2) F0,
A3 = int_u^inf F0, with a = e^2 gamma ln(Lambda)/(24 pi eps0^2) (Rosenbluth et al. 1957,
Rockwood 1973; written in this form by Hagelaar and Pitchford 2005, e-e collisions). These
depend on F0 and are iterated by the solver.

Linear algebra
--------------
Row i is the balance of cell i; row 0 is replaced by the normalisation
sum(sqrt(u_i) F_i du) = 1 (at the converged solution the dropped row follows from the
others, by particle conservation). Without superelastic processes every inelastic gain
of cell i comes from cells j >= i, so the matrix is upper Hessenberg and the system is
solved in O(number of non-zeros) by marching down from the top cell: row i gives
F_(i-1) = (R_i + b_i F_i) / a_i, with R_i built from cells >= i and the flux J_i = R_i
carried down (all terms positive for the physical solution, so no cancellation grows;
:func:`march`). Superelastic gains come from lower cells and add a lower band of width
about u_k/du; the matrix is then assembled dense and factorised by Gaussian elimination
with partial pivoting restricted to that band (cost ~ p n^2/2 for lower bandwidth p), or
by a sparse LU (SuperLU) for wide bands (threshold :data:`DENSE_LAPACK_BANDWIDTH_FRACTION`,
chosen by measurement). The marching result is checked (finite, non-negative) and the
elimination is used whenever the check fails.

References
----------
G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005).
D. L. Scharfetter and H. K. Gummel, IEEE Trans. Electron Devices 16, 64 (1969).
M. N. Rosenbluth, W. M. MacDonald and D. L. Judd, Phys. Rev. 107, 1 (1957).
S. D. Rockwood, Phys. Rev. A 8, 2348 (1973).
I. D. Reid, Aust. J. Phys. 32, 231 (1979), eq. 4 (momentum transfer of inelastic collisions).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numba import njit

from .constants import GAMMA_M_S_EV
from .grid import eval_tables
from .mixture import ATTACHMENT, EXCITATION, IONIZATION, TOTAL

#: lower bandwidths above max(16, n/16) use a sparse LU (scipy.sparse.linalg.spsolve) instead
#: of the banded elimination: measured on this 2-core machine, the banded elimination
#: (~p n^2/2 operations) took 0.4, 0.9, 1.6, 2.8 ms for p = 2, 8, 16, 32 at n = 500 against
#: ~3 ms for a dense numpy.linalg.solve on an idle machine (150 ms under load, where the
#: sparse LU of the same matrix stayed near 5 ms: a CO2/H2 table of 22 fields went from
#: about 4 s to 0.75 s); the crossover scales as n
DENSE_LAPACK_BANDWIDTH_FRACTION = 1.0 / 16.0
#: smallest momentum-transfer cross section used in u/sigma (m2): guards empty tables
SIGMA_FLOOR_M2 = 1e-35
_GAMMA = GAMMA_M_S_EV


@dataclass(frozen=True)
class GridOperator:
    """The E/N-independent parts of the discrete operator on one grid.

    Attributes
    ----------
    grid : EnergyGrid
    sigma_eps_f : ndarray (n + 1)
        sum_k (2 m/M_k) x_k sigma_el,k at the faces, m2.
    sigma_m_f : ndarray (n + 1)
        Total momentum-transfer cross section at the faces, m2.
    loss : ndarray (n)
        Diagonal of the inelastic operator, m3/s per unit F.
    transfer_lo : ndarray of int (n_transfers, n)
        For every transfer (a process, or its reverse) and source cell j, the lower of the
        two cells that receive the electrons.
    transfer_glo, transfer_ghi : ndarray (n_transfers, n)
        Gain coefficients of those two cells, m3/s (population included). Secondary
        electrons put into cell 0 (one-takes-all) are not stored: row 0 is the
        normalisation (module docstring).
    lower_bandwidth : int
        Largest row-minus-column distance of the matrix (>= 1).
    marchable : bool
        True when no transfer moves electrons to a higher cell (no superelastic gains), so
        that :func:`march` applies.
    channel_ids : tuple of str
        Process ids, superelastic ones as "<id>:reverse".
    channel_process : ndarray of int
        Mixture index of the process of each channel.
    rate_rows : ndarray (n_channels, n)
        Rate coefficient k = rate_rows @ F, m3/s (per target in the lower level, or for
        reverse channels in the upper level).
    channel_population : ndarray
        Mole fraction of the targets of each channel (multiplies k in the operator).
    energy_rows : ndarray (n_channels, n)
        Power lost per unit target mole fraction, eV m3/s: P = population * energy_rows @ F
        (u_k k for excitation and ionization, the electrons' own energy for attachment,
        -u_k k for superelastic collisions; zero for channels outside the operator).
    production_row : ndarray (n)
        Net production frequency per N in the operator: nu/N = production_row @ F, m3/s.
    ionization_row, attachment_row : ndarray (n)
        Sum over processes of x k for ionization and for attachment, m3/s.
    """

    grid: object
    sigma_eps_f: np.ndarray
    sigma_m_f: np.ndarray
    loss: np.ndarray
    transfer_lo: np.ndarray
    transfer_glo: np.ndarray
    transfer_ghi: np.ndarray
    lower_bandwidth: int
    marchable: bool
    channel_ids: tuple
    channel_process: np.ndarray
    rate_rows: np.ndarray
    channel_population: np.ndarray
    energy_rows: np.ndarray
    production_row: np.ndarray
    ionization_row: np.ndarray
    attachment_row: np.ndarray


def build_operator(mixture, grid, forward, upper, growth="temporal", sharing="equal"):
    """Precompute the E/N-independent parts of the operator of ``mixture`` on ``grid``.

    Parameters
    ----------
    mixture : Mixture
    grid : EnergyGrid
    forward, upper : ndarray
        Per process, the mole fraction of the targets of the forward process and of the
        upper level of its superelastic reverse (:func:`.mixture.level_populations`).
    growth : {"temporal", "spatial", "none"}
        With "none" the operator conserves electrons: ionization is an energy loss without
        the secondary electron and attachment removes no electron (its rate is still computed).
    sharing : {"equal", "one_takes_all"}
        Energy sharing between the two electrons after ionization.

    Returns
    -------
    GridOperator
        Channels: every inelastic process in mixture order, then the superelastic reverses.

    References
    ----------
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
    (collision terms; the lever rule replaces their overlap of shifted cells, see the
    module docstring).
    I. D. Reid, Aust. J. Phys. 32, 231 (1979), eq. 4 (total momentum transfer).
    O. Klein and S. Rosseland, Z. Phys. 4, 46 (1921) (superelastic cross section).
    """
    n = grid.n_cells
    u_f, u_c, du = grid.faces_eV, grid.centres_eV, grid.du_eV
    u0 = u_c[0]
    forward = np.asarray(forward, dtype=float)
    upper = np.asarray(upper, dtype=float)
    packed = mixture.packed_tables
    kinds, thr_all = mixture.kinds, mixture.thresholds_eV
    P = kinds.size
    sig_f = eval_tables(packed, np.arange(P), u_f, False)

    # momentum transfer: elastic part per gas (Reid 1979, eq. 4) and the total
    inel = np.nonzero(kinds >= EXCITATION)[0]
    sigma_m_f = forward[inel] @ sig_f[inel] if inel.size else np.zeros(n + 1)
    sigma_eps_f = np.zeros(n + 1)
    for g in range(len(mixture.gases)):
        own = mixture.process_gas == g
        mt = np.nonzero(own & (kinds <= TOTAL))[0][0]
        sigma_el = sig_f[mt]
        if kinds[mt] == TOTAL:
            sigma_el = np.maximum(sigma_el - sig_f[own & (kinds >= EXCITATION)].sum(axis=0), 0.0)
        x = mixture.gas_fractions[g]
        sigma_eps_f += (2.0 * mixture.gas_mass_ratios[g] * x) * sigma_el
        sigma_m_f = sigma_m_f + x * sigma_el

    # forward channels: exact cell integrals, rates, energies
    kind_i, thr_i, pop_i = kinds[inel], thr_all[inel], forward[inel]
    rate = np.diff(eval_tables(packed, inel, u_f, True), axis=1)
    np.maximum(rate, 0.0, out=rate)
    rate *= _GAMMA
    is_ion, is_att = kind_i == IONIZATION, kind_i == ATTACHMENT
    in_op = ~is_att if growth == "none" else np.ones(inel.size, dtype=bool)
    energy = thr_i[:, None] * rate
    att_rows = np.nonzero(is_att)[0]
    energy[att_rows] = u_c * rate[att_rows] if growth != "none" else 0.0
    ion_row = (pop_i * is_ion) @ rate
    att_row = (pop_i * is_att) @ rate
    production = (ion_row - att_row) if growth != "none" else np.zeros(n)
    loss = (pop_i * in_op) @ rate

    # lever-rule transfers of the processes that move electrons
    mv = np.nonzero(~is_att)[0]
    target = u_c - thr_i[mv][:, None]
    coeff = pop_i[mv][:, None] * rate[mv]
    if growth != "none":
        ion_mv = np.nonzero(is_ion[mv])[0]
        if sharing == "equal":
            target[ion_mv] *= 0.5
            coeff[ion_mv] *= 2.0
        else:
            target[ion_mv] -= u0
    targets, coeffs = [target], [coeff]

    # superelastic reverses (Klein and Rosseland 1921), written with the forward cross section
    rev = np.array([k for k in inel if kinds[k] == EXCITATION and upper[k] > 0.0], dtype=np.int64)
    if rev.size:
        w_rev = mixture.weight_ratios[rev][:, None]
        thr_rev = thr_all[rev]
        rate_rev = np.maximum(np.diff(eval_tables(packed, rev, u_f, True, thr_rev), axis=1), 0.0) \
            * (_GAMMA / w_rev)
        t_rev = u_c + thr_rev[:, None]
        rate_rev[t_rev > u_c[-1] * (1.0 + 1e-12)] = 0.0
        s_rev = eval_tables(packed, rev, u_f[1:], False, thr_rev)
        sigma_m_f[1:] += ((upper[rev][:, None] / w_rev) * s_rev * (u_f[1:] + thr_rev[:, None])).sum(axis=0) / u_f[1:]
        loss = loss + upper[rev] @ rate_rev
        targets.append(t_rev)
        coeffs.append(upper[rev][:, None] * rate_rev)
    else:
        rate_rev = np.zeros((0, n))
    target = np.concatenate(targets)
    g = np.concatenate(coeffs)
    sp = (target - u0) / du
    lo = np.floor(sp).astype(np.int64)
    np.clip(lo, 0, n - 2, out=lo)
    w = sp - lo
    np.minimum(w, 1.0, out=w)
    ghi = g * w
    glo = g - ghi
    moved = g != 0.0
    reach = int(((lo + (ghi != 0.0)) - np.arange(n))[moved].max()) if np.any(moved) else -n

    ids = tuple(mixture.process_ids[k] for k in inel) + tuple(mixture.process_ids[k] + ":reverse" for k in rev)
    return GridOperator(
        grid=grid, sigma_eps_f=sigma_eps_f, sigma_m_f=sigma_m_f, loss=loss,
        transfer_lo=lo, transfer_glo=glo, transfer_ghi=ghi, lower_bandwidth=max(1, reach),
        marchable=reach <= 0, channel_ids=ids,
        channel_process=np.concatenate([inel, rev]).astype(np.int64),
        rate_rows=np.concatenate([rate, rate_rev]),
        channel_population=np.concatenate([pop_i, upper[rev]]),
        energy_rows=np.concatenate([energy, -thr_all[rev][:, None] * rate_rev]),
        production_row=production, ionization_row=ion_row, attachment_row=att_row,
    )


@njit(cache=True)
def _bernoulli(z):
    """B(z) = z / (exp(z) - 1), accurate for z >= 0 (series near 0), the Bernoulli function
    of the exponential scheme (Scharfetter and Gummel 1969)."""
    if abs(z) < 1e-5:
        return 1.0 - 0.5 * z + z * z / 12.0
    if z > 700.0:
        return z * math.exp(-z)
    return z / math.expm1(z)


@njit(cache=True)
def face_terms(u_f, sigma_m_f, sigma_eps_f, h, en, kT, nu, alpha, W_ee, D_ee, out):
    """Coefficients at the faces for given E/N and nonlinear parameters.

    Parameters
    ----------
    u_f, sigma_m_f, sigma_eps_f : ndarray (n + 1)
        Face energies (eV), total momentum transfer and elastic energy-loss cross sections (m2).
    h : float
        Cell width, eV.
    en : float
        E/N, V m2.
    kT : float
        Gas temperature, eV.
    nu : float
        nu/N (m3/s) of temporal growth, added to sigma_m as nu/(N gamma sqrt(u)); 0 otherwise.
    alpha : float
        alpha/N (m2) of spatial growth; 0 otherwise.
    W_ee, D_ee : ndarray (n + 1)
        Electron-electron convection and diffusion (zeros without e-e).
    out : ndarray (9, n + 1)
        Filled with the rows c = (gamma/3) u/sigma~, W_el, D_th, W, D, a, b, wl, wr: the
        total coefficients and the exponential-scheme flux J = a F_(f-1) - b F_f =
        W F^ - D dF/du with F^ = wl F_(f-1) + wr F_f (Scharfetter and Gummel 1969);
        zero at both boundary faces.

    References
    ----------
    D. L. Scharfetter and H. K. Gummel, IEEE Trans. Electron Devices 16, 64 (1969).
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005).
    """
    m = u_f.size
    out[:, :] = 0.0
    for f in range(1, m - 1):
        u = u_f[f]
        sig = sigma_m_f[f]
        if nu != 0.0:
            sig = max(sig + nu / (_GAMMA * math.sqrt(u)), 0.01 * sig)
        sig = max(sig, SIGMA_FLOOR_M2)
        c = _GAMMA / 3.0 * u / sig
        w_el = -_GAMMA * u * u * sigma_eps_f[f]
        d_th = _GAMMA * kT * u * u * sigma_eps_f[f]
        w = w_el + W_ee[f] - c * en * alpha
        d = c * en * en + d_th + D_ee[f]
        out[0, f] = c
        out[1, f] = w_el
        out[2, f] = d_th
        out[3, f] = w
        out[4, f] = d
        if d > 0.0 and abs(w) * h < 1e300 * d:
            z = w * h / d
            small = _bernoulli(abs(z))  # B(|z|), accurate; B(-|z|) = B(|z|) + |z|
            if z > 0.0:
                bz, bmz = small, small + z
            else:
                bz, bmz = small - z, small
            out[5, f] = d / h * bmz
            out[6, f] = d / h * bz
            if abs(z) < 1e-5:
                out[7, f] = 0.5 + z / 12.0
            else:
                out[7, f] = (bmz - 1.0) / z
        else:
            out[5, f] = max(w, 0.0)
            out[6, f] = max(-w, 0.0)
            out[7, f] = 1.0 if w > 0.0 else (0.5 if w == 0.0 else 0.0)
        out[8, f] = 1.0 - out[7, f]


@njit(cache=True)
def march(a, b, cl, cr, diag, t_lo, t_glo, t_ghi):
    """Solve the upper-Hessenberg system by marching down from the top cell (O(non-zeros)).

    Row i (i >= 1): J_(i+1) - J_i + diag_i F_i - P_i + cl_i F_(i-1) + (cr_i + cl_(i+1)) F_i
    + cr_(i+1) F_(i+1) = 0 with J_f = a_f F_(f-1) - b_f F_f and P_i the gains of cell i from
    cells >= i. F_(n-1) = 1 to start; the caller normalises. Returns an empty array when a
    pivot a_i - cl_i is not positive.
    """
    n = diag.size
    nt = t_lo.shape[0]
    F = np.zeros(n)
    P = np.zeros(n)
    F[n - 1] = 1.0
    for t in range(nt):
        j = n - 1
        P[t_lo[t, j]] += t_glo[t, j]
        P[t_lo[t, j] + 1] += t_ghi[t, j]
    j_next = 0.0
    for i in range(n - 1, 0, -1):
        r = j_next + (diag[i] + cr[i] + cl[i + 1]) * F[i] - P[i]
        if i + 1 < n:
            r += cr[i + 1] * F[i + 1]
        den = a[i] - cl[i]
        if not den > 0.0:
            return np.zeros(0)
        fm = (r + b[i] * F[i]) / den
        F[i - 1] = fm
        j_next = r + cl[i] * fm
        for t in range(nt):
            P[t_lo[t, i - 1]] += t_glo[t, i - 1] * fm
            P[t_lo[t, i - 1] + 1] += t_ghi[t, i - 1] * fm
        if fm > 1e250:
            for k in range(i - 1, n):
                F[k] *= 1e-250
            for k in range(n):
                P[k] *= 1e-250
            j_next *= 1e-250
    return F


@njit(cache=True)
def assemble(A, a, b, cl, cr, diag, t_lo, t_glo, t_ghi, norm):
    """Fill the dense matrix ``A`` (rows: cell balances, row 0: ``norm``); returns the rhs."""
    n = A.shape[0]
    A[:, :] = 0.0
    for f in range(1, n):
        A[f - 1, f - 1] += a[f] + cl[f]
        A[f - 1, f] += cr[f] - b[f]
        A[f, f - 1] += cl[f] - a[f]
        A[f, f] += b[f] + cr[f]
    for i in range(n):
        A[i, i] += diag[i]
    for t in range(t_lo.shape[0]):
        for j in range(n):
            A[t_lo[t, j], j] -= t_glo[t, j]
            A[t_lo[t, j] + 1, j] -= t_ghi[t, j]
    rhs = np.zeros(n)
    for j in range(n):
        A[0, j] = norm[j]
    rhs[0] = 1.0
    return rhs


@njit(cache=True)
def solve_lower_banded(A, rhs, p):
    """Solve A x = rhs in place by Gaussian elimination with partial pivoting in a lower band.

    ``A`` may be full above the diagonal but has no entry more than ``p`` rows below it.
    Returns x, or an empty array when a zero pivot is met.
    """
    n = A.shape[0]
    for k in range(n - 1):
        last = min(k + p, n - 1)
        piv = k
        big = abs(A[k, k])
        for r in range(k + 1, last + 1):
            if abs(A[r, k]) > big:
                big = abs(A[r, k])
                piv = r
        if big == 0.0:
            return np.zeros(0)
        if piv != k:
            for c in range(k, n):
                t = A[k, c]
                A[k, c] = A[piv, c]
                A[piv, c] = t
            t = rhs[k]
            rhs[k] = rhs[piv]
            rhs[piv] = t
        rowk = A[k]
        inv = 1.0 / rowk[k]
        for r in range(k + 1, last + 1):
            rowr = A[r]
            lr = rowr[k] * inv
            if lr != 0.0:
                rowr[k] = 0.0
                for c in range(k + 1, n):
                    rowr[c] -= lr * rowk[c]
                rhs[r] -= lr * rhs[k]
    if A[n - 1, n - 1] == 0.0:
        return np.zeros(0)
    x = np.zeros(n)
    for i in range(n - 1, -1, -1):
        s = rhs[i]
        row = A[i]
        for c in range(i + 1, n):
            s -= row[c] * x[c]
        x[i] = s / row[i]
    return x


def _sparse_solve(A, rhs):
    """Solve A x = rhs by sparse LU (SuperLU via scipy.sparse.linalg.spsolve).

    The discrete operator couples each cell to a few neighbours and, per inelastic process,
    to the cells one threshold away (and the secondaries of ionization to the low cells): a
    few per cent of the entries of the dense matrix are non-zero, so a sparse LU beats the
    dense one by an order of magnitude at 500 cells. Returns None when A is singular.
    """
    from scipy.sparse import csc_matrix
    from scipy.sparse.linalg import MatrixRankWarning, spsolve
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error", MatrixRankWarning)
        try:
            x = spsolve(csc_matrix(A), rhs)
        except (MatrixRankWarning, RuntimeError):
            return None
    return x if np.all(np.isfinite(x)) else None


def linear_solve(u_f, sigma_m_f, sigma_eps_f, h, en, kT, nu, alpha, W_ee, D_ee, loss, m,
                 t_lo, t_glo, t_ghi, lower_bandwidth, marchable, work, out):
    """One linear solve of the discrete equations for fixed nonlinear parameters.

    ``nu`` (temporal growth, m3/s) and ``alpha`` (spatial growth, m2) as in
    :func:`face_terms`, which fills ``out``. Marching when ``marchable`` (checked: finite,
    non-negative), else banded elimination in ``work`` (n x n), else a sparse LU for wide bands.
    Returns the EEDF normalised to sum(m F) = 1, or None when the system could not be solved.
    """
    n = m.size
    face_terms(u_f, sigma_m_f, sigma_eps_f, h, en, kT, nu, alpha, W_ee, D_ee, out)
    a, b = out[5], out[6]
    cl = np.zeros(n + 1)
    cr = np.zeros(n + 1)
    if alpha != 0.0:
        c = out[0, 1:n]
        cl[1:n] = c * (en / h - alpha * out[7, 1:n]) * alpha * 0.5 * h
        cr[1:n] = -c * (en / h + alpha * out[8, 1:n]) * alpha * 0.5 * h
    diag = loss + nu * m
    F = None
    if marchable:
        F = march(a, b, cl, cr, diag, t_lo, t_glo, t_ghi)
        if F.size == 0 or not np.all((F >= 0.0) & (F < 1e300)):
            F = None
    if F is None:
        if work.shape[0] != n:
            raise ValueError("work must be an n x n array when the system is not marchable")
        scale = float(np.max(a[:n] + b[:n] + diag))
        rhs = assemble(work, a, b, cl, cr, diag, t_lo, t_glo, t_ghi, m * (scale / m.max()))
        if lower_bandwidth > max(16.0, DENSE_LAPACK_BANDWIDTH_FRACTION * n):
            F = _sparse_solve(work, rhs)
            if F is None:
                return None
        else:
            F = solve_lower_banded(work, rhs, lower_bandwidth)
            if F.size == 0:
                return None
    s = float(np.dot(m, F))
    if not (s > 0.0 and np.isfinite(s)):
        return None
    return F / s
