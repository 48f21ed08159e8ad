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

Rate multipliers
----------------
Every rate coefficient is multiplied by ``rate_multipliers[j]`` (default 1) after the
rate-law kernel has evaluated it, and so is dk/dn_M (the Jacobian stays exact). REVERSE
rows get their own factor: a reversible reaction keeps detailed balance only when its
forward and its reverse row get the same factor (sensitivity and uncertainty analysis
usually want exactly that; scaling one row alone changes the equilibrium constant).

Isobaric expansion (``cond[4] = 1``)
-----------------------------------
For a gas parcel at constant pressure and temperature the total density N = sum_k n_k
stays at its initial value while reactions change the number of molecules: the parcel's
volume V changes instead. With F_i the balance above (chemistry and linear terms) and
D the set of diluted species::

    dn_i/dt = F_i - n_i S / N_D      (i in D),    S = sum_k F_k,   N_D = sum_{k in D} n_k
    d ln V / dt = S / N_D

D is every species (then N_D = N), except on a segment with a prescribed electron
density (below), where the electron row is imposed and D holds the other species. Either
way sum_i dn_i/dt = 0 exactly. Jacobian of the added term (differentiating the line
above; common practice, no source)::

    J_ik -= delta_ik S / N_D  +  u_i c_k,   u_i = n_i [i in D],
    c_k = (sum_m J_mk) / N_D - [k in D] S / N_D^2

with J the Jacobian of F; ``u c^T`` is a dense rank-one term.

Dense rank-one parts and ``JACOBIAN_SPLIT``
-------------------------------------------
Two parts of the Jacobian are dense but of rank one: the expansion term -u c^T above,
and the third-body terms of collision partners with the default efficiency 1 (every
species is a partner, so each three-body or falloff reaction fills whole rows): with
eta_s = 1 + (eta_s - 1), they add w 1^T with w_q = sum_j nu_qj d r_j / d n_M. Mode
``JACOBIAN_SPLIT`` leaves both out of ``J_out`` (which keeps the efficiency deviations
eta_s - 1, the reactant factors, the linear terms and the diagonal -S/N_D) and writes
``u``, ``c`` and ``w`` to ``work[7]``, ``work[8]``, ``work[9]``: the full Jacobian is
``J_out + w 1^T - u c^T``. The sparse linear solver factors the sparse rest and adds
the rank-one parts by the Woodbury formula (:mod:`plasmazero.numerics.linalg`).

