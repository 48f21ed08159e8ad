"""Mass-action right-hand side and its analytic Jacobian on the compiled-mechanism arrays.

Species balance (n_i in m^-3, t in s)::

    dn_i/dt = sum_j nu_ij r_j                      chemistry (mass action)
              - nu_loss_i n_i                      first-order losses of species i
              + sum_k P_ki nu_loss_k n_k           what the losses of species k turn into
              + S_i                                constant source

    r_j = k_j * (n_M_j if multiply_M[j]) * prod_{reactant slots a} n_a
    n_M_j = sum_s efficiencies[third_body[j], s] n_s

The linear terms (``loss_frequency_s`` nu_loss, ``loss_products`` P with P[k, i] = number
of species i made per species k lost, ``source_m3_s`` S) are where the scenario layer puts
wall and catalyst-bed losses (e.g. H -> 0.5 H2 at a surface), residence-time (flow)
losses and feed sources. Mass action: Guldberg & Waage (1864), and any kinetics text,
e.g. Kee, Coltrin & Glarborg (2003), Chemically Reacting Flow, Wiley, section 9.2.

The rate coefficients k_j come from :func:`plasmazero.physics.ratelaws.rate_coefficients`
at the gas temperature, the electron temperature / mean energy and the electron-impact
coefficients interpolated at the reduced field E/N(t) of the current time. The field is
piecewise linear in time; on one segment E/N(t) = E0 + slope (t - t0). Without an
electron table the mean energy is NaN and the kernel takes Te = T_gas.

The model tuple
---------------
:func:`evaluate` takes one opaque ``model`` tuple, built by
:func:`plasmazero.numerics.integrate.build_model` and passed through the stepper
untouched (the smaller kernels take the pieces they need)::

    model = (mech, kernel_args, linear, table, cond, work)
    mech   = (reactant_index, net_index, net_coeff, third_body, efficiencies,
              multiply_M)                         from the arrays of CompiledMechanism
    kernel_args                                   CompiledMechanism.kernel_args
    linear = (loss_frequency_s (n_s,), loss_products (n_s, n_s), source_m3_s (n_s,))
    table  = :func:`plasmazero.numerics.electrons.table_arrays`
    cond   = float64 array [T_gas_K, segment_t0_s, segment_E_N0_Td, segment_slope_Td_s]
    work   = (k (n_r,), dk_dnM (n_r,), n_M (n_r,), r (n_r,), k_electron (n_p,),
              n_M_row (n_tb,))                    scratch, overwritten by every call

Gas energy equation
-------------------
The gas temperature is a fixed input (``cond[0]``). An energy equation would enter as one
extra state variable appended after the species: its right-hand side (the heat released
by the reactions, sum_j r_j (-dH_j), minus losses, over n c_v) and its Jacobian row and
column (including dk/dT) go at the places marked ``ENERGY EQUATION`` in :func:`evaluate`,
and ``cond[0]`` would then be read from the state.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..physics.ratelaws import rate_coefficients
from .electrons import interpolate_table


def net_stoichiometry(reactant_index, product_index, product_coeff):
    """Net stoichiometry of each reaction as padded lists (``net_index``, ``net_coeff``).

    Species that appear on both sides (catalysts such as the electron in ``e + Ar => e +
    Ar*``, or a collision partner) get their net coefficient, and none when it is zero, so
    that the right-hand side never adds and subtracts the same large rate (round-off) and
    the Jacobian touches each row once.

    Returns
    -------
    (ndarray int64 (n_r, w), ndarray float64 (n_r, w))
        Species index (-1 padded) and net coefficient (products minus reactants).
    """
    n_r = reactant_index.shape[0]
    rows = []
    for j in range(n_r):
        acc = {}
        for s in reactant_index[j]:
            if s >= 0:
                acc[int(s)] = acc.get(int(s), 0.0) - 1.0
        for s, c in zip(product_index[j], product_coeff[j]):
            if s >= 0:
                acc[int(s)] = acc.get(int(s), 0.0) + float(c)
        rows.append([(s, c) for s, c in sorted(acc.items()) if c != 0.0])
    width = max([len(r) for r in rows] + [1])
    index = np.full((n_r, width), -1, dtype=np.int64)
    coeff = np.zeros((n_r, width))
    for j, row in enumerate(rows):
        for m, (s, c) in enumerate(row):
            index[j, m] = s
            coeff[j, m] = c
    return index, coeff


@njit(cache=True)
def field_at(cond, t):
    """Reduced field at time ``t`` (s) on the current segment, Td (clipped at 0)."""
    e = cond[2] + cond[3] * (t - cond[1])
    return e if e > 0.0 else 0.0


@njit(cache=True)
def reaction_rates(y, mech, k, nM, r_out):
    """Rates r_j = k_j (n_M_j if multiply_M) prod(reactants), m^-3 s^-1.

    References
    ----------
    Mass action (Guldberg & Waage 1864); see the module docstring.
    """
    reac = mech[0]
    mult = mech[5]
    for j in range(reac.shape[0]):
        v = k[j]
        if mult[j]:
            v *= nM[j]
        for a in range(reac.shape[1]):
            s = reac[j, a]
            if s >= 0:
                v *= y[s]
        r_out[j] = v


@njit(cache=True)
def add_linear_terms(y, linear, out):
    """Add the first-order losses, their products and the constant source to ``out``.

    ``out[i] += -nu_i y_i + sum_k P[k, i] nu_k y_k + S_i`` (m^-3 s^-1); see the module
    docstring (common practice, no source).
    """
    nu = linear[0]
    P = linear[1]
    S = linear[2]
    n = y.shape[0]
    for i in range(n):
        out[i] += S[i]
        if nu[i] != 0.0:
            lost = nu[i] * y[i]
            out[i] -= lost
            for m in range(n):
                if P[i, m] != 0.0:
                    out[m] += P[i, m] * lost


@njit(cache=True)
def linear_terms(y, linear, out):
    """The linear terms alone (``out`` overwritten), m^-3 s^-1."""
    for i in range(out.shape[0]):
        out[i] = 0.0
    add_linear_terms(y, linear, out)


@njit(cache=True)
def add_jacobian(y, mech, linear, k, dk, nM, J_out):
    """Add the analytic Jacobian d f / d y (s^-1) of the balances to ``J_out``.

    Includes the reactant factors, the third-body density of plain three-body reactions
    (d r / d n_s through n_M = sum eta_s n_s), the density dependence of falloff rate
    coefficients (``dk`` = dk/dn_M from the rate-law kernel) and the linear terms.

    References
    ----------
    Differentiation of the mass-action law of the module docstring (common practice,
    no source).
    """
    reac = mech[0]
    net = mech[1]
    coef = mech[2]
    third_body = mech[3]
    eff = mech[4]
    mult = mech[5]
    n = y.shape[0]
    n_reac = reac.shape[1]
    n_net = net.shape[1]
    for j in range(reac.shape[0]):
        base = k[j]
        if mult[j]:
            base *= nM[j]
        # d r / d y_s through the reactant factors
        for a in range(n_reac):
            s = reac[j, a]
            if s < 0:
                continue
            d = base
            for c in range(n_reac):
                q = reac[j, c]
                if c != a and q >= 0:
                    d *= y[q]
            if d == 0.0:
                continue
            for c in range(n_net):
                q = net[j, c]
                if q >= 0:
                    J_out[q, s] += coef[j, c] * d
        # d r / d y_s through the third-body density
        b = third_body[j]
        if b < 0:
            continue
        P = 1.0
        for a in range(n_reac):
            s = reac[j, a]
            if s >= 0:
                P *= y[s]
        dr_dM = dk[j] * (nM[j] if mult[j] else 1.0)
        if mult[j]:
            dr_dM += k[j]
        dr_dM *= P
        if dr_dM == 0.0:
            continue
        for s in range(n):
            e = eff[b, s]
            if e == 0.0:
                continue
            v = dr_dM * e
            for c in range(n_net):
                q = net[j, c]
                if q >= 0:
                    J_out[q, s] += coef[j, c] * v
    nu = linear[0]
    Pm = linear[1]
    for i in range(n):
        if nu[i] != 0.0:
            J_out[i, i] -= nu[i]
            for m in range(n):
                if Pm[i, m] != 0.0:
                    J_out[m, i] += Pm[i, m] * nu[i]


#: what :func:`evaluate` computes
RATES = 0
RHS = 1
JACOBIAN = 2


@njit(cache=True)
def evaluate(E_N_Td, y, model, f_out, J_out, mode):
    """Rates, right-hand side and Jacobian of the species balances at one state.

    The only kernel that calls the rate-law kernel (compile time: every caller links it
    once).

    Parameters
    ----------
    E_N_Td : float
        Reduced field, Td.
    y : ndarray (n_s,)
        Densities, m^-3.
    model : tuple
        See the module docstring; ``work`` receives k, dk/dn_M, n_M, the rates r and the
        electron coefficients.
    f_out : ndarray (n_s,)
        Output (``mode >= RHS``): dn/dt, m^-3 s^-1.
    J_out : ndarray (n_s, n_s)
        Output (``mode == JACOBIAN``): d f / d y, s^-1. The rate coefficients' dependence
        on the field (time) is not part of J; the stepper takes it through d f / d t.
    mode : int
        ``RATES`` (only ``work[3]`` = r), ``RHS`` or ``JACOBIAN``.

    Returns
    -------
    (float, float)
        Mean electron energy (eV; NaN without an electron table) and drift velocity (m/s).

    References
    ----------
    Third-body density n_M = sum_s eta_s n_s with collision efficiencies eta and mass
    action: e.g. Kee, Coltrin & Glarborg (2003), Chemically Reacting Flow, Wiley,
    sections 9.2-9.4.
    """
    mech, kernel_args, linear, table, cond, work = model
    third_body = mech[3]
    eff = mech[4]
    k = work[0]
    dk = work[1]
    nM = work[2]
    r = work[3]
    k_el = work[4]
    nM_row = work[5]
    n_s = y.shape[0]
    for b in range(eff.shape[0]):
        s_sum = 0.0
        for s in range(n_s):
            s_sum += eff[b, s] * y[s]
        nM_row[b] = s_sum
    for j in range(third_body.shape[0]):
        b = third_body[j]
        nM[j] = nM_row[b] if b >= 0 else 0.0
    mean_eV, drift = interpolate_table(table[0], table[1], table[2], table[3], table[4],
                                       E_N_Td, k_el)
    Tg = cond[0]
    rate_coefficients(kernel_args, Tg, Tg, E_N_Td, mean_eV, k_el, nM, k, dk)
    reaction_rates(y, mech, k, nM, r)
    if mode == RATES:
        return mean_eV, drift
    net = mech[1]
    coef = mech[2]
    for i in range(n_s):
        f_out[i] = 0.0
    for j in range(net.shape[0]):
        rj = r[j]
        if rj == 0.0:
            continue
        for a in range(net.shape[1]):
            s = net[j, a]
            if s >= 0:
                f_out[s] += coef[j, a] * rj
    add_linear_terms(y, linear, f_out)
    # ENERGY EQUATION: the gas-temperature right-hand side would be appended here.
    if mode == JACOBIAN:
        for i in range(n_s):
            for m in range(n_s):
                J_out[i, m] = 0.0
        add_jacobian(y, mech, linear, k, dk, nM, J_out)
        # ENERGY EQUATION: the temperature row and column would be filled here.
    return mean_eV, drift


@njit(cache=True)
def charge_imbalance(y, charge, floor):
    """|sum_i q_i n_i| over the larger of the positive and negative charge densities.

    Returns 0 when the charged densities are below ``floor`` (m^-3): then the ratio is set
    by round-off and tolerance, not by the chemistry.
    """
    pos = 0.0
    neg = 0.0
    for i in range(y.shape[0]):
        q = charge[i]
        if q > 0.0:
            pos += q * y[i]
        elif q < 0.0:
            neg -= q * y[i]
    den = max(pos, neg)
    if not (den > floor):
        return 0.0
    return math.fabs(pos - neg) / den
