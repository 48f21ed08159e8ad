"""Rate-law kernels: every rate coefficient of a compiled mechanism in one numba call.

A mechanism is compiled (:mod:`plasmazero.physics.compiled`) into a closed set of rate-law
types, each reaction row ``j`` carrying a law code ``law[j]`` and its parameters in
``fpar[j, :16]`` (float64) and ``ipar[j, :4]`` (int64). Everything is SI: rate
coefficients in s^-1, m^3 s^-1 or m^6 s^-1 (by the number of reactants, a third body
``M`` counting as one), temperatures in K, densities in m^-3.

Law codes and their parameters
------------------------------
``ARRHENIUS = 1``
    k = A (Tg / 300 K)^b exp(-Ea / Tg); ``fpar[j, 0:3] = (A, b, Ea_K)``. The reference
    temperature 300 K is the convention of plasma chemistry mechanisms (Arrhenius 1889,
    Z. Phys. Chem. 4, 226; the modified form with a temperature power as in Kee, Coltrin &
    Glarborg 2003, Chemically Reacting Flow, Wiley, ch. 9, there with reference 1 K).
``ELECTRON_ARRHENIUS = 2``
    The same form in the electron temperature Te: k = A (Te / 300 K)^b exp(-Ea / Te);
    ``fpar[j, 0:3] = (A, b, Ea_K)``.
``FALLOFF_LINDEMANN = 3``
    k = k_inf Pr / (1 + Pr), Pr = k_0 [M] / k_inf (Lindemann 1922, Trans. Faraday Soc.
    17, 598), with k_0 and k_inf of the Arrhenius form above:
    ``fpar[j, 0:3]`` = low-pressure (A0 in m^6 s^-1 for a bimolecular channel, b0, Ea0_K),
    ``fpar[j, 3:6]`` = high-pressure (A_inf, b_inf, Ea_inf_K).
``FALLOFF_TROE = 4``
    The Lindemann form times the broadening factor F of Gilbert, Luther & Troe (1983,
    Ber. Bunsenges. Phys. Chem. 87, 169)::

        F_cent = (1 - alpha) exp(-T/T3) + alpha exp(-T/T1) + exp(-T2/T)
        c = -0.4 - 0.67 log10 F_cent,  n = 0.75 - 1.27 log10 F_cent,  d = 0.14
        f = (log10 Pr + c) / (n - d (log10 Pr + c))
        log10 F = log10 F_cent / (1 + f^2)

    ``fpar[j, 6:10] = (alpha, T3_K, T1_K, T2_K)``; ``ipar[j, 0] = 1`` when the T2 term is
    present (0: no exp(-T2/T) term).
``LANDAU_TELLER = 5``
    k = s_n A exp(-B Tg^(-1/3) + C Tg^(-2/3)) (Landau & Teller 1936, Phys. Z. Sowjetunion
    10, 34); ``fpar[j, 0:3] = (A, B_K13, C_K23)`` with B in K^(1/3) and C in K^(2/3), and
    ``fpar[j, 3] = s_n``, the level-ladder factor fixed at compile time
    (:func:`ladder_factor`; 1 for the 1 -> 0 transition); ``fpar[j, 4:6]`` = (level n,
    anharmonicity x_e), kept for reports only.
``EXPRESSION = 6``
    k = fpar[j, 0] * (the arithmetic program of :mod:`plasmazero.physics.expression`);
    ``fpar[j, 0]`` is the unit factor to SI; ``ipar[j, 0:4]`` = (code start, code length,
    constant start, constant length) in the concatenated program arrays of ``kernel_args``.
``ELECTRON_IMPACT = 7``
    k = fpar[j, 0] * k_electron_m3_s[ipar[j, 0]]: a column of the electron-impact rate
    coefficients computed from the EEDF, times a scale factor ``fpar[j, 0]``.
``REVERSE = 8``
    The reverse of reaction ``f = ipar[j, 0]`` by detailed balance: k_r = k_f / Kc(Tg), with
    Kc = exp(-ΔG°/(R Tg)) (p0 / (k_B Tg))^Δν in SI number-density units, p0 = 1e5 Pa
    (McBride, Zehe & Gordon 2002, NASA/TP-2002-211556, for the NASA polynomials; the
    Kc-Kp relation of ideal gases as in Kee, Coltrin & Glarborg 2003, ch. 9). The Gibbs energies
    g/(RT) come from :func:`plasmazero.physics.thermo.g_RT`. REVERSE rows are computed in a
    second pass after every forward row, so they may appear anywhere. For a falloff forward
    reaction dk_r/d[M] = (dk_f/d[M]) / Kc.

Kernel arguments
----------------
``kernel_args`` is a tuple of numpy arrays in the fixed order documented in
:mod:`plasmazero.physics.compiled` (``KERNEL_ARGS``)::

    (law, fpar, ipar, reactant_index, product_index, product_coeff,
     nasa7_coeffs, nasa7_T_K, energy_shift_J_mol, expr_code, expr_consts)

Electron temperature
--------------------
``rate_coefficients`` takes both ``Te_K`` and ``mean_energy_eV``. Where the mean energy is
given (finite and > 0) the electron temperature is taken from it, Te = (2/3) <ε> / k_B
(common practice, no source: the temperature of a Maxwellian with that mean energy);
otherwise ``Te_K`` is used as given. The same Te is seen by ELECTRON_ARRHENIUS and by the
``Te`` variable of EXPRESSION programs.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, STANDARD_PRESSURE_PA
from .expression import eval_expression_at
from .thermo import g_RT

ARRHENIUS = 1
ELECTRON_ARRHENIUS = 2
FALLOFF_LINDEMANN = 3
FALLOFF_TROE = 4
LANDAU_TELLER = 5
EXPRESSION = 6
ELECTRON_IMPACT = 7
REVERSE = 8

#: law code -> name used in messages and summaries
LAW_NAMES = {
    ARRHENIUS: "arrhenius",
    ELECTRON_ARRHENIUS: "electron_arrhenius",
    FALLOFF_LINDEMANN: "falloff (Lindemann)",
    FALLOFF_TROE: "falloff (Troe)",
    LANDAU_TELLER: "landau_teller",
    EXPRESSION: "expression",
    ELECTRON_IMPACT: "electron_impact",
    REVERSE: "reverse (detailed balance)",
}

N_FPAR = 16
N_IPAR = 4
T_REF_K = 300.0
_TROE_D = 0.14
_LN10 = math.log(10.0)
_EV_K = ELEMENTARY_CHARGE_C / BOLTZMANN_J_K


def ladder_factor(level, anharmonicity):
    """Level-ladder factor s_n of a vibrational-translational (VT) rate coefficient.

    k(n -> n-1) = s_n k(1 -> 0), with s_n = n (1 - x_e) / (1 - n x_e), where n is the
    vibrational level and x_e the anharmonicity constant (ω_e x_e / ω_e) of the oscillator.
    The factor n is the harmonic-oscillator scaling of the first-order perturbation theory
    of Schwartz, Slawsky & Herzfeld (SSH); (1 - x_e)/(1 - n x_e) is the first-order
    correction of the squared transition matrix element for an anharmonic (Morse)
    oscillator. The adiabaticity (energy-gap) factor of the full theory is not included.

    Parameters
    ----------
    level : int
        Upper vibrational level n >= 1.
    anharmonicity : float
        x_e, dimensionless, with 1 - n x_e > 0.

    Returns
    -------
    float
        s_n (dimensionless); s_1 = 1.

    References
    ----------
    Schwartz, R. N., Slawsky, Z. I. & Herzfeld, K. F. (1952), J. Chem. Phys. 20, 1591.
    Form of the anharmonic factor recalled from memory of Capitelli, M., Ferreira, C. M.,
    Gordiets, B. F. & Osipov, A. I. (2000), Plasma Kinetics in Atmospheric Gases,
    Springer, ch. 2 (scaling of VT rates along an anharmonic ladder).
    """
    n = float(level)
    return n * (1.0 - anharmonicity) / (1.0 - n * anharmonicity)


@njit(cache=True)
def _arrhenius(A, b, Ea_K, T_K, log_T_rel):
    """A (T/300)^b exp(-Ea/T) with log(T/300) precomputed."""
    return A * math.exp(b * log_T_rel - Ea_K / T_K)


@njit(cache=True)
def troe_log10_Fcent(alpha, T3, T1, T2, has_T2, T_K):
    """log10 of the Troe centre broadening factor F_cent(T) (Gilbert et al. 1983)."""
    Fcent = (1.0 - alpha) * math.exp(-T_K / T3) + alpha * math.exp(-T_K / T1)
    if has_T2:
        Fcent += math.exp(-T2 / T_K)
    if Fcent < 1e-300:
        Fcent = 1e-300
    return math.log10(Fcent)


@njit(cache=True)
def _troe_log10_F(log10_Pr, lf):
    """log10 of the Troe broadening factor and d(log10 F)/d(log10 Pr) (Gilbert et al.
    1983), from lf = log10 F_cent."""
    c = -0.4 - 0.67 * lf
    n = 0.75 - 1.27 * lf
    if log10_Pr == -math.inf:
        f = -1.0 / _TROE_D
        return lf / (1.0 + f * f), 0.0
    x = log10_Pr + c
    den = n - _TROE_D * x
    f = x / den
    g = 1.0 + f * f
    dfdx = n / (den * den)
    return lf / g, -lf * 2.0 * f * dfdx / (g * g)


@njit(cache=True)
def falloff_parts(fpar, ipar, j, troe, Tg_K, log_Tg):
    """The temperature-only parts of falloff row ``j``: (k0, k_inf, log10 F_cent).

    k0 (m^6 s^-1) and k_inf (m^3 s^-1) are modified Arrhenius forms; log10 F_cent is 0
    for Lindemann rows. With :func:`falloff_blend` this is the kernel's falloff law; the
    split lets a caller at a fixed temperature keep these parts and redo only the blend
    when the third-body density changes.
    """
    k0 = _arrhenius(fpar[j, 0], fpar[j, 1], fpar[j, 2], Tg_K, log_Tg)
    kinf = _arrhenius(fpar[j, 3], fpar[j, 4], fpar[j, 5], Tg_K, log_Tg)
    lf = 0.0
    if troe:
        lf = troe_log10_Fcent(fpar[j, 6], fpar[j, 7], fpar[j, 8], fpar[j, 9],
                              ipar[j, 0] == 1, Tg_K)
    return k0, kinf, lf


@njit(cache=True)
def falloff_blend(troe, k0, kinf, lf, nM):
    """Falloff rate coefficient and dk/dn_M at third-body density ``nM`` (m^-3).

    Lindemann (1922): k = k_inf Pr / (1 + Pr), Pr = k0 n_M / k_inf; Troe (Gilbert, Luther
    & Troe 1983): times the broadening factor F(Pr, F_cent).
    """
    if kinf <= 0.0:
        return 0.0, 0.0
    Pr = k0 * nM / kinf
    if not troe:
        return kinf * Pr / (1.0 + Pr), k0 / ((1.0 + Pr) * (1.0 + Pr))
    log10_Pr = math.log10(Pr) if Pr > 0.0 else -math.inf
    lF, dlF = _troe_log10_F(log10_Pr, lf)
    F = 10.0 ** lF
    k = kinf * Pr / (1.0 + Pr) * F
    if Pr > 0.0:
        # d ln k / d ln Pr = 1/(1+Pr) + d ln F / d ln Pr; Pr proportional to nM
        return k, k * (1.0 / (1.0 + Pr) + dlF) / nM
    return k, k0 * F


@njit(cache=True)
def rate_coefficients(kernel_args, Tg_K, Te_K, E_N_Td, mean_energy_eV, k_electron_m3_s,
                      n_M_m3, k_out, dk_dnM_out):
    """Fill every rate coefficient of a compiled mechanism (SI) in one call.

    Parameters
    ----------
    kernel_args : tuple of ndarray
        ``CompiledMechanism.kernel_args`` (order in :mod:`plasmazero.physics.compiled`).
    Tg_K : float
        Gas temperature, K.
    Te_K : float
        Electron temperature, K (used where ``mean_energy_eV`` is not finite and > 0).
    E_N_Td : float
        Reduced field, Td (seen by EXPRESSION programs).
    mean_energy_eV : float
        Electron mean energy, eV; when finite and > 0, Te = (2/3) mean_energy / k_B.
    k_electron_m3_s : ndarray, float64 (n_electron_processes,)
        Electron-impact rate coefficients, m^3 s^-1, columns as ``electron_processes``.
    n_M_m3 : ndarray, float64 (n_r,)
        Third-body density of each reaction, m^-3 (0 where the reaction has none).
    k_out : ndarray, float64 (n_r,)
        Output: rate coefficient of each reaction row, SI.
    dk_dnM_out : ndarray, float64 (n_r,)
        Output: d k / d n_M (m^3 times the units of k); non-zero only for falloff rows and
        their reverses.

    References
    ----------
    See the module docstring for the published form of each law.
    """
    law = kernel_args[0]
    fpar = kernel_args[1]
    ipar = kernel_args[2]
    expr_code = kernel_args[9]
    expr_consts = kernel_args[10]
    n_r = law.shape[0]
    if mean_energy_eV > 0.0 and mean_energy_eV < math.inf:
        Te = (2.0 / 3.0) * mean_energy_eV * _EV_K
        mean_eV = mean_energy_eV
    else:
        Te = Te_K
        mean_eV = 1.5 * Te_K / _EV_K
    variables = np.empty(4)
    log_Tg = math.log(Tg_K / T_REF_K)
    log_Te = math.log(Te / T_REF_K) if Te > 0.0 else -math.inf
    Tg_m13 = Tg_K ** (-1.0 / 3.0)
    has_reverse = False
    for j in range(n_r):
        code = law[j]
        dk_dnM_out[j] = 0.0
        if code == ARRHENIUS:
            k_out[j] = _arrhenius(fpar[j, 0], fpar[j, 1], fpar[j, 2], Tg_K, log_Tg)
        elif code == ELECTRON_IMPACT:
            k_out[j] = fpar[j, 0] * k_electron_m3_s[ipar[j, 0]]
        elif code == ELECTRON_ARRHENIUS:
            if Te > 0.0:
                k_out[j] = _arrhenius(fpar[j, 0], fpar[j, 1], fpar[j, 2], Te, log_Te)
            else:
                k_out[j] = 0.0
        elif code == FALLOFF_LINDEMANN or code == FALLOFF_TROE:
            troe = code == FALLOFF_TROE
            k0, kinf, lf = falloff_parts(fpar, ipar, j, troe, Tg_K, log_Tg)
            k_out[j], dk_dnM_out[j] = falloff_blend(troe, k0, kinf, lf, n_M_m3[j])
        elif code == LANDAU_TELLER:
            k_out[j] = fpar[j, 3] * fpar[j, 0] * math.exp(
                -fpar[j, 1] * Tg_m13 + fpar[j, 2] * Tg_m13 * Tg_m13)
        elif code == EXPRESSION:
            variables[0] = Tg_K
            variables[1] = Te
            variables[2] = E_N_Td
            variables[3] = mean_eV
            k_out[j] = fpar[j, 0] * eval_expression_at(expr_code, expr_consts, ipar[j, 0],
                                                       ipar[j, 1], ipar[j, 2], variables)
        elif code == REVERSE:
            has_reverse = True
        else:
            k_out[j] = math.nan
    if has_reverse:
        _reverse_pass(kernel_args, Tg_K, k_out, dk_dnM_out)


@njit(cache=True)
def _reverse_pass(kernel_args, Tg_K, k_out, dk_dnM_out):
    """Second pass: REVERSE rows from their forward rows by detailed balance.

    k_r = k_f / Kc with Kc = exp(-sum nu g/(RT)) (p0/(k_B T))^(sum nu), evaluated as
    k_f exp(sum nu g/(RT) + (sum nu) ln(k_B T / p0)) (one exponential, no overflow of the
    intermediate factors). References: see the module docstring.
    """
    law = kernel_args[0]
    ipar = kernel_args[2]
    reactant_index = kernel_args[3]
    product_index = kernel_args[4]
    product_coeff = kernel_args[5]
    nasa7_coeffs = kernel_args[6]
    nasa7_T_K = kernel_args[7]
    energy_shift_J_mol = kernel_args[8]
    g = np.empty(nasa7_coeffs.shape[0])
    g_RT(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol, Tg_K, g)
    log_kT_p0 = math.log(BOLTZMANN_J_K * Tg_K / STANDARD_PRESSURE_PA)
    for j in range(law.shape[0]):
        if law[j] != REVERSE:
            continue
        f = ipar[j, 0]
        dg = 0.0
        dnu = 0.0
        for m in range(product_index.shape[1]):
            s = product_index[f, m]
            if s >= 0:
                dg += product_coeff[f, m] * g[s]
                dnu += product_coeff[f, m]
        for m in range(reactant_index.shape[1]):
            s = reactant_index[f, m]
            if s >= 0:
                dg -= g[s]
                dnu -= 1.0
        inv_Kc = math.exp(dg + dnu * log_kT_p0)
        k_out[j] = k_out[f] * inv_Kc
        dk_dnM_out[j] = dk_dnM_out[f] * inv_Kc