Prescribed electron density (``cond[6] = 1``)
--------------------------------------------
On a segment where the caller prescribes n_e(t) (linear in time there), the electron row
``cond[5]`` of the system is d n_e/dt = ``cond[7]`` (the profile's slope, m^-3 s^-1) and
its Jacobian row is zero; the electron column still feeds the other rows (ionization,
attachment, recombination see the prescribed n_e).

The model tuple
---------------
:func:`evaluate` takes one opaque ``model`` tuple, built by
:func:`plasmazero.numerics.integrate.build_model` and passed through the stepper
untouched (the smaller kernels take the pieces they need)::

    model = (mech, kernel_args, linear, table, cond, work)
    mech   = (reactant_index, net_index, net_coeff, third_body, efficiencies,
              multiply_M, rate_multipliers,       from the arrays of CompiledMechanism
              species_ptr, species_reaction, species_coeff,
                                                  the net stoichiometry by species, in
                                                  compressed rows (species_rows)
              deviation_ptr, deviation_species, deviation_value)
                                                  efficiencies - 1 where not 0, by
                                                  third-body set (efficiency_deviations)
    kernel_args                                   CompiledMechanism.kernel_args
    linear = (loss_frequency_s (n_s,), loss_products (n_s, n_s), source_m3_s (n_s,))
    table  = :func:`plasmazero.numerics.electrons.table_arrays`
    cond   = float64 array [T_gas_K, segment_t0_s, segment_E_N0_Td, segment_slope_Td_s,
                            expansion (1/0), electron_index (-1: none),
                            electron_prescribed (1/0), electron_slope_m3_s,
                            energy equation (0/1/2), heat loss W/m^3/K, T_wall_K,
                            local mean energy (1/0)]
    work   = (k (n_r,), dk_dnM (n_r,), n_M (n_r,), r (n_r,), k_electron (n_p,),
              n_M_row (n_tb,), scalars (6,) = [S / N_D, N_D, S, P_e, heat loss, dT/dt],
              u (n_s,), c (n_s,), w (n_s,),       scratch, overwritten by every call
              cache ... (work[10:16]),            the rate-coefficient cache (below)
              h (n_s,), c_p (n_s,))               energy-equation scratch (work[16:18])

Rate-coefficient cache
----------------------
Most rate coefficients of a plasma mechanism do not change between right-hand-side
evaluations: at a fixed gas temperature the thermal rows (Arrhenius, Landau-Teller) are
constants, the electron rows (electron impact, electron-temperature Arrhenius,
expressions) change only with E/N, and only the falloff rows follow the third-body
density. REVERSE rows are their forward row times 1/Kc(T_gas) (detailed balance, as in
:mod:`plasmazero.physics.ratelaws`). :func:`evaluate` therefore calls the rate-law kernel
(i) for all rows, and once more with every forward row set to k = 1 to obtain 1/Kc of
each reverse row, whenever the gas temperature changes (or the cache was cleared); (ii)
for the electron rows alone whenever E/N changes. The falloff rows keep their
temperature-only parts (k0, k_inf, F_cent) from the last temperature change and redo
their blend with the third-body density at every call. The values are those of the
kernel (same code, same inputs), so the cache changes no result. :func:`clear_rate_cache`
must be called when the electron table of the model is replaced. ``work[10:16]`` =
(cache scalars [T, E/N, valid, rate multipliers on (1/0)], (electron rows,
falloff rows, reverse rows, their forward rows), kernel arguments of the electron rows,
of the falloff rows, of all rows with unit forward rows, (k of the constant rows, k and
dk/dn_M of the electron rows, their n_M, k, dk/dn_M and n_M of the falloff rows, 1/Kc,
(k0, k_inf, log10 F_cent) of the falloff rows)).

Gas energy equation (``cond[8]`` = 1 isobaric, 2 isochoric)
-----------------------------------------------------------
With an energy equation the state holds one more entry after the n_s species: the gas
temperature T (K), and ``cond[0]`` is not read. Heavy particles and electrons share one
enthalpy budget: the field gives the electrons the power P_e = e n_e w E (W m^-3, w the
drift velocity of the table at the current E/N, E = (E/N) N with N the density of all
species but the electrons), and every joule of it ends in the gas, as stored chemical or
excitation enthalpy of the tracked species or as heat. Hence, with h_i(T) the enthalpy
per particle of species i (NASA-7, excited states with their excitation energy, electrons
at the gas temperature), omega_i the chemical source of species i (reaction rows only)::

    isobaric:   sum_i n_i c_p,i dT/dt = P_e - sum_i h_i omega_i - G (T - T_wall)
    isochoric:  sum_i n_i c_v,i dT/dt = P_e - sum_i u_i omega_i - G (T - T_wall)

with u_i = h_i - k T and c_v,i = c_p,i - k (ideal gas). Reaction enthalpies (the heat of
V-T relaxation, of recombination, of quenching, the Franck-Condon excess of electron-impact
dissociation) and the electron's elastic, rotational and other untracked losses are all
in these two terms; the split between them follows from the mechanism. The linear terms
(surface losses, flow) move species without heating the gas: the heat of a surface
reaction goes to the solid. G (``cond[9]``, W m^-3 K^-1) is a heat-transfer coefficient
to a wall at ``cond[10]`` K. Isobaric runs are parcels at constant pressure: the
expansion term above uses d ln V/dt = S / N_D + (dT/dt) / T, so that N = p / (k T).
Energy balance of a reacting ideal-gas mixture: e.g. Kee, Coltrin & Glarborg (2003),
Chemically Reacting Flow, Wiley, chapter 9 (constant-pressure and constant-volume
reactors); the electron power as the only external source: common practice in global
discharge models, no single source.

Local mean energy approximation (``cond[11]`` = 1)
-------------------------------------------------
Instead of following the local field, the mean electron energy <eps> (eV) becomes the
last entry of the state. The coefficients are those of the table at the effective field
(E/N)_eff whose steady mean energy is <eps> (the inverse of the table's mean energy,
:func:`plasmazero.numerics.electrons.field_for_mean_energy`), and::

    d<eps>/dt = N mu N [(E/N)^2 - (E/N)_eff^2]        (eV/s per electron, E/N in V m^2)

the power e mu E^2 the field gives an electron (mu N = w / (E/N) at <eps>) minus the
losses e w_eff E_eff of the steady state that has the same mean energy. At a constant
field <eps> relaxes to the table value; for a Maxwell-model gas this is the exact energy
moment equation. The electron power of the energy equation is then e n_e mu E^2. The
energy of electrons made or lost (ionization, attachment) is not booked separately (the
steady-state losses at (E/N)_eff include their share). Coefficients as functions of the
mean energy: Hagelaar & Pitchford (2005), Plasma Sources Sci. Technol. 14, 722, section 3.

Jacobian: the temperature row is exact (differentiating the line above, with the
species Jacobian of the chemistry); the temperature column (dk/dT of every rate law,
through the thermo of the reverse rows) is a forward difference with step 1e-7 T,
computed by one extra right-hand-side evaluation per Jacobian. The energy equation uses
the dense Jacobian (``JACOBIAN``): its row and column are dense. The same holds for
the mean-energy entry of the local mean energy approximation (row exact, column by a
forward difference). Both extra entries are compiled only when used: :func:`evaluate`
takes them through its ``heat`` argument, and None prunes their code.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..physics.ratelaws import (FALLOFF_TROE, T_REF_K, falloff_blend, falloff_parts,
                                rate_coefficients)
from ..physics.thermo import cp_R, h_RT
from ..physics.constants import BOLTZMANN_J_K as K_B, ELEMENTARY_CHARGE_C as E_CHARGE
from .electrons import field_for_mean_energy, interpolate_table


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
    key = (reactant_index.shape, reactant_index.tobytes(), product_index.shape,
           product_index.tobytes(), np.asarray(product_coeff, dtype=np.float64).tobytes())
    hit = _NET_CACHE.get(key)
    if hit is not None:
        return hit[0].copy(), hit[1].copy()
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
    if len(_NET_CACHE) >= 16:
        _NET_CACHE.clear()
    _NET_CACHE[key] = (index.copy(), coeff.copy())
    return index, coeff


#: results of net_stoichiometry by its input arrays (the discharge workflow builds a model
#: for every pulse and afterglow of the same mechanism)
_NET_CACHE = {}


def _compressed_rows(rows, cols, values, n_rows):
    """Entries (rows, cols, values), sorted by row then column, as compressed rows:
    (ptr (n_rows + 1,) int64, cols int64, values float64)."""
    order = np.lexsort((cols, rows))
    ptr = np.zeros(n_rows + 1, dtype=np.int64)
    np.add.at(ptr, rows + 1, 1)
    return (np.cumsum(ptr).astype(np.int64), np.ascontiguousarray(cols[order], dtype=np.int64),
            np.ascontiguousarray(values[order], dtype=np.float64))


def species_rows(net_index, net_coeff, n_species):
    """The net stoichiometry by species in compressed rows.

    Returns ``(ptr (n_s + 1,), reaction (nnz,), coeff (nnz,))``: species i takes part in
    reactions ``reaction[ptr[i]:ptr[i + 1]]`` with net coefficients ``coeff[...]``, so that
    dn_i/dt from the chemistry is ``sum coeff * r[reaction]`` (reactions in increasing
    order, as in the padded form).
    """
    reactions, slots = np.nonzero(net_index >= 0)
    return _compressed_rows(net_index[reactions, slots], reactions,
                            net_coeff[reactions, slots], n_species)


def efficiency_deviations(efficiencies):
    """The third-body efficiencies that differ from 1, by third-body set, compressed.

    Returns ``(ptr (n_tb + 1,), species (nnz,), eta - 1 (nnz,))`` for the split Jacobian
    (module docstring: the efficiency-1 part is the rank-one w 1^T).
    """
    dev = np.asarray(efficiencies, dtype=np.float64) - 1.0
    rows, cols = np.nonzero(dev != 0.0)
    return _compressed_rows(rows, cols, dev[rows, cols], dev.shape[0])


def left_packed(index):
    """True when every row of a -1-padded index array has its entries before its pads."""
    valid = np.asarray(index) >= 0
    return bool(np.all(valid[:, :-1] | ~valid[:, 1:])) if valid.shape[1] > 1 else True


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
            if s < 0:
                break
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
    n = nu.shape[0]
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
    """The linear terms alone (``out`` overwritten; entries past the species set to 0), m^-3 s^-1."""
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
    _jacobian_terms(y, mech, linear, k, dk, nM, J_out, J_out[0], False)


@njit(cache=True)
def _jacobian_terms(y, mech, linear, k, dk, nM, J_out, w_out, split):
    """:func:`add_jacobian`; with ``split`` the third-body terms are taken relative to
    efficiency 1: J gets d r / d n_M (eta_s - 1) and ``w_out[q]`` the sum of the
    net-coefficient-weighted d r / d n_M of row q, so that the full Jacobian is
    ``J_out + w_out 1^T`` (a dense rank-one part, module docstring)."""
    reac = mech[0]
    net = mech[1]
    coef = mech[2]
    third_body = mech[3]
    eff = mech[4]
    mult = mech[5]
    dev_ptr = mech[10]
    dev_species = mech[11]
    dev_value = mech[12]
    n = linear[0].shape[0]
    n_reac = reac.shape[1]
    n_net = net.shape[1]
    # the padded rows are filled from the left (build_model checks it): loops stop at
    # the first -1
    for j in range(reac.shape[0]):
        base = k[j]
        if mult[j]:
            base *= nM[j]
        # d r / d y_s through the reactant factors
        for a in range(n_reac):
            s = reac[j, a]
            if s < 0:
                break
            d = base
            for c in range(n_reac):
                q = reac[j, c]
                if q < 0:
                    break
                if c != a:
                    d *= y[q]
            if d == 0.0:
                continue
            for c in range(n_net):
                q = net[j, c]
                if q < 0:
                    break
                J_out[q, s] += coef[j, c] * d
        # d r / d y_s through the third-body density
        b = third_body[j]
        if b < 0:
            continue
        P = 1.0
        for a in range(n_reac):
            s = reac[j, a]
            if s < 0:
                break
            P *= y[s]
        dr_dM = dk[j] * (nM[j] if mult[j] else 1.0)
        if mult[j]:
            dr_dM += k[j]
        dr_dM *= P
        if dr_dM == 0.0:
            continue
        if split:
            # efficiency 1 goes to w 1^T; the deviations eta_s - 1 (compressed, mech[10:13])
            for c in range(n_net):
                q = net[j, c]
                if q < 0:
                    break
                w_out[q] += coef[j, c] * dr_dM
            for p in range(dev_ptr[b], dev_ptr[b + 1]):
                s = dev_species[p]
                v = dr_dM * dev_value[p]
                for c in range(n_net):
                    q = net[j, c]
                    if q < 0:
                        break
                    J_out[q, s] += coef[j, c] * v
            continue
        for s in range(n):
            e = eff[b, s]
            if e == 0.0:
                continue
            v = dr_dM * e
            for c in range(n_net):
                q = net[j, c]
                if q < 0:
                    break
                J_out[q, s] += coef[j, c] * v
    nu = linear[0]
    Pm = linear[1]
    for i in range(n):
        if nu[i] != 0.0:
            J_out[i, i] -= nu[i]
            for m in range(n):
                if Pm[i, m] != 0.0:
                    J_out[m, i] += Pm[i, m] * nu[i]


def jacobian_pattern(model, split=False):
    """Structural non-zeros of the Jacobian, bool (n_s, n_s), from the stoichiometry.

    Entry (q, s) is set when species s is a reactant of a reaction whose net species
    include q, or a collision partner (non-zero efficiency) of a third-body or falloff
    reaction with net species q; the linear terms add (i, i) and (m, i) for
    ``loss_products[i, m] != 0``; the diagonal is always set (it carries 1/(gamma h) and
    the diagonal part of the expansion term). The dense rank-one part of the expansion
    term is never included. With ``split``: the pattern of the ``JACOBIAN_SPLIT``
    Jacobian (module docstring), where a collision partner counts only when its
    efficiency differs from 1.
    """
    mech, _, linear, _, _, _ = model
    reac, net, _, third_body, eff = mech[0], mech[1], mech[2], mech[3], mech[4]
    n = linear[0].shape[0]
    pat = np.eye(n, dtype=np.bool_)
    # (net species q, reactant s) of every reaction, all rows at once
    q = np.broadcast_to(net[:, :, None], net.shape + (reac.shape[1],))
    r = np.broadcast_to(reac[:, None, :], q.shape)
    both = (q >= 0) & (r >= 0)
    pat[q[both], r[both]] = True
    # collision partners: q of a reaction with set b takes every s with eff[b, s] != base
    jr, slot = np.nonzero((net >= 0) & (third_body[:, None] >= 0))
    if jr.size and eff.shape[0]:
        base = 1.0 if split else 0.0
        rows_of_set = np.zeros((n, eff.shape[0]), dtype=np.int64)
        rows_of_set[net[jr, slot], third_body[jr]] = 1
        pat |= (rows_of_set @ (eff != base).astype(np.int64)) > 0
    nu, P = linear[0], linear[1]
    lost = nu != 0.0
    pat |= (P.T != 0.0) & lost[None, :]
    return pat


#: what :func:`evaluate` computes
RATES = 0
RHS = 1
JACOBIAN = 2
#: the Jacobian without the dense rank-one part of the expansion term (u, c in work)
JACOBIAN_SPLIT = 3

#: slots of ``cond`` (module docstring)
COND_EXPANSION = 4
COND_ELECTRON = 5
COND_PRESCRIBED = 6
COND_ELECTRON_SLOPE = 7
COND_ENERGY = 8
COND_HEAT_LOSS = 9
COND_T_WALL = 10
COND_LMEA = 11
COND_SIZE = 12
#: values of ``cond[COND_ENERGY]``
ENERGY_FIXED = 0
ENERGY_ISOBARIC = 1
ENERGY_ISOCHORIC = 2
#: relative step of the finite-difference temperature column of the Jacobian
TEMPERATURE_STEP = 1e-7
#: slots of ``work`` used by the energy equation (see :func:`evaluate`)
W_ENTHALPY = 16
W_HEAT_CAPACITY = 17


#: kernel-argument entries that are per reaction row (``compiled.KERNEL_ARGS`` 0..5)
_ROW_ARGS = 6


def rate_cache(kernel_args, law_codes):
    """The rate-coefficient cache entries ``work[10:16]`` (module docstring).

    Parameters
    ----------
    kernel_args : tuple
        ``CompiledMechanism.kernel_args``.
    law_codes : module
        :mod:`plasmazero.physics.ratelaws` (its law constants).
    """
    rl = law_codes
    law = np.asarray(kernel_args[0])
    ipar = np.asarray(kernel_args[2])
    n_r = law.shape[0]
    electron = np.flatnonzero(np.isin(law, (rl.ELECTRON_IMPACT, rl.ELECTRON_ARRHENIUS,
                                            rl.EXPRESSION))).astype(np.int64)
    falloff = np.flatnonzero(np.isin(law, (rl.FALLOFF_LINDEMANN, rl.FALLOFF_TROE))).astype(np.int64)
    reverse = np.flatnonzero(law == rl.REVERSE).astype(np.int64)
    forward = np.ascontiguousarray(ipar[reverse, 0], dtype=np.int64)

    def subset(rows):
        return tuple(np.ascontiguousarray(a[rows]) if i < _ROW_ARGS else a
                     for i, a in enumerate(kernel_args))

    unit = [np.array(a, copy=True) if i < 2 else a for i, a in enumerate(kernel_args)]
    unit[0][forward] = rl.ARRHENIUS
    unit[1][forward, 0:3] = (1.0, 0.0, 0.0)
    floats = (np.zeros(n_r), np.zeros(electron.size), np.zeros(electron.size),
              np.zeros(electron.size), np.zeros(falloff.size), np.zeros(falloff.size),
              np.zeros(falloff.size), np.zeros(reverse.size), np.zeros((falloff.size, 3)))
    return (np.array([math.nan, math.nan, 0.0, 1.0]), (electron, falloff, reverse, forward),
            subset(electron), subset(falloff), tuple(unit), floats)


@njit(cache=True)
def clear_rate_cache(work):
    """Invalidate the rate-coefficient cache (after a new electron table or temperature)."""
    work[10][2] = 0.0


@njit(cache=True)
def _cached_rate_coefficients(kernel_args, work, Tg, E_N_Td, mean_eV, k_el, nM, k, dk):
    """Every rate coefficient and dk/dn_M through the cache of the module docstring."""
    cf = work[10]
    electron, falloff, reverse, forward = work[11]
    k_const, kE, dkE, nME, kF, dkF, nMF, inv_Kc, fparts = work[15]
    full = cf[2] == 0.0 or cf[0] != Tg
    new_field = full or not (cf[1] == E_N_Td)
    # falloff rows: k0, k_inf and F_cent follow the temperature only; the blend with the
    # third-body density is redone at every call (same code as the kernel's falloff law)
    fl_args = work[13]
    if full:
        log_Tg = math.log(Tg / T_REF_K)
        for q in range(falloff.shape[0]):
            k0, kinf, lf = falloff_parts(fl_args[1], fl_args[2], q,
                                         fl_args[0][q] == FALLOFF_TROE, Tg, log_Tg)
            fparts[q, 0] = k0
            fparts[q, 1] = kinf
            fparts[q, 2] = lf
    for q in range(falloff.shape[0]):
        nMF[q] = nM[falloff[q]]
        kF[q], dkF[q] = falloff_blend(fl_args[0][q] == FALLOFF_TROE, fparts[q, 0],
                                      fparts[q, 1], fparts[q, 2], nMF[q])
    # one call site of the rate-law kernel (each call site is compiled separately)
    for part in range(3):
        if part == 0:
            if not full:
                continue
            args, n_M, k_part, dk_part = kernel_args, nM, k_const, dk     # all rows
        elif part == 1:
            if not full:
                continue
            args, n_M, k_part, dk_part = work[14], nM, k, dk              # 1/Kc
        else:
            if not new_field:
                continue
            args, n_M, k_part, dk_part = work[12], nME, kE, dkE           # electron rows
        rate_coefficients(args, Tg, Tg, E_N_Td, mean_eV, k_el, n_M, k_part, dk_part)
        if part == 1:
            for q in range(reverse.shape[0]):
                inv_Kc[q] = k[reverse[q]]
    cf[0] = Tg
    cf[1] = E_N_Td
    cf[2] = 1.0
    for j in range(k.shape[0]):
        k[j] = k_const[j]
        dk[j] = 0.0
    for q in range(electron.shape[0]):
        k[electron[q]] = kE[q]
    for q in range(falloff.shape[0]):
        k[falloff[q]] = kF[q]
        dk[falloff[q]] = dkF[q]
    for q in range(reverse.shape[0]):
        j = reverse[q]
        f = forward[q]
        k[j] = k[f] * inv_Kc[q]
        dk[j] = dk[f] * inv_Kc[q]


@njit(cache=True)
def evaluate(E_N_Td, y, model, f_out, J_out, mode, heat=None):
    """Rates, right-hand side and Jacobian of the species balances at one state.

    The only kernel that calls the rate-law kernel (compile time: every caller links it
    once), through the rate-coefficient cache of the module docstring. With the energy
    equation (``cond[8]``) the temperature column of the Jacobian is left at zero: the
    caller fills it by :func:`temperature_column` (the step loop does the same inline, so
    that no further kernel links this one).

    Parameters
    ----------
    E_N_Td : float
        Reduced field, Td.
    y : ndarray (n_s,) or (n_s + 1,)
        Densities, m^-3; with the energy equation followed by the gas temperature, K.
    model : tuple
        See the module docstring; ``work`` receives k, dk/dn_M, n_M, the rates r and the
        electron coefficients.
    f_out : ndarray like ``y``
        Output (``mode >= RHS``): dn/dt, m^-3 s^-1 (with the expansion term and the
        prescribed electron row when ``cond`` asks for them), and dT/dt, K/s.
    J_out : ndarray (len(y), len(y))
        Output (``mode >= JACOBIAN``): d f / d y, but the temperature column (above). The
        rate coefficients' dependence on the
        field (time) is not part of J; the stepper takes it through d f / d t.
        ``JACOBIAN_SPLIT`` leaves out the rank-one part -u c^T of the expansion term.
    mode : int
        ``RATES`` (only ``work[3]`` = r), ``RHS``, ``JACOBIAN`` or ``JACOBIAN_SPLIT``.
    heat : None or (ndarray (n_s,), ndarray (n_s,))
        Scratch for the enthalpies and heat capacities of the energy equation
        (:func:`heat_arrays`). None compiles a specialisation without the energy equation
        (numba prunes the branches on a None argument), so that runs at a fixed gas
        temperature do not pay its compile time; ``cond[8]`` is then ignored.

    Returns
    -------
    (float, float)
        Mean electron energy (eV; NaN without an electron table) and drift velocity (m/s).
        ``work[6]`` = [S / N_D, N_D, S, P_e (W m^-3), heat loss (W m^-3), dT/dt (K/s)].

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
    n_s = linear[0].shape[0]
    n = y.shape[0]
    energy = 0
    if heat is not None:     # None: compiled without the energy equation (pruned)
        energy = int(cond[COND_ENERGY])
    # third-body densities, species outer: one running sum per set (a single running sum
    # over the species waits on each add; this order let the sets' sums overlap)
    for b in range(eff.shape[0]):
        nM_row[b] = 0.0
    for s in range(n_s):
        ys = y[s]
        for b in range(eff.shape[0]):
            nM_row[b] += eff[b, s] * ys
    for j in range(third_body.shape[0]):
        b = third_body[j]
        nM[j] = nM_row[b] if b >= 0 else 0.0
    # LOCAL MEAN ENERGY: the coefficients at the field whose steady mean energy is the
    # state's mean energy (module docstring); otherwise at the local field
    E_tab = E_N_Td
    i_eps = -1
    muN = 0.0
    if heat is not None:
        if cond[COND_LMEA] != 0.0:
            i_eps = n_s + (1 if energy != 0 else 0)
            E_tab, muN = field_for_mean_energy(table[0], table[1], table[3], table[4], y[i_eps])
    mean_eV, drift = interpolate_table(table[0], table[1], table[2], table[3], table[4],
                                       E_tab, k_el)
    Tg = cond[0]
    if heat is not None:
        if energy != 0:
            Tg = max(y[n_s], 1.0)
    _cached_rate_coefficients(kernel_args, work, Tg, E_tab, mean_eV, k_el, nM, k, dk)
    if work[10][3] != 0.0:      # some rate multiplier differs from 1 (build_model)
        mult = mech[6]
        for j in range(k.shape[0]):
            k[j] *= mult[j]
            dk[j] *= mult[j]
    reaction_rates(y, mech, k, nM, r)
    if mode == RATES:
        return mean_eV, drift
    net = mech[1]
    coef = mech[2]
    # chemistry by species (the stoichiometry in compressed rows, mech[7:10]): a gather,
    # about four times faster than scattering each rate over its padded net species
    s_ptr = mech[7]
    s_rxn = mech[8]
    s_coef = mech[9]
    for i in range(n_s):
        acc = 0.0
        for p in range(s_ptr[i], s_ptr[i + 1]):
            acc += s_coef[p] * r[s_rxn[p]]
        f_out[i] = acc
    for i in range(n_s, n):
        f_out[i] = 0.0
    e = int(cond[COND_ELECTRON])
    scal = work[6]
    # ENERGY EQUATION: heat from the chemistry (before the linear terms) and the field
    Tdot = 0.0
    heat_cap = 0.0
    N_heavy = 0.0
    P_e = 0.0
    if heat is not None and energy != 0:
        en = heat[0]
        cp = heat[1]
        h_RT(kernel_args[6], kernel_args[7], kernel_args[8], Tg, en)
        cp_R(kernel_args[6], kernel_args[7], Tg, cp)
        kT = K_B * Tg
        q_chem = 0.0
        for i in range(n_s):
            if energy == 1:
                en[i] = en[i] * kT
                cp[i] = cp[i] * K_B
            else:
                en[i] = (en[i] - 1.0) * kT
                cp[i] = (cp[i] - 1.0) * K_B
            q_chem -= en[i] * f_out[i]
            heat_cap += y[i] * cp[i]
            if i != e:
                N_heavy += y[i]
        w_gain = drift if i_eps < 0 else muN * E_N_Td    # e w E, or e mu E^2 (LMEA)
        if e >= 0 and w_gain > 0.0 and E_N_Td > 0.0 and abs(w_gain) < math.inf:
            P_e = E_CHARGE * y[e] * w_gain * E_N_Td * 1e-21 * N_heavy
        q_loss = cond[COND_HEAT_LOSS] * (Tg - cond[COND_T_WALL])
        Tdot = (P_e + q_chem - q_loss) / heat_cap if heat_cap > 0.0 else 0.0
        f_out[n_s] = Tdot
        scal[3] = P_e
        scal[4] = q_loss
        scal[5] = Tdot
    eps_dot = 0.0
    N_e_heavy = 0.0
    if heat is not None and i_eps >= 0:
        # LOCAL MEAN ENERGY: d<eps>/dt = N mu N [(E/N)^2 - (E/N)_eff^2] (eV/s per electron)
        for i in range(n_s):
            if i != e:
                N_e_heavy += y[i]
        eps_dot = N_e_heavy * muN * (E_N_Td * E_N_Td - E_tab * E_tab) * 1e-21
        f_out[i_eps] = eps_dot
    add_linear_terms(y, linear, f_out)
    prescribed = cond[COND_PRESCRIBED] != 0.0 and e >= 0
    if prescribed:
        f_out[e] = cond[COND_ELECTRON_SLOPE]
    expand = cond[COND_EXPANSION] != 0.0
    g = 0.0
    n_D = 0.0
    if expand:
        sig = 0.0
        for i in range(n_s):
            sig += f_out[i]
            if not (prescribed and i == e):
                n_D += y[i]
        g = sig / n_D if n_D > 0.0 else 0.0
        scal[1] = n_D
        scal[2] = sig
        if energy == ENERGY_ISOBARIC:
            g += Tdot / Tg
        scal[0] = g
        for i in range(n_s):
            if not (prescribed and i == e):
                f_out[i] -= y[i] * g
    if mode >= JACOBIAN:
        split = mode == JACOBIAN_SPLIT
        w = work[9]
        for i in range(n):
            for m in range(n):
                J_out[i, m] = 0.0
        for i in range(n_s):
            w[i] = 0.0
        _jacobian_terms(y, mech, linear, k, dk, nM, J_out, w, split)
        if heat is not None and energy != 0:
            # ENERGY EQUATION: the temperature row, exact (module docstring)
            en = heat[0]
            cp = heat[1]
            nu = linear[0]
            Pm = linear[1]
            dP_heavy = 0.0
            dP_e = 0.0
            if P_e != 0.0:
                dP_heavy = P_e / N_heavy
                dP_e = E_CHARGE * drift * E_N_Td * 1e-21 * N_heavy
            for m in range(n_s):
                acc = 0.0
                for i in range(n_s):
                    acc += en[i] * J_out[i, m]
                if nu[m] != 0.0:
                    lin = -en[m]
                    for q in range(n_s):
                        lin += Pm[m, q] * en[q]
                    acc -= nu[m] * lin
                dP = dP_e if m == e else dP_heavy
                J_out[n_s, m] = (dP - acc - Tdot * cp[m]) / heat_cap if heat_cap > 0.0 else 0.0
        if heat is not None and i_eps >= 0 and N_e_heavy > 0.0:
            # LOCAL MEAN ENERGY: its row (the column comes from the caller's difference)
            for m in range(n_s):
                if m != e:
                    J_out[i_eps, m] = eps_dot / N_e_heavy
        if prescribed:
            w[e] = 0.0
            for m in range(n):
                J_out[e, m] = 0.0
        if expand:
            u = work[7]
            c = work[8]
            inv = 1.0 / n_D if n_D > 0.0 else 0.0
            w_sum = 0.0
            for i in range(n_s):
                w_sum += w[i]
            for m in range(n_s):
                c[m] = w_sum
            for i in range(n_s):
                for m in range(n_s):
                    c[m] += J_out[i, m]
            for m in range(n_s):
                diluted = not (prescribed and m == e)
                c[m] = c[m] * inv - ((g - Tdot / Tg) * inv if (diluted and energy == ENERGY_ISOBARIC)
                                     else (g * inv if diluted else 0.0))
                if energy == ENERGY_ISOBARIC:
                    c[m] += J_out[n_s, m] / Tg
                u[m] = y[m] if diluted else 0.0
                if diluted:
                    J_out[m, m] -= g
            if mode == JACOBIAN:
                for i in range(n_s):
                    ui = u[i]
                    if ui != 0.0:
                        for m in range(n_s):
                            J_out[i, m] -= ui * c[m]
    return mean_eV, drift


def heat_arrays(model):
    """The ``heat`` argument of :func:`evaluate` for ``model``: None at a fixed gas
    temperature, otherwise the enthalpy and heat-capacity scratch of ``work``."""
    if model[4][COND_ENERGY] == 0.0 and model[4][COND_LMEA] == 0.0:
        return None
    return (model[5][W_ENTHALPY], model[5][W_HEAT_CAPACITY])


def temperature_column(E_N_Td, y, model, f0, J_out):
    """Fill the columns of the extra state entries (gas temperature, mean electron energy)
    of ``J_out`` by forward differences.

    ``f0`` = f(y) from :func:`evaluate`; one more right-hand side per entry x at x + dx,
    dx = ``TEMPERATURE_STEP`` max(x, 1) (module docstring). Plain Python over the compiled
    kernel, for callers outside the step loop (which does the same inline).
    """
    n_s = model[2][0].shape[0]
    for col in range(n_s, len(y)):
        yp = np.array(y, dtype=np.float64, copy=True)
        yp[col] = y[col] + TEMPERATURE_STEP * max(y[col], 1.0)
        fp = np.zeros_like(yp)
        evaluate(E_N_Td, yp, model, fp, np.zeros((1, 1)), RHS, heat_arrays(model))
        J_out[:, col] = (fp - f0) / (yp[col] - y[col])


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
