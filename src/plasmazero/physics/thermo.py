"""Ideal-gas thermochemistry from NASA 7-coefficient polynomials.

Arrays for ``n`` species (the layout every kernel of plasmazero uses):

``nasa7_coeffs``
    float64 ``(n, 2, 7)``; ``[:, 0, :]`` the low range ``T_low <= T <= T_mid``,
    ``[:, 1, :]`` the high range ``T_mid < T <= T_high``; coefficients ``a1 .. a7``.
``nasa7_T_K``
    float64 ``(n, 3)``: ``(T_low, T_mid, T_high)`` in K.
``energy_shift_J_mol``
    float64 ``(n,)``: added to the enthalpy (and so to the Gibbs energy) of each
    species. Zero for species that have their own entry; an electronically or
    vibrationally excited state takes its parent's polynomials and its excitation
    energy here, ``E_eV * e * N_A`` J/mol, with the parent's heat capacity and entropy.

The polynomial forms (McBride, Zehe & Gordon 2002; the 7-coefficient form used by the
earlier NASA programs and by the Burcat & Ruscic database)::

    cp/R    = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
    h/(RT)  = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
    s/R     = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7
    g/(RT)  = h/(RT) - s/R

``h`` is the absolute (standard) enthalpy of the convention of these tables: its value
at 298.15 K is the standard enthalpy of formation, so differences of ``h`` between
products and reactants are reaction enthalpies. ``s`` is the absolute entropy at the
standard pressure p0 = 1e5 Pa. Ions follow the thermal electron convention: the
electron is an ideal gas of cp = 5/2 R with zero enthalpy of formation (see
``mechanisms/thermo/README.md``).

Temperatures at or below ``T_mid`` use the low range, above it the high range. Outside
``[T_low, T_high]`` the polynomial of the nearest range is evaluated as it stands
(extrapolated); no error is raised, so callers that care check the range themselves
(:func:`out_of_range`). A species without thermo data has NaN coefficients and gets NaN
from every kernel.

References
----------
McBride, B. J., Zehe, M. J. & Gordon, S. (2002), NASA Glenn Coefficients for
Calculating Thermodynamic Properties of Individual Species, NASA/TP-2002-211556.

Burcat, A. & Ruscic, B. (2005), Third Millennium Ideal Gas and Condensed Phase
Thermochemical Database for Combustion with Updates from Active Thermochemical Tables,
ANL-05/20 and TAE 960.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, AVOGADRO_1_MOL, GAS_CONSTANT_J_MOL_K, STANDARD_PRESSURE_PA

#: Molar gas constant in J/(mol K), k_B N_A with the exact CODATA 2018 values.
R_J_MOL_K = GAS_CONSTANT_J_MOL_K
#: Standard pressure of the tables in Pa (1 bar).
P0_PA = STANDARD_PRESSURE_PA
#: One electronvolt per particle expressed in J/mol (e N_A).
EV_J_MOL = ELEMENTARY_CHARGE_C * AVOGADRO_1_MOL


# --------------------------------------------------------------------------- kernels


@njit(cache=True)
def _cp_R_one(a, T):
    """cp/R of one coefficient row ``a`` (7,) at T (McBride, Zehe & Gordon 2002)."""
    return a[0] + T * (a[1] + T * (a[2] + T * (a[3] + T * a[4])))


@njit(cache=True)
def _h_RT_one(a, T):
    """h/(RT) of one coefficient row ``a`` (7,) at T, without shift (McBride, Zehe & Gordon 2002)."""
    return a[0] + T * (a[1] / 2.0 + T * (a[2] / 3.0 + T * (a[3] / 4.0 + T * a[4] / 5.0))) + a[5] / T


@njit(cache=True)
def _s_R_one(a, T, lnT):
    """s/R of one coefficient row ``a`` (7,) at T, ``lnT = ln T`` (McBride, Zehe & Gordon 2002)."""
    return a[0] * lnT + T * (a[1] + T * (a[2] / 2.0 + T * (a[3] / 3.0 + T * a[4] / 4.0))) + a[6]


@njit(cache=True)
def cp_R(nasa7_coeffs, nasa7_T_K, T_K, out):
    """Fill ``out`` (n,) with the dimensionless heat capacity cp/R at ``T_K``.

    Parameters
    ----------
    nasa7_coeffs : float64 (n, 2, 7)
    nasa7_T_K : float64 (n, 3)
    T_K : float
        Temperature in K.
    out : float64 (n,)
        Overwritten.

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (7-coefficient form).
    """
    for i in range(out.shape[0]):
        out[i] = _cp_R_one(nasa7_coeffs[i, 0 if T_K <= nasa7_T_K[i, 1] else 1], T_K)


@njit(cache=True)
def h_RT(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol, T_K, out):
    """Fill ``out`` (n,) with the dimensionless enthalpy h/(R T) at ``T_K``.

    ``h`` includes ``energy_shift_J_mol`` (excitation energy of excited states).

    Parameters
    ----------
    nasa7_coeffs : float64 (n, 2, 7)
    nasa7_T_K : float64 (n, 3)
    energy_shift_J_mol : float64 (n,)
        Added to h, in J/mol.
    T_K : float
        Temperature in K.
    out : float64 (n,)
        Overwritten.

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (7-coefficient form).
    """
    RT = R_J_MOL_K * T_K  # numba freezes the module constant at compile time
    for i in range(out.shape[0]):
        a = nasa7_coeffs[i, 0 if T_K <= nasa7_T_K[i, 1] else 1]
        out[i] = _h_RT_one(a, T_K) + energy_shift_J_mol[i] / RT


@njit(cache=True)
def s_R(nasa7_coeffs, nasa7_T_K, T_K, out):
    """Fill ``out`` (n,) with the dimensionless standard entropy s/R at ``T_K`` (p0 = 1e5 Pa).

    Parameters
    ----------
    nasa7_coeffs : float64 (n, 2, 7)
    nasa7_T_K : float64 (n, 3)
    T_K : float
        Temperature in K.
    out : float64 (n,)
        Overwritten.

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (7-coefficient form).
    """
    lnT = math.log(T_K)
    for i in range(out.shape[0]):
        out[i] = _s_R_one(nasa7_coeffs[i, 0 if T_K <= nasa7_T_K[i, 1] else 1], T_K, lnT)


@njit(cache=True)
def g_RT(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol, T_K, out):
    """Fill ``out`` (n,) with the dimensionless standard Gibbs energy g/(R T) = h/(RT) - s/R.

    Parameters
    ----------
    nasa7_coeffs : float64 (n, 2, 7)
    nasa7_T_K : float64 (n, 3)
    energy_shift_J_mol : float64 (n,)
        Added to h (and so to g), in J/mol.
    T_K : float
        Temperature in K.
    out : float64 (n,)
        Overwritten.

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (7-coefficient form).
    """
    lnT = math.log(T_K)
    RT = R_J_MOL_K * T_K
    for i in range(out.shape[0]):
        a = nasa7_coeffs[i, 0 if T_K <= nasa7_T_K[i, 1] else 1]
        out[i] = _h_RT_one(a, T_K) - _s_R_one(a, T_K, lnT) + energy_shift_J_mol[i] / RT


# --------------------------------------------------------------------------- helpers


def species_arrays(records, names, energy_shift_eV=None):
    """Stack the thermo of ``names`` into the kernel arrays.

    Parameters
    ----------
    records : mapping of str to record
        Name -> object with ``nasa7_coeffs`` (2, 7) and ``nasa7_T_K`` (3,), e.g. the
        result of :func:`plasmazero.data.thermo_library.load_thermo_library`, or
        name -> ``(coeffs, T_K)`` as returned by
        :func:`plasmazero.data.thermo_library.parse_nasa7`.
    names : sequence of str
        The record to use for each species, in state-vector order. A name that is not
        in ``records`` (or is None) gets NaN coefficients (a pure-kinetics species).
        An excited state passes its parent's name here and its excitation energy in
        ``energy_shift_eV``.
    energy_shift_eV : None, sequence of float (len(names)), or mapping of int to float
        Energy added to each species' enthalpy, in eV per particle (excitation energy).
        A mapping is keyed by position in ``names``. None: no shift.

    Returns
    -------
    (nasa7_coeffs, nasa7_T_K, energy_shift_J_mol)
        float64 arrays of shapes (n, 2, 7), (n, 3), (n,); the shift in J/mol
        (``E_eV * e * N_A``, CODATA 2018 exact constants).
    """
    n = len(names)
    coeffs = np.full((n, 2, 7), np.nan)
    T_K = np.full((n, 3), np.nan)
    for i, name in enumerate(names):
        rec = records.get(name) if name is not None else None
        if rec is not None:
            c, t = rec if isinstance(rec, tuple) else (rec.nasa7_coeffs, rec.nasa7_T_K)
            coeffs[i] = np.asarray(c, dtype=float)
            T_K[i] = np.asarray(t, dtype=float)
    shift_eV = np.zeros(n)
    if energy_shift_eV is not None:
        if isinstance(energy_shift_eV, dict):
            for i, e in energy_shift_eV.items():
                shift_eV[int(i)] = float(e)
        else:
            shift_eV[:] = np.asarray(energy_shift_eV, dtype=float)
    return coeffs, T_K, shift_eV * EV_J_MOL


def _check_arrays(arrays):
    coeffs, T_K, shift = arrays
    coeffs = np.ascontiguousarray(coeffs, dtype=np.float64)
    T_K = np.ascontiguousarray(T_K, dtype=np.float64)
    shift = np.ascontiguousarray(shift, dtype=np.float64)
    n = coeffs.shape[0]
    if coeffs.shape != (n, 2, 7) or T_K.shape != (n, 3) or shift.shape != (n,):
        raise ValueError("thermo arrays must have shapes (n, 2, 7), (n, 3) and (n,)")
    return coeffs, T_K, shift


def _used(nu, arrays):
    """The species with non-zero ``nu``, their coefficients, and a check that they have thermo."""
    coeffs, T_K, shift = _check_arrays(arrays)
    nu = np.asarray(nu, dtype=float)
    if nu.shape != (coeffs.shape[0],):
        raise ValueError(f"nu has shape {nu.shape}, expected ({coeffs.shape[0]},)")
    idx = np.flatnonzero(nu)
    missing = [int(i) for i in idx if not (np.all(np.isfinite(coeffs[i])) and np.all(np.isfinite(T_K[i])))]
    if missing:
        raise ValueError(f"no thermo data for species at index {missing}")
    return (nu[idx], np.ascontiguousarray(coeffs[idx]), np.ascontiguousarray(T_K[idx]),
            np.ascontiguousarray(shift[idx]))


def _over_T(fun, T_K):
    T = np.asarray(T_K, dtype=float)
    out = np.array([fun(float(t)) for t in T.ravel()]).reshape(T.shape)
    return out if T.ndim else float(out)


def species_thermo_SI(T_K, arrays):
    """Heat capacity, enthalpy and entropy of every species at one temperature.

    Parameters
    ----------
    T_K : float
        Temperature in K.
    arrays : tuple
        ``(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol)`` as from :func:`species_arrays`.

    Returns
    -------
    (cp_J_mol_K, h_J_mol, s_J_mol_K) : three float64 arrays (n,)
        ``h`` includes the energy shift; ``s`` is at p0 = 1e5 Pa.

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556.
    """
    coeffs, T_lim, shift = _check_arrays(arrays)
    n = coeffs.shape[0]
    cp, h, s = np.empty(n), np.empty(n), np.empty(n)
    T = float(T_K)
    cp_R(coeffs, T_lim, T, cp)
    h_RT(coeffs, T_lim, shift, T, h)
    s_R(coeffs, T_lim, T, s)
    return cp * R_J_MOL_K, h * R_J_MOL_K * T, s * R_J_MOL_K


def reaction_enthalpy_J_mol(nu, T_K, arrays):
    """Standard reaction enthalpy sum_s nu_s h_s(T) in J per mol of reaction.

    Parameters
    ----------
    nu : float array (n,)
        Net stoichiometric coefficients (products positive, reactants negative).
    T_K : float or array
        Temperature(s) in K.
    arrays : tuple
        ``(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol)``.

    Returns
    -------
    float or ndarray (shape of ``T_K``)

    Raises
    ------
    ValueError
        When a species with non-zero ``nu`` has no thermo data (NaN coefficients).

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556.
    """
    nu_u, coeffs, T_lim, shift = _used(nu, arrays)
    buf = np.empty(nu_u.shape[0])

    def one(T):
        h_RT(coeffs, T_lim, shift, T, buf)
        return float(np.dot(nu_u, buf)) * R_J_MOL_K * T

    return _over_T(one, T_K)


def equilibrium_constant_Kp(nu, T_K, arrays):
    """Dimensionless equilibrium constant in pressure units, Kp = exp(-sum_s nu_s g_s/(RT)).

    Kp = prod_s (p_s / p0)^nu_s at equilibrium, with p0 = 1e5 Pa.

    Parameters
    ----------
    nu : float array (n,)
        Net stoichiometric coefficients (products positive).
    T_K : float or array
        Temperature(s) in K.
    arrays : tuple
        ``(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol)``.

    Returns
    -------
    float or ndarray

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556 (standard Gibbs energy from the
    polynomials); Kp = exp(-Delta_r G0 / RT) is common practice.
    """
    nu_u, coeffs, T_lim, shift = _used(nu, arrays)
    buf = np.empty(nu_u.shape[0])

    def one(T):
        g_RT(coeffs, T_lim, shift, T, buf)
        return math.exp(-float(np.dot(nu_u, buf)))

    return _over_T(one, T_K)


def equilibrium_constant_Kc(nu, T_K, arrays):
    """Equilibrium constant in number densities, Kc = prod_s n_s^nu_s, in (m^-3)^(sum nu).

    Kc = Kp (p0 / (k_B T))^(sum_s nu_s), p0 = 1e5 Pa; number densities in m^-3 (per
    molecule, not per mole), so that k_reverse = k_forward / Kc with k in SI per-molecule
    units (m^3 s^-1 for a two-body reaction).

    Parameters
    ----------
    nu : float array (n,)
        Net stoichiometric coefficients (products positive).
    T_K : float or array
        Temperature(s) in K.
    arrays : tuple
        ``(nasa7_coeffs, nasa7_T_K, energy_shift_J_mol)``.

    Returns
    -------
    float or ndarray

    References
    ----------
    McBride, Zehe & Gordon (2002), NASA/TP-2002-211556; ideal-gas n = p/(k_B T) is
    common practice. k_B from CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010).
    """
    dnu = float(np.sum(np.asarray(nu, dtype=float)))
    Kp = equilibrium_constant_Kp(nu, T_K, arrays)
    T = np.asarray(T_K, dtype=float)
    out = Kp * (P0_PA / (BOLTZMANN_J_K * T)) ** dnu
    return out if T.ndim else float(out)


def out_of_range(T_K, arrays):
    """Boolean (n,): True where ``T_K`` lies outside a species' [T_low, T_high] (NaN rows: False)."""
    _, T_lim, _ = _check_arrays(arrays)
    with np.errstate(invalid="ignore"):
        return (T_K < T_lim[:, 0]) | (T_K > T_lim[:, 2])
