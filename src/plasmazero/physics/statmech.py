"""Ideal-gas thermochemistry from molecular constants, and NASA-7 fits to it.

The rigid-rotor harmonic-oscillator (RRHO) model with electronic levels: the molar heat
capacity, enthalpy increment H(T) - H(0) and absolute entropy of an ideal gas at the
standard pressure p0 = 1e5 Pa are sums of a translational part (Sackur-Tetrode), a
rotational part (rigid rotor, with the leading quantum corrections to the classical
partition function, or an exact level sum with nuclear-spin weights for light homonuclear
molecules such as H2 and H2+), a vibrational part (independent harmonic oscillators; energies from
the lowest level, so the zero-point energy is in H(0)) and an electronic part (a sum over
levels, each with the rovibrational structure of the ground state). Anharmonicity,
vibration-rotation coupling, centrifugal stretching and the cut-off of levels at the
dissociation limit are left out; they make cp too low at high temperature, by a few tenths
of a per cent at 1000 K for stiff molecules and by several per cent above 2000 K for
weakly bound ones (measured in ``tests/physics/test_statmech.py``).

Units: temperatures in K, wavenumbers in cm^-1 (the spectroscopists' unit; converted to
K by the second radiation constant hc/k_B), masses in atomic mass units, energies in
J/mol. The dimensionless results are cp/R, (H(T) - H(0))/(R T) and S/R.

:func:`fit_nasa7` fits the two-range NASA 7-coefficient polynomials of
:mod:`plasmazero.physics.thermo` to such tables by constrained least squares: the two
ranges join at T_mid with equal cp, h and s, and h and s equal the tabulated values
exactly at 298.15 K, so that h(298.15 K) is the enthalpy of formation.

References
----------
McQuarrie, D. A. (1976), Statistical Mechanics, Harper & Row, chapters 5 (translation,
atoms), 6 (diatomics) and 8 (polyatomics): the RRHO model and its partition functions.

Chase, M. W. (1998), NIST-JANAF Thermochemical Tables, 4th ed., J. Phys. Chem. Ref.
Data Monograph 9, introduction: the same model as the starting point of the tables, the
thermal electron convention for ions, standard state p0 = 1 bar.

Mulholland, H. P. (1928), Proc. Cambridge Philos. Soc. 24, 280: the high-temperature
expansion of the rotational partition function of a linear rotor.

Stripp, K. F. & Kirkwood, J. G. (1951), J. Chem. Phys. 19, 1131: the first quantum
correction to the classical partition function of an asymmetric top.

McBride, B. J. & Gordon, S. (1992), Computer Program for Calculating and Fitting
Thermodynamic Functions, NASA RP-1271: least-squares fitting of the polynomials with
constraints at the joining temperature and at 298.15 K.

Lawson, C. L. (1961), Contributions to the Theory of Linear Least Maximum Approximation,
PhD thesis, University of California, Los Angeles: iteratively reweighted least squares
towards the minimax fit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import ATOMIC_MASS_KG, AVOGADRO_1_MOL, BOLTZMANN_J_K, ELECTRON_MASS_KG, STANDARD_PRESSURE_PA
from .thermo import R_J_MOL_K

#: Planck constant, J s (exact, SI 2019; CODATA 2018, Tiesinga et al. 2021).
PLANCK_J_S = 6.62607015e-34
#: Speed of light in vacuum, m/s (exact).
LIGHT_SPEED_M_S = 299792458.0
#: Second radiation constant hc/k_B in cm K: a wavenumber in cm^-1 times this is a
#: temperature in K (from the exact constants above and k_B).
CM1_TO_K = PLANCK_J_S * LIGHT_SPEED_M_S * 100.0 / BOLTZMANN_J_K
#: One cm^-1 per particle in J/mol (h c N_A x 100 /m).
CM1_TO_J_MOL = PLANCK_J_S * LIGHT_SPEED_M_S * 100.0 * AVOGADRO_1_MOL
#: Electron mass in atomic mass units (CODATA 2018 values in constants.py).
ELECTRON_MASS_AMU = ELECTRON_MASS_KG / ATOMIC_MASS_KG
#: Reference temperature of the tables, K.
T_REF_K = 298.15


@dataclass(frozen=True)
class RRHOModel:
    """Molecular constants of one species for the RRHO model (a record; spectroscopic units).

    Attributes
    ----------
    mass_amu : float
        Mass of the particle in atomic mass units (for an ion: the atoms' masses minus
        or plus the electron masses, see :func:`ion_mass_amu`).
    rotational_constants_cm1 : tuple of float
        ``()`` for an atom, ``(B,)`` for a linear molecule, ``(A, B, C)`` for a nonlinear
        one, in cm^-1.
    symmetry_number : int
        Rotational symmetry number sigma (1 for an atom).
    vibrations_cm1 : tuple of (float, int)
        Fundamental wavenumbers in cm^-1 with their degeneracies.
    electronic_levels_cm1 : tuple of (float, int)
        Electronic levels (energy above the ground level in cm^-1, degeneracy); the first
        entry is the ground level at 0 (its degeneracy includes spin and orbital parts).
    spin_weights_even_odd : tuple of (int, int)
        Only for a homonuclear linear molecule: nuclear-spin statistical weights of the
        even-J and odd-J rotational levels (H2, H2+: ``(1, 3)``). When given, the
        rotational partition function is the exact sum over levels of an equilibrium
        ortho-para mixture divided by the sum of the weights (which equals the sigma = 2
        result at high temperature); when empty, the expansion of Mulholland (1928).
    """

    mass_amu: float
    rotational_constants_cm1: tuple = ()
    symmetry_number: int = 1
    vibrations_cm1: tuple = ()
    electronic_levels_cm1: tuple = ((0.0, 1),)
    spin_weights_even_odd: tuple = ()


def ion_mass_amu(neutral_mass_amu, charge):
    """Mass of an ion: the neutral's mass minus ``charge`` electron masses, amu.

    References
    ----------
    Electron mass from CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010).
    """
    return float(neutral_mass_amu) - charge * ELECTRON_MASS_AMU


def rotational_constants_cm1(masses_amu, xyz_angstrom):
    """Rotational constants A >= B >= C (cm^-1) of a rigid body of point masses.

    Parameters
    ----------
    masses_amu : sequence of float
        Atomic masses, amu.
    xyz_angstrom : array (n, 3)
        Cartesian positions, Å.

    Returns
    -------
    tuple of float
        ``(B,)`` when the body is linear (smallest moment below 1e-8 amu Å^2), else
        ``(A, B, C)``; B = h / (8 pi^2 c I).

    References
    ----------
    McQuarrie (1976), Statistical Mechanics, section 8-3 (principal moments of inertia).
    """
    m = np.asarray(masses_amu, dtype=float)
    r = np.asarray(xyz_angstrom, dtype=float)
    r = r - (m[:, None] * r).sum(axis=0) / m.sum()
    inertia = np.zeros((3, 3))
    for mi, ri in zip(m, r):
        inertia += mi * (np.dot(ri, ri) * np.eye(3) - np.outer(ri, ri))
    moments = np.sort(np.linalg.eigvalsh(inertia))          # amu Å^2
    si = moments * ATOMIC_MASS_KG * 1e-20                     # kg m^2
    with np.errstate(divide="ignore"):
        b = PLANCK_J_S / (8.0 * math.pi**2 * LIGHT_SPEED_M_S * 100.0 * si)
    if moments[0] < 1e-8:
        return (float(b[1]),)
    return tuple(float(x) for x in b)


def bent_triatomic_xyz(r1_angstrom, r2_angstrom, angle_deg):
    """Cartesian positions (Å) of a bent triatomic X1-Y-X2: Y at the origin.

    Bond Y-X1 of length ``r1`` along +x, bond Y-X2 of length ``r2`` at ``angle_deg``
    from it in the xy plane. Plain geometry (no source needed).
    """
    a = math.radians(angle_deg)
    return np.array([[r1_angstrom, 0.0, 0.0], [0.0, 0.0, 0.0],
                     [r2_angstrom * math.cos(a), r2_angstrom * math.sin(a), 0.0]])


# --------------------------------------------------------------------------- parts


def _translation(model, T):
    """cp/R, (H-H0)/RT, S/R of the translation (Sackur-Tetrode at p0)."""
    m = model.mass_amu * ATOMIC_MASS_KG
    kT = BOLTZMANN_J_K * T
    lam3 = (2.0 * math.pi * m * kT / PLANCK_J_S**2) ** 1.5
    s = np.log(lam3 * kT / STANDARD_PRESSURE_PA) + 2.5
    return np.full_like(T, 2.5), np.full_like(T, 2.5), s


def _linear_rotor(theta_K, sigma, T):
    """ln q, T dlnq/dT and d(T^2 dlnq/dT)/dT of a linear rigid rotor (Mulholland 1928).

    q = (T / (sigma Theta)) (1 + x/3 + x^2/15 + 4 x^3/315), x = Theta / T.
    """
    x = theta_K / T
    g = 1.0 + x / 3.0 + x**2 / 15.0 + 4.0 * x**3 / 315.0
    g1 = 1.0 / 3.0 + 2.0 * x / 15.0 + 12.0 * x**2 / 315.0
    g2 = 2.0 / 15.0 + 24.0 * x / 315.0
    lnq = -np.log(x) - math.log(sigma) + np.log(g)
    u = 1.0 - x * g1 / g                                   # T dlnq/dT = -x dlnq/dx
    du_dx = -(g1 / g + x * g2 / g - x * g1**2 / g**2)
    c = u - x * du_dx                                      # d(T u)/dT = u + T du/dT
    return lnq, u, c


def _nonlinear_rotor(thetas_K, sigma, T):
    """ln q, T dlnq/dT, d(T^2 dlnq/dT)/dT of an asymmetric top (Stripp & Kirkwood 1951).

    q = (sqrt(pi) / sigma) (T^3 / (Theta_A Theta_B Theta_C))^(1/2) (1 + a / T) with
    a = [2 (Theta_A + Theta_B + Theta_C) - (Theta_B Theta_C / Theta_A + Theta_A Theta_C /
    Theta_B + Theta_A Theta_B / Theta_C)] / 12.
    """
    ta, tb, tc = thetas_K
    a = (2.0 * (ta + tb + tc) - (tb * tc / ta + ta * tc / tb + ta * tb / tc)) / 12.0
    y = a / T
    lnq = 0.5 * math.log(math.pi) - math.log(sigma) + 1.5 * np.log(T) - 0.5 * math.log(ta * tb * tc) \
        + np.log1p(y)
    # u = 1.5 - y/(1+y); with T dy/dT = -y, T du/dT = y/(1+y)^2, so
    # c = u + T du/dT = 1.5 - y^2/(1+y)^2
    u = 1.5 - y / (1.0 + y)
    c = 1.5 - y * y / (1.0 + y) ** 2
    return lnq, u, c


def _linear_rotor_sum(B_cm1, weights, T):
    """ln q, T dlnq/dT, d(T^2 dlnq/dT)/dT of a homonuclear linear rotor, summed over J.

    q = sum_J w_J (2J + 1) exp(-B J (J+1) hc / kT) / (w_even + w_odd), an equilibrium
    mixture of the nuclear-spin modifications (McQuarrie 1976, section 6-5).
    """
    theta = B_cm1 * CM1_TO_K
    j_max = int(math.sqrt(60.0 * float(np.max(T)) / theta)) + 10
    J = np.arange(j_max + 1)
    w = np.where(J % 2 == 0, weights[0], weights[1]) * (2 * J + 1) / float(sum(weights))
    keep = w > 0
    energy = B_cm1 * J[keep] * (J[keep] + 1.0)
    levels = tuple(zip(energy - energy.min(), w[keep]))   # energies from the lowest allowed level
    return _levels(levels, T)


def _oscillators(vibrations, T):
    """ln q, T dlnq/dT, d(T^2 dlnq/dT)/dT of harmonic oscillators from their lowest level."""
    lnq = np.zeros_like(T)
    u = np.zeros_like(T)
    c = np.zeros_like(T)
    for nu_cm1, g in vibrations:
        x = nu_cm1 * CM1_TO_K / T
        em = np.exp(-x)
        lnq -= g * np.log1p(-em)
        u += g * x * em / (1.0 - em)
        c += g * x**2 * em / (1.0 - em) ** 2
    return lnq, u, c


def _levels(levels, T):
    """ln q, T dlnq/dT, d(T^2 dlnq/dT)/dT of a set of discrete levels (energies in cm^-1)."""
    e = np.array([lv[0] for lv in levels], dtype=float) * CM1_TO_K      # K
    g = np.array([lv[1] for lv in levels], dtype=float)
    x = e[:, None] / T[None, :]
    w = g[:, None] * np.exp(-(x - x.min(axis=0)))
    q = w.sum(axis=0)
    m1 = (w * x).sum(axis=0) / q
    m2 = (w * x**2).sum(axis=0) / q
    lnq = np.log(q) - x.min(axis=0)
    return lnq, m1, m2 - m1**2


# --------------------------------------------------------------------------- totals


def rrho_thermo(model, T_K):
    """Dimensionless ideal-gas functions of one species in the RRHO model.

    Parameters
    ----------
    model : RRHOModel
    T_K : float or array
        Temperatures, K (> 0).

    Returns
    -------
    (cp_R, dH_RT, s_R) : float arrays of the shape of ``T_K``
        cp/R; (H(T) - H(0))/(R T), with H(0) the enthalpy of the lowest level at 0 K;
        S/R at p0 = 1e5 Pa (absolute, third-law entropy).

    References
    ----------
    McQuarrie (1976), Statistical Mechanics, chapters 5, 6 and 8;
    Mulholland (1928) and Stripp & Kirkwood (1951) for the rotational corrections;
    Chase (1998), NIST-JANAF Tables, introduction (standard state and conventions).
    """
    T = np.atleast_1d(np.asarray(T_K, dtype=float))
    cp, dh, s = _translation(model, T)
    rot = model.rotational_constants_cm1
    parts = []
    if len(rot) == 1 and model.spin_weights_even_odd:
        parts.append(_linear_rotor_sum(rot[0], model.spin_weights_even_odd, T))
    elif len(rot) == 1:
        parts.append(_linear_rotor(rot[0] * CM1_TO_K, model.symmetry_number, T))
    elif len(rot) == 3:
        parts.append(_nonlinear_rotor(tuple(b * CM1_TO_K for b in rot), model.symmetry_number, T))
    elif len(rot) != 0:
        raise ValueError("rotational_constants_cm1 must hold 0, 1 or 3 values")
    if model.vibrations_cm1:
        parts.append(_oscillators(model.vibrations_cm1, T))
    parts.append(_levels(model.electronic_levels_cm1, T))
    for lnq, u, c in parts:
        cp += c
        dh += u
        s += lnq + u
    shape = np.shape(T_K)
    return cp.reshape(shape), dh.reshape(shape), s.reshape(shape)


def enthalpy_increment_J_mol(model, T_K=T_REF_K):
    """H(T) - H(0) of one species in J/mol (RRHO model, :func:`rrho_thermo`)."""
    _, dh, _ = rrho_thermo(model, T_K)
    return float(dh) * R_J_MOL_K * float(T_K)


def reaction_enthalpy_298_J_mol(energy_0K_J_mol, increments):
    """Reaction enthalpy at 298.15 K from the reaction energy at 0 K.

    Delta_r H(298.15) = Delta_r E(0) + sum_i nu_i [H(298.15) - H(0)]_i (Kirchhoff's law
    integrated from 0 K).

    Parameters
    ----------
    energy_0K_J_mol : float
        Reaction energy at 0 K (products minus reactants, lowest levels), J/mol; e.g. an
        ionization energy, minus an electron affinity or minus a bond dissociation
        energy D0.
    increments : sequence of (nu, increment_J_mol)
        Every species of the reaction: stoichiometric coefficient (products positive)
        and its H(298.15) - H(0). The free electron of the thermal electron convention
        has 5/2 R x 298.15 K (:data:`ELECTRON_INCREMENT_J_MOL`).

    References
    ----------
    Chase (1998), NIST-JANAF Tables, introduction (enthalpies of formation at 0 and
    298.15 K); the integrated Kirchhoff law is common practice.
    """
    return float(energy_0K_J_mol) + sum(float(nu) * float(h) for nu, h in increments)


def formation_enthalpy_298_J_mol(reaction_enthalpy_J_mol, partners):
    """Enthalpy of formation at 298.15 K of the one product of a reaction not in ``partners``.

    For a reaction with the target species as a product (coefficient 1),
    Delta_f H(target) = Delta_r H(298.15) - sum_i nu_i Delta_f H_i over every other
    species i (reactants with negative nu). With the electron as a species of zero
    enthalpy of formation and the tabulated ions of the thermal electron convention this
    gives the target in the same convention (``mechanisms/thermo/README.md``).

    Parameters
    ----------
    reaction_enthalpy_J_mol : float
        Delta_r H(298.15), J/mol.
    partners : sequence of (nu, formation_enthalpy_J_mol)
        The other species.

    References
    ----------
    Hess's law (common practice, no source); conventions of Chase (1998), introduction.
    """
    return float(reaction_enthalpy_J_mol) - sum(float(nu) * float(h) for nu, h in partners)


#: H(298.15) - H(0) of the free electron in the thermal electron convention: 5/2 R T.
ELECTRON_INCREMENT_J_MOL = 2.5 * R_J_MOL_K * T_REF_K


# --------------------------------------------------------------------------- fitting


def _rows(T, scale):
    """Design rows (in tau = T/scale) of cp/R, h/RT and s/R for a1..a7 of one range.

    In tau the polynomials keep their form; :func:`_unscale` converts the coefficients.
    """
    tau = T / scale
    n = T.shape[0]
    cp = np.zeros((n, 7))
    h = np.zeros((n, 7))
    s = np.zeros((n, 7))
    for k in range(5):
        cp[:, k] = tau**k
        h[:, k] = tau**k / (k + 1)
        s[:, k] = np.log(tau) if k == 0 else tau**k / k
    h[:, 5] = 1.0 / tau
    s[:, 6] = 1.0
    return cp, h, s


def _unscale(b, scale):
    """Coefficients in T from those in tau = T/scale (a_k = b_k / scale^k; a6, a7 shifted)."""
    a = np.empty(7)
    for k in range(5):
        a[k] = b[k] / scale**k
    a[5] = b[5] * scale
    a[6] = b[6] - b[0] * math.log(scale)
    return a


def fit_nasa7(T_K, cp_R, h_J_mol, s_R, T_mid_K=1000.0, T_ref_K=T_REF_K, minimax_iterations=30):
    """Fit two-range NASA 7-coefficient polynomials to a thermo table.

    Weighted least squares of the relative cp error, of the error of h/(R T_mid) (an
    absolute enthalpy error) and of the error of s/R over the table, subject to equal cp, h and s of the two ranges at ``T_mid_K`` and to h
    and s equal to the table's values at ``T_ref_K`` (which must be in the table, in the
    low range). The weights of the cp and h terms are then updated ``minimax_iterations``
    times by Lawson's rule (w <- w (e / e_max)^(1/2), e the current error), which moves
    the least-squares solution towards the smallest largest error.

    Parameters
    ----------
    T_K : array (n,)
        Temperatures, K, covering both ranges.
    cp_R : array (n,)
        cp/R.
    h_J_mol : array (n,)
        Absolute enthalpy of the tables (its value at 298.15 K is the enthalpy of
        formation), J/mol.
    s_R : array (n,)
        S/R at p0.
    T_mid_K : float
        Joining temperature, K.
    T_ref_K : float
        Temperature of the exact h and s constraints, K.
    minimax_iterations : int
        Number of Lawson reweighting steps (0: plain weighted least squares).

    Returns
    -------
    coeffs : float64 array (2, 7)
        Rows low, high (``a1..a7``), the layout of :mod:`plasmazero.physics.thermo`.

    References
    ----------
    McBride & Gordon (1992), NASA RP-1271 (least-squares fit of the polynomials with
    constraints at the joining temperature and at 298.15 K); McBride, Zehe & Gordon
    (2002), NASA/TP-2002-211556 (the 7-term form); Lawson, C. L. (1961), Contributions to
    the Theory of Linear Least Maximum Approximation, PhD thesis, UCLA (the reweighting).
    """
    T = np.asarray(T_K, dtype=float)
    cp = np.asarray(cp_R, dtype=float)
    h = np.asarray(h_J_mol, dtype=float)
    hRT = h / (R_J_MOL_K * T)
    s = np.asarray(s_R, dtype=float)
    ref = np.flatnonzero(np.isclose(T, T_ref_K, rtol=0, atol=1e-9))
    if ref.size != 1 or T_ref_K > T_mid_K:
        raise ValueError("the table must hold T_ref_K once, in the low range")
    scale = float(T_mid_K)
    ranges = ((T <= T_mid_K, 0), (T > T_mid_K, 7))
    design = [(mask, col, _rows(T[mask], scale)) for mask, col in ranges]
    # constraints: continuity at T_mid (cp, h, s) and exact h, s at T_ref
    cm, hm, sm = (r[0] for r in _rows(np.array([T_mid_K]), scale))
    _, hr, sr = (r[0] for r in _rows(np.array([T_ref_K]), scale))
    C = np.zeros((5, 14))
    for i, r in enumerate((cm, hm, sm)):
        C[i, :7], C[i, 7:] = r, -r
    C[3, :7], C[4, :7] = hr, sr
    d = np.array([0.0, 0.0, 0.0, hRT[ref[0]], s[ref[0]]])
    w_cp = np.ones_like(T)
    w_h = np.ones_like(T)
    for _ in range(int(minimax_iterations) + 1):
        blocks, targets = [], []
        for mask, col, (rcp, rh, rs) in design:
            for rows, y, w in ((rcp, cp[mask], w_cp[mask] / cp[mask]), (rh, hRT[mask], w_h[mask] * T[mask] / scale),
                               (rs, s[mask], np.ones(int(mask.sum())))):
                full = np.zeros((rows.shape[0], 14))
                full[:, col:col + 7] = rows * w[:, None]
                blocks.append(full)
                targets.append(y * w)
        A = np.vstack(blocks)
        y = np.concatenate(targets)
        kkt = np.block([[A.T @ A, C.T], [C, np.zeros((5, 5))]])
        b = np.linalg.solve(kkt, np.concatenate([A.T @ y, d]))[:14]
        coeffs = np.array([_unscale(b[:7], scale), _unscale(b[7:], scale)])
        pcp, ph, _ = nasa7_evaluate(coeffs, T_mid_K, T)
        e_cp = np.abs(pcp / cp - 1.0)
        e_h = np.abs(ph - h)
        w_cp = w_cp * np.sqrt(e_cp / max(e_cp.max(), 1e-300)) + 1e-6
        w_h = w_h * np.sqrt(e_h / max(e_h.max(), 1e-300)) + 1e-6
        w_cp /= w_cp.max()
        w_h /= w_h.max()
    return coeffs


def rrho_table(model, formation_enthalpy_J_mol, T_K):
    """Tabulate cp/R, absolute h (J/mol) and s/R of a species from its RRHO model.

    h(T) = Delta_f H(298.15) + [H(T) - H(0)] - [H(298.15) - H(0)], the absolute enthalpy
    of the NASA tables (``mechanisms/thermo/README.md``).

    Parameters
    ----------
    model : RRHOModel
    formation_enthalpy_J_mol : float
        Delta_f H(298.15 K), J/mol, in the thermal electron convention for ions.
    T_K : array
        Temperatures, K.

    Returns
    -------
    (cp_R, h_J_mol, s_R) : float arrays

    References
    ----------
    Chase (1998), NIST-JANAF Tables, introduction (H - H(298.15) tables); McQuarrie
    (1976) for the model (:func:`rrho_thermo`).
    """
    T = np.asarray(T_K, dtype=float)
    cp, dh, s = rrho_thermo(model, T)
    h = formation_enthalpy_J_mol + dh * R_J_MOL_K * T - enthalpy_increment_J_mol(model, T_REF_K)
    return cp, h, s


def default_fit_grid(T_low_K=200.0, T_mid_K=1000.0, T_high_K=6000.0):
    """Temperatures of the fits: every 10 K in the low range, every 25 K above, and 298.15 K."""
    low = np.arange(T_low_K, T_mid_K + 1e-9, 10.0)
    high = np.arange(T_mid_K + 25.0, T_high_K + 1e-9, 25.0)
    return np.unique(np.concatenate([low, [T_REF_K], high]))


def nasa7_from_rrho(model, formation_enthalpy_J_mol, T_ranges_K=(200.0, 1000.0, 6000.0)):
    """NASA-7 coefficients of a species fitted to its RRHO table, with the fit errors.

    Parameters
    ----------
    model : RRHOModel
    formation_enthalpy_J_mol : float
        Delta_f H(298.15 K), J/mol.
    T_ranges_K : (T_low, T_mid, T_high)
        Ranges of the polynomials, K.

    Returns
    -------
    coeffs : float64 array (2, 7)
    errors : dict
        ``cp_rel`` (largest |relative cp error|), ``h_J_mol`` (largest |h error|, J/mol),
        ``s_J_mol_K`` (largest |s error|), over the fit grid and a 5 K check grid.

    References
    ----------
    McBride & Gordon (1992), NASA RP-1271; :func:`fit_nasa7`, :func:`rrho_table`.
    """
    T_low, T_mid, T_high = (float(t) for t in T_ranges_K)
    T = default_fit_grid(T_low, T_mid, T_high)
    cp, h, s = rrho_table(model, formation_enthalpy_J_mol, T)
    coeffs = fit_nasa7(T, cp, h, s, T_mid_K=T_mid)
    return coeffs, nasa7_fit_errors(coeffs, T_ranges_K, model, formation_enthalpy_J_mol)


def nasa7_fit_errors(coeffs, T_ranges_K, model, formation_enthalpy_J_mol, step_K=5.0):
    """Largest deviations of NASA-7 polynomials from the RRHO table over their ranges.

    Returns a dict with ``cp_rel`` (relative), ``h_J_mol`` and ``s_J_mol_K`` (absolute),
    evaluated every ``step_K`` from T_low to T_high and at 298.15 K.
    """
    T_low, T_mid, T_high = (float(t) for t in T_ranges_K)
    T = np.unique(np.concatenate([np.arange(T_low, T_high + 1e-9, step_K), [T_REF_K]]))
    cp, h, s = rrho_table(model, formation_enthalpy_J_mol, T)
    pcp, ph, ps = nasa7_evaluate(coeffs, T_mid, T)
    return {"cp_rel": float(np.max(np.abs(pcp / cp - 1.0))),
            "h_J_mol": float(np.max(np.abs(ph - h))),
            "s_J_mol_K": float(np.max(np.abs(ps - s)) * R_J_MOL_K)}


def nasa7_evaluate(coeffs, T_mid_K, T_K):
    """cp/R, h (J/mol) and s/R of two-range NASA-7 polynomials at ``T_K`` (plain numpy).

    Vectorized over an array of temperatures, as the fits need (the kernels of
    :mod:`plasmazero.physics.thermo` evaluate many species at one temperature).

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (7-coefficient form).
    """
    T = np.asarray(T_K, dtype=float)
    a = np.where((T <= T_mid_K)[..., None], np.asarray(coeffs)[0], np.asarray(coeffs)[1])
    a = np.moveaxis(a, -1, 0)
    cp = a[0] + a[1] * T + a[2] * T**2 + a[3] * T**3 + a[4] * T**4
    hRT = a[0] + a[1] * T / 2 + a[2] * T**2 / 3 + a[3] * T**3 / 4 + a[4] * T**4 / 5 + a[5] / T
    s = a[0] * np.log(T) + a[1] * T + a[2] * T**2 / 2 + a[3] * T**3 / 3 + a[4] * T**4 / 4 + a[6]
    return cp, hRT * R_J_MOL_K * T, s


__all__ = ["RRHOModel", "rrho_thermo", "rrho_table", "enthalpy_increment_J_mol",
           "reaction_enthalpy_298_J_mol", "formation_enthalpy_298_J_mol", "fit_nasa7",
           "nasa7_from_rrho", "nasa7_fit_errors", "nasa7_evaluate", "rotational_constants_cm1",
           "bent_triatomic_xyz", "ion_mass_amu", "default_fit_grid", "CM1_TO_K", "CM1_TO_J_MOL",
           "ELECTRON_INCREMENT_J_MOL", "T_REF_K"]
