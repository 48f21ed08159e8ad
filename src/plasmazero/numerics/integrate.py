"""The compiled step loop and the public entry point :func:`integrate`.

What it solves
--------------
The species balances of :mod:`plasmazero.numerics.kinetics` (mass action plus the
caller's linear loss/source terms) at a fixed gas temperature or with the gas energy
equation (``energy_equation``, isobaric or isochoric: the temperature is one more entry
of the state, see the kinetics module docstring), with the electrons as one
of the species and their rate coefficients taken from an E/N table (local field
approximation, :mod:`plasmazero.numerics.electrons`) along a field profile E/N(t) that is
piecewise linear in time.

How
---
* RODAS4 (:mod:`plasmazero.numerics.rosenbrock`), an L-stable Rosenbrock method of order 4
  with an embedded order-3 error estimate and order-3 dense output; analytic Jacobian;
  df/dt by a second-order difference quotient in E/N where the field ramps.
* PI step-size control (:mod:`plasmazero.numerics.controller`).
* Restarts: the run is cut into segments at the breakpoints of the field profile (its
  times; a repeated time is a jump) and at the caller's ``breakpoints_s``. Steps land
  exactly on every segment end; each segment starts afresh with a new starting-step
  estimate (Hairer, Nørsett & Wanner 1993, section II.4) and a reset controller memory.
  Inside a field ramp the steps also land on the times the field crosses a node of the
  electron table (the coefficients are linear between nodes, so their derivative jumps
  there: ``field.node_crossings``); there the step size carries over, since the solution
  itself is smooth (not with ``fixed_step_s``, nor with the local mean energy
  approximation, whose table field is not known beforehand).
* Tolerances: a step is accepted when the RMS norm of err_i / (atol_i + rtol |y_i|) is
  <= 1. ``atol_m3`` may be per species; its default is
  ``max(ATOL_FLOOR_M3, ATOL_FRACTION * sum(y0))``: 1 particle per cm^3 (1e6 m^-3), or
  1e-20 of the initial total density when that is larger (above 1e26 m^-3). A choice of
  this code, no source; the floor has to be far below the seed electron density, because
  errors in the seed are amplified by the avalanche of a pulse (with 1e-12 of the total
  density, a toy avalanche from 1e14 m^-3 came out 10 % wrong).
* Non-negativity: a step that leaves any density below -atol_i (a significant
  negative) is rejected and retried with at most half the step. Negative values that are
  within the tolerance (-atol_i <= y_i < 0) are set to zero after acceptance; the
  density so added is counted per species in ``clipped_m3`` of the result, so that the
  (tiny, below atol per step) effect on element conservation is visible. Densities below
  ``FLUSH_FRACTION`` (1e-30) of atol_i are set to zero after each step: they are far
  below anything the error control sees, and left alone they decay into subnormal
  floating-point numbers (below 2.2e-308), whose arithmetic is many times slower (the
  sparse LU took 24 instead of 15 us per step in a CO2/H2 afterglow with two subnormal
  ion densities).
* Integrated rates: the integral of every reaction rate over each accepted step (split
  at the output times) by two-point Gauss-Legendre quadrature on the dense output. The
  dense output is of order 3 (local error O(h^4)) and the quadrature exact for cubics, so
  the integral over a step has a local error O(h^5): the same order as the solution
  (global O(h^4)). The same quadrature integrates the linear terms.
* Composition-dependent electron tables: with ``rebuild_table``, the loop watches the mole
  fractions of the table's collision partners (fractions of the total density of all
  species except the electrons) and returns to Python as soon as any of them drifts by
  more than ``partner_tolerance`` (absolute, default 0.02: a 2 % absolute change of a
  major partner changes the EEDF, and with it the rate coefficients, typically by a few
  per cent, below the uncertainty of most cross-section sets; a choice of this code, no
  source). Python calls ``rebuild_table(mole_fractions)`` with the current fractions of
  all neutral species and the compiled loop continues from the same state. The check
  follows every accepted step, so at a rebuild the drift may exceed the tolerance by what
  one step changed.
* Quasi-neutrality: max over the accepted steps of |sum q_i n_i| / max(positive,
  negative charge density); states whose charged densities are below the sum of their
  absolute tolerances are skipped.

Choice of method (``method``)
-----------------------------
``"rodas4"`` (default) is the one-step method above. ``"bdf"`` is the variable-order BDF
(NDF orders 1-5) of :mod:`plasmazero.numerics.bdf` (Shampine & Reichelt 1997), run by
:func:`_run_bdf` with the same segments, outputs, quadrature, clipping, table monitoring
and failure report; it restarts at order 1 at every hard segment start and after a new
electron table, keeps its history across the soft node crossings of a field ramp, and
keeps Jacobian and factors while its simplified Newton iteration converges. The
integrated rates use the same two-point Gauss rule on its interpolating polynomial (of
the step's order). Measured on the repeated filament of ``benchmarks/bench_kinetics.py``
(shipped CO2/H2 mechanism, 100 filaments, error 1e-5 against a tight reference): RODAS4
needs rtol 5.6e-6 (its global error stays close to rtol: the embedded estimate is of
order 3, the solution of order 4) and 840 steps per filament with 6.9 right-hand sides
and a Jacobian and LU each, 12.3 s; the BDF needs rtol 1.8e-7 (its estimate is of the
error of the solution it keeps, which accumulates to tens of times rtol) and 2130 steps
with 2.05 right-hand sides and a Jacobian every ~270 steps, 8.8 s. With the integrated
rates on, the BDF's two quadrature evaluations per step double its right-hand-side work
(13.3 s); RODAS4's add about a tenth. Take RODAS4 (default) when the error must track
rtol, with integrated rates or many restarts; the BDF on long smooth stretches
(afterglows, residence times) without them; check either by halving rtol.

Options for the discharge workflow
----------------------------------
* ``rate_multipliers`` (n_r,): factors on the evaluated rate coefficients (and on
  dk/dn_M, so the Jacobian stays exact), for sensitivity and uncertainty analysis. REVERSE
  rows take their own factor: a reversible reaction keeps detailed balance only when its
  forward and reverse rows get the same one.
* ``constant_total_density``: the run follows a Lagrangian plug-flow parcel at constant
  pressure and gas temperature. Reactions that change the number of molecules (CO2 ->
  CO + O, 2 O + M -> O2 + M) change the parcel's volume V instead of the total density,
  which stays at its initial value N0: dn_i/dt = f_i - n_i S / N, S = sum_k f_k (linear
  loss and source terms included), N = sum_k n_k (= N0 to round-off: the added term makes
  sum_i dn_i/dt vanish identically, and Rosenbrock methods keep such linear invariants).
  The exact Jacobian of the added term is in :mod:`plasmazero.numerics.kinetics`. The
  expansion factor phi(t) = V(t)/V(t0) = exp(integral of S/N dt) is accumulated with the
  same two-point Gauss-Legendre quadrature as the integrated rates and reported as
  ``expansion_factor``; n_i phi is then the amount per initial volume, and the element
  totals sum_i a_ei n_i phi are conserved to the accuracy of the integration (phi and
  the n_i are integrated separately; measured 0.05 rtol; when every atom stays in the gas
  the reported phi is instead the ratio of atom totals, exact to round-off, see
  :func:`_expansion_factor`). ``integrated_rates_parcel_m3``
  holds the integral of r_j phi dt (reactions per initial volume, for molar bookkeeping),
  with phi at the two quadrature nodes from the straight line through the node values of
  S/N. Gas expansion in plug-flow plasma reactors: e.g. Pinhão et al. (2016), Int. J.
  Hydrogen Energy 41, 9245 (cited from memory).
* ``electron_density_profile``: the electron density imposed as a piecewise-linear
  function of time (NaN = free, :class:`plasmazero.numerics.field.ElectronDensityProfile`).
  Its times are restart times. On a prescribed segment the electron row of the system is
  d n_e/dt = the profile's slope with a zero Jacobian row (the electron column still feeds
  the other rows), y_e is set to the profile's value at the segment start, and the
  expansion term leaves the electrons out (S / N becomes S / (N - n_e) for the others,
  which keeps the total density constant). This is how the discharge layer imposes the
  electron density that the deposited power requires (P = e n_e w E, w the drift
  velocity); elsewhere the electrons follow the kinetics.
* ``integrated_electron_density_s_m3``: the integral of n_e dt by the same quadrature on
  the dense output of the electron density (no extra right-hand-side evaluations), for
  energy bookkeeping (energy per electron times this integral).

Linear algebra
--------------
``linear_solver="auto"`` (default) picks the dense LU with partial pivoting or the sparse
LU on the Jacobian pattern known from the stoichiometry (minimum-degree order, static
pivots with a dense fallback per step, rank-one parts by Woodbury; see
:mod:`plasmazero.numerics.linalg`). Sparse is chosen when the system has at least
``SPARSE_MIN_SPECIES`` = 40 species and one sparse factorisation needs fewer than
``SPARSE_FLOP_FRACTION`` = 1/4 of the n^3/3 multiply-adds of the dense one. Measured
(``benchmarks/bench_kinetics.py --solvers`` and a direct timing of LU plus six solves on
the invented chain mechanisms of 8 to 120 species): the indirect addressing of the
sparse code costs about four times more per operation than the dense loops, so sparse
wins below a quarter of the flops; below ~30 species both take a few microseconds and
the timings are within noise. One RODAS4 step of the shipped CO2/H2 mechanism (57
species, 12 % of the dense flops) took about 120 us sparse against 210 us dense. The
choice is reported in ``KineticsResult.linear_solver``.

References
----------
Shampine, L. F. & Reichelt, M. W. (1997), SIAM J. Sci. Comput. 18, 1 (the BDF option).
Hairer, E. & Wanner, G. (1996), Solving Ordinary Differential Equations II, 2nd ed.,
Springer, section IV.7 (RODAS). Hairer, E., Nørsett, S. P. & Wanner, G. (1993), Solving
Ordinary Differential Equations I, 2nd ed., Springer, section II.4 (error norm, starting
step, step-size control). Gustafsson, K., Lundh, M. & Söderlind, G. (1988), BIT 28, 270
(PI control).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..physics import ratelaws

from .controller import error_norm, next_step_accepted, next_step_rejected
from .electrons import (ElectronTable, field_for_mean_energy, interpolate_table,
                        mean_energy_problems, table_arrays)
from .field import as_density_profile, as_field, density_segments, node_crossings, segments
from .kinetics import (COND_ELECTRON, COND_ELECTRON_SLOPE, COND_ENERGY, COND_EXPANSION,
                       COND_HEAT_LOSS, COND_LMEA, COND_PRESCRIBED, COND_SIZE, COND_T_WALL,
                       ENERGY_ISOBARIC, ENERGY_ISOCHORIC, TEMPERATURE_STEP, JACOBIAN, JACOBIAN_SPLIT, RATES, RHS, charge_imbalance,
                       clear_rate_cache, evaluate, field_at, heat_arrays, jacobian_pattern, linear_terms,
                       left_packed, efficiency_deviations,
                       net_stoichiometry, rate_cache, species_rows)
from .linalg import sparse_symbolic
from .results import (BUFFER_FULL, CAUSE_ERROR, CAUSE_NEGATIVE, CAUSE_NEWTON, CAUSE_NON_FINITE,
                      CAUSE_SINGULAR, CAUSE_TEXT, MAX_STEPS, NON_FINITE_STATE, STATUS_TEXT,
                      STEP_TOO_SMALL, SUCCESS, TABLE_STALE, Counters, IntegrationError,
                      KineticsResult)
from .rosenbrock import (GAMMA, N_STAGES, ORDER, WB_SIZE, dense_coefficients, dense_eval,
                         rodas4_factor, rodas4_finish, rodas4_stage_solve, rodas4_stage_state)
from .bdf import ALPHA as BDF_ALPHA, ERROR_CONST as BDF_ERROR_CONST, MIN_FACTOR as BDF_MIN_FACTOR
from .bdf import (HISTORY_ROWS, NEWTON_MAXITER, change_history, history_eval, history_scratch,
                  newton_tolerance, order_and_factor, predict, scaled_rms, update_history)

#: relative step in E/N of the finite-difference time derivative of f (about eps^(1/3))
FIELD_DERIVATIVE_STEP = 1e-5
ATOL_FLOOR_M3 = 1e6
#: densities below this fraction of their atol are set to zero after each step (module
#: docstring; a choice of this code)
FLUSH_FRACTION = 1e-30
ATOL_FRACTION = 1e-20
#: absolute tolerance of the gas temperature with an energy equation, K (far below any
#: temperature change that matters; the relative tolerance governs; a choice of this code)
ATOL_TEMPERATURE_K = 1e-6
DEFAULT_MAX_STEPS = 200_000
STEP_BUFFER = 1024

# integer state slots of the compiled loop
_I_SEG, _I_OUT, _I_STEPS, _I_ACC, _I_REJ, _I_RHS, _I_JAC, _I_LU, _I_QUAD = range(9)
_I_STATUS, _I_WORST, _I_RESTART, _I_AFTER_REJ, _I_CAUSE, _I_FIRST, _I_REJ_NEG = range(9, 16)
# BDF: order, number of steps of one size, Jacobian valid (1/0)
_I_ORDER, _I_EQUAL, _I_HAVE_JAC = range(16, 19)
_N_I = 19
# float state slots
_F_T, _F_H, _F_ERR_PREV, _F_QN, _F_CLU = range(5)    # _F_CLU: BDF, c of its factors
_N_F = 5
# options
_O_HMAX, _O_HFIX, _O_PTOL, _O_HFIRST, _O_QN_FLOOR = range(5)
_O_MAX_STEPS, _O_MODE, _O_RATES, _O_MONITOR = range(4)


@njit(cache=True)
def _rms_scaled(v, y, atol, rtol):
    """RMS of v_i / (atol_i + rtol_i |y_i|)."""
    acc = 0.0
    for i in range(v.shape[0]):
        q = v[i] / (atol[i] + rtol[i] * abs(y[i]))
        acc += q * q
    return (acc / max(v.shape[0], 1)) ** 0.5


@njit(cache=True)
def _conditions(t, table, cond, k_el, out):
    """E/N (Td), mean energy (eV) and drift velocity (m/s) at ``t`` into ``out``."""
    E = field_at(cond, t)
    mean, drift = interpolate_table(table[0], table[1], table[2], table[3], table[4], E, k_el)
    out[0] = E
    out[1] = mean
    out[2] = drift


@njit(cache=True)
def _store(k, t_out, yv, outs, sums, table, cond, k_el):
    """Write output row ``k``: time, densities ``yv`` (clipped at 0), the cumulative sums
    and the conditions at ``t_out``. ``outs`` = (out_t, out_y, out_R, out_L, out_cond,
    out_ext, out_Rp), ``sums`` = (R_cum, L_cum, cum, Rp_cum)."""
    out_t, out_y, out_R, out_L, out_cond, out_ext, out_Rp = outs
    R_cum, L_cum, cum, Rp_cum = sums
    out_t[k] = t_out
    for i in range(yv.shape[0]):
        out_y[k, i] = yv[i] if yv[i] > 0.0 else 0.0
        out_L[k, i] = L_cum[i]
    for j in range(R_cum.shape[0]):
        out_R[k, j] = R_cum[j]
        out_Rp[k, j] = Rp_cum[j]
    out_ext[k, 0] = math.exp(cum[0])
    out_ext[k, 1] = cum[1]
    out_ext[k, 2] = cum[2]
    out_ext[k, 3] = cum[3]
    _conditions(t_out, table, cond, k_el, out_cond[k])


@njit(cache=True)
def _all_finite(v):
    for x in v.flat:
        if not (abs(x) < math.inf):
            return False
    return True


@njit(cache=True)
def _outputs_through(t_stop, y, t_eval, ist, outs, sums, table, cond, k_el):
    """Write the output rows of every requested time up to ``t_stop`` with the state ``y``
    (a segment end: the state is that of ``t_stop``)."""
    k = ist[_I_OUT]
    while k < t_eval.shape[0] and t_eval[k] <= t_stop:
        _store(k, t_eval[k], y, outs, sums, table, cond, k_el)
        k += 1
    ist[_I_OUT] = k


@njit(cache=True)
def _store_step(t, y, ist, outs, sums, table, cond, k_el):
    """Every-step output: one row for the accepted state; True when the buffer is full."""
    k = ist[_I_OUT]
    _store(k, t, y, outs, sums, table, cond, k_el)
    ist[_I_OUT] = k + 1
    return k + 1 >= outs[0].shape[0]


@njit(cache=True)
def _set_segment(cond, seg, stops, seg_E0, seg_slope, seg_ne):
    """Field and electron-density conditions of segment ``seg`` into ``cond``."""
    cond[1] = stops[seg]
    cond[2] = seg_E0[seg]
    cond[3] = seg_slope[seg]
    cond[COND_PRESCRIBED] = seg_ne[seg, 0]
    cond[COND_ELECTRON_SLOPE] = seg_ne[seg, 2]


@njit(cache=True)
def _accept_state(ynew, y, clipped, atol, n_species):
    """y = ynew with negatives clipped (booked in ``clipped``) and densities below
    FLUSH_FRACTION atol set to zero (module docstring)."""
    for i in range(y.shape[0]):
        v = ynew[i]
        if v < 0.0:
            clipped[i] -= v
            v = 0.0
        elif v < FLUSH_FRACTION * atol[i] and i < n_species:
            v = 0.0     # far below the tolerance: no subnormal numbers (docstring)
        y[i] = v


@njit(cache=True)
def _table_stale(y, heavy, partner_idx, partner_ref, ptol):
    """True when a collision partner's mole fraction drifted by more than ``ptol``."""
    total = 0.0
    for i in range(y.shape[0]):
        if heavy[i]:
            total += y[i]
    if not total > 0.0:
        return False
    for p in range(partner_idx.shape[0]):
        if abs(y[partner_idx[p]] / total - partner_ref[p]) > ptol:
            return True
    return False


@njit(cache=True)
def _parcel_quadrature(cum, gq, pq, hq, rq, r, Rp_cum, w, h, theta_a, mid, half, expand,
                       energy, do_rates):
    """Book the parcel integrals of one two-point Gauss interval from the node values:
    ``gq`` S/N_D, ``pq`` electron power, ``hq`` heat loss, ``rq`` / ``r`` the rates at the
    first / second node. ln(phi) at the nodes is the integral from ``theta_a`` of the
    straight line through the two node values of S/N_D."""
    inv_sqrt3 = 1.0 / math.sqrt(3.0)
    p1 = 1.0
    p2 = 1.0
    if expand:
        d1 = mid - half * inv_sqrt3 - theta_a
        ds = 2.0 * half * inv_sqrt3
        sg = (gq[1] - gq[0]) / ds
        p1 = math.exp(cum[0] + h * (d1 * gq[0] - 0.5 * sg * d1 * d1))
        p2 = math.exp(cum[0] + h * ((d1 + ds) * gq[0] + 0.5 * sg * (ds * ds - d1 * d1)))
        if do_rates:
            for j in range(Rp_cum.shape[0]):
                Rp_cum[j] += w * (rq[j] * p1 + r[j] * p2)
        cum[0] += w * (gq[0] + gq[1])
    if energy:
        cum[2] += w * (pq[0] * p1 + pq[1] * p2)
        cum[3] += w * (hq[0] * p1 + hq[1] * p2)


@njit(cache=True)
def _run(y, fst, ist, stops, seg_E0, seg_slope, seg_ne, seg_soft, model, heat, rtol, atol, opts_f, opts_i,
         t_eval, out_t, out_y, out_R, out_L, out_cond, out_ext, out_Rp, R_cum, L_cum, cum,
         Rp_cum, clipped, partner_idx, partner_ref, heavy, charge, sp):
    """The step loop; returns a status (``results`` codes). All state lives in the arrays.

    ``heat``: None (fixed gas temperature; the energy-equation code is then pruned from
    this specialisation) or the scratch of ``kinetics.heat_arrays``. ``seg_ne`` (n_seg, 3): per segment [prescribed (1/0), n_e at its start, slope] of the
    electron density; ``seg_soft`` (n_seg,) 1 where a segment starts at a node of the
    electron table inside a field ramp (no restart: the step size carries over);
    ``cum`` = [integral of S/N_D dt (ln of the expansion factor),
    integral of n_e dt, integral of P_e phi dt, integral of the heat loss phi dt]; ``Rp_cum``
    the parcel integrals of the rates; ``out_ext`` (cap, 4) and ``out_Rp`` (cap, n_r) their
    outputs (expansion factor, integral of n_e, the two energy integrals).

    The loop runs until the end time, a failure, a stale electron table (``TABLE_STALE``)
    or a full output buffer (``BUFFER_FULL``); the driver may call it again to continue.
    Starting-step estimate, df/dt and the quadrature of the rates are written out here
    rather than as separate kernels: every kernel that calls the rate-law kernel links and
    compiles it again, so their number is kept at two (evaluate, _run).
    """
    n = y.shape[0]
    n_r = R_cum.shape[0]
    table = model[3]
    cond = model[4]
    work = model[5]
    linear = model[2]
    f0 = np.empty(n)
    fdt = np.empty(n)
    ftmp = np.empty(n)
    ynew = np.empty(n)
    ystage = np.empty(n)
    fstage = np.empty(n)
    J = np.empty((n, n))
    lu = np.empty((n, n))
    piv = np.empty(n, dtype=np.int64)
    U = np.empty((6, n))
    wb = np.zeros(WB_SIZE)
    wu = work[7]
    wc = work[8]
    ww = work[9]
    h1 = np.empty(n)
    h2 = np.empty(n)
    yd = np.empty(n)
    lq = np.empty(n)
    k_el = np.empty(table[2].shape[1])
    outs = (out_t, out_y, out_R, out_L, out_cond, out_ext, out_Rp)
    sums = (R_cum, L_cum, cum, Rp_cum)
    rq = np.empty(n_r)
    gq = np.empty(2)
    scal = work[6]
    inv_sqrt3 = 1.0 / math.sqrt(3.0)
    e_idx = int(cond[COND_ELECTRON])
    expand = cond[COND_EXPANSION] != 0.0
    energy = heat is not None and cond[COND_ENERGY] != 0.0
    n_species = linear[0].shape[0]

    t = fst[_F_T]
    h = fst[_F_H]
    err_prev = fst[_F_ERR_PREV]
    h_wanted = h
    seg = ist[_I_SEG]
    n_seg = stops.shape[0] - 1
    n_eval = t_eval.shape[0]
    max_steps = opts_i[_O_MAX_STEPS]
    step_mode = opts_i[_O_MODE] == 1
    do_rates = opts_i[_O_RATES] == 1
    do_quad = do_rates or expand or energy
    jac_mode = JACOBIAN_SPLIT if sp[0][0] == 1 else JACOBIAN
    quad_mode = RHS if (expand or energy) else RATES
    pq = np.zeros(2)
    hq = np.zeros(2)
    monitor = opts_i[_O_MONITOR] == 1
    h_max = opts_f[_O_HMAX]
    h_fixed = opts_f[_O_HFIX]
    ptol = opts_f[_O_PTOL]
    qn_floor = opts_f[_O_QN_FLOOR]
    eps = 2.220446049250313e-16
    status = SUCCESS
    if seg < n_seg:
        _set_segment(cond, seg, stops, seg_E0, seg_slope, seg_ne)
    while True:
        if seg >= n_seg:
            break
        t_stop = stops[seg + 1]
        if t >= t_stop - 10.0 * eps * max(abs(t), abs(t_stop)):
            # restart: next segment of the field profile / breakpoints (a sliver shorter
            # than 10 eps |t| before the stop is skipped: no step can resolve it)
            if not step_mode:
                _outputs_through(t_stop, y, t_eval, ist, outs, sums, table, cond, k_el)
            t = max(t, t_stop)
            seg += 1
            if seg < n_seg and seg_soft[seg] == 1:
                # a node of the electron table: the step size carries over (its
                # proposal before the landing shortened it, when that was larger)
                h = max(h, h_wanted)
            else:
                ist[_I_RESTART] = 1
            if seg < n_seg:
                _set_segment(cond, seg, stops, seg_E0, seg_slope, seg_ne)
                if seg_ne[seg, 0] != 0.0 and e_idx >= 0:
                    # prescribed electron density: restart from the profile's value
                    y[e_idx] = seg_ne[seg, 1]
            continue
        if ist[_I_STEPS] >= max_steps:
            status = MAX_STEPS
            break
        E_now = field_at(cond, t)
        evaluate(E_now, y, model, f0, J, jac_mode, heat)
        ist[_I_JAC] += 1
        ist[_I_RHS] += 1
        if heat is not None:
            # columns of the extra entries (temperature, mean electron energy) by forward
            # differences (kinetics docstring; written here so that no other kernel links
            # evaluate)
            for col in range(n_species, n):
                for i in range(n):
                    yd[i] = y[i]
                dx = TEMPERATURE_STEP * max(y[col], 1.0)
                yd[col] = y[col] + dx
                dx = yd[col] - y[col]
                evaluate(E_now, yd, model, ftmp, J, RHS, heat)
                ist[_I_RHS] += 1
                for i in range(n):
                    J[i, col] = (ftmp[i] - f0[i]) / dx
        if not (_all_finite(f0) and _all_finite(J)):
            status = NON_FINITE_STATE
            ist[_I_CAUSE] = CAUSE_NON_FINITE
            for i in range(n):
                if not (abs(f0[i]) < math.inf):
                    ist[_I_WORST] = i
                    break
            break
        # df/dt = slope * df/d(E/N): one-sided second-order difference in E/N,
        # (-3 f(E) + 4 f(E + d) - f(E + 2d)) / (2 d), never at E/N < 0 (e.g. Fornberg
        # 1988, Math. Comp. 51, 699, table of one-sided weights). Its error O(d^2) keeps
        # the order of the method visible down to ~1e-13 relative; a forward difference
        # (error O(d)) left a floor 100 times higher in the field-ramp order test.
        use_fdt = cond[3] != 0.0
        if use_fdt:
            # on the side the field moves to (the side of the step; at a table node the
            # two sides differ), forward when a backward difference would cross zero
            dE = FIELD_DERIVATIVE_STEP * max(E_now, 1.0)
            if cond[3] < 0.0 and E_now > 2.0 * dE:
                dE = -dE
            for q in range(2):      # one call site (each site costs compile time)
                fq = ftmp if q == 0 else fstage
                evaluate(E_now + (q + 1.0) * dE, y, model, fq, J, RHS, heat)
            ist[_I_RHS] += 2
            fac = cond[3] / (2.0 * dE)
            for i in range(n):
                fdt[i] = (4.0 * ftmp[i] - 3.0 * f0[i] - fstage[i]) * fac
        span = t_stop - t
        if h_fixed > 0.0:
            h = h_fixed
        elif ist[_I_RESTART] == 1:
            if ist[_I_FIRST] == 1 and opts_f[_O_HFIRST] > 0.0:
                h = opts_f[_O_HFIRST]
            else:
                # starting step (Hairer, Norsett & Wanner 1993, section II.4), error order 3
                d0 = _rms_scaled(y, y, atol, rtol)
                d1 = _rms_scaled(f0, y, atol, rtol)
                if d0 < 1e-5 or d1 < 1e-5:
                    h0 = 1e-6 * span
                else:
                    h0 = 0.01 * d0 / d1
                h0 = min(h0, span)
                for i in range(n):
                    ystage[i] = y[i] + h0 * f0[i]
                evaluate(field_at(cond, t + h0), ystage, model, fstage, J, RHS, heat)
                ist[_I_RHS] += 1
                for i in range(n):
                    fstage[i] -= f0[i]
                d2 = _rms_scaled(fstage, y, atol, rtol) / h0
                big = max(d1, d2)
                if big <= 1e-15:
                    hh = max(1e-6 * span, h0 * 1e-3)
                else:
                    hh = (0.01 / big) ** (1.0 / ORDER)
                h = min(100.0 * h0, hh, span)
                # the JACOBIAN call above is still valid: J was not overwritten in RHS mode
            err_prev = 1.0
            ist[_I_AFTER_REJ] = 0
        ist[_I_RESTART] = 0
        ist[_I_FIRST] = 0
        if h > h_max:
            h = h_max
        h_min = 10.0 * eps * abs(t) + 1e-300    # t + h_min is distinguishable from t
        if h < h_min:
            status = STEP_TOO_SMALL
            break
        failed = False
        landing = False
        err = 0.0
        while True:
            landing = False
            if t + 1.01 * h >= t_stop:
                h_wanted = h
                h = t_stop - t
                landing = True
            ist[_I_STEPS] += 1
            # one RODAS4 step (rosenbrock.rodas4_step, its stages written out here so that
            # the right-hand side is linked into this kernel only)
            info = rodas4_factor(h, J, expand, wu, wc, ww, lu, piv, sp, wb)
            if info == 0:
                for s_ in range(N_STAGES):
                    if s_ == 0:
                        for i in range(n):
                            fstage[i] = f0[i]
                    else:
                        ts = rodas4_stage_state(s_, t, y, h, U, ystage)
                        evaluate(field_at(cond, ts), ystage, model, fstage, J, RHS, heat)
                    rodas4_stage_solve(s_, h, fstage, fdt, use_fdt, expand, wc, lu, piv, U, sp, wb)
                rodas4_finish(y, U, ynew)
            ist[_I_LU] += 1
            cause = 0
            worst = 0
            if info != 0:
                err = math.inf
                cause = CAUSE_SINGULAR
                worst = info - 1
            else:
                ist[_I_RHS] += 5
                err, worst = error_norm(y, ynew, U[5], atol, rtol)
                if not (err < math.inf):
                    cause = CAUSE_NON_FINITE
                elif err > 1.0:
                    cause = CAUSE_ERROR
                if cause == 0 or cause == CAUSE_ERROR:
                    most = 0.0
                    for i in range(n):
                        q = ynew[i] + atol[i]
                        if q < 0.0 and q / atol[i] < most:
                            most = q / atol[i]
                            worst = i
                            cause = CAUSE_NEGATIVE
            ist[_I_WORST] = worst
            if h_fixed > 0.0:
                if cause == CAUSE_SINGULAR or cause == CAUSE_NON_FINITE:
                    failed = True
                    status = NON_FINITE_STATE
                    ist[_I_CAUSE] = cause
                break
            if cause == 0:
                break
            ist[_I_REJ] += 1
            ist[_I_CAUSE] = cause
            if cause == CAUSE_NEGATIVE:
                ist[_I_REJ_NEG] += 1
                h = min(0.5 * h, next_step_rejected(h, max(err, 1.0)))
            else:
                h = next_step_rejected(h, err)
            ist[_I_AFTER_REJ] = 1
            if h < h_min:
                status = STEP_TOO_SMALL
                failed = True
                break
            if ist[_I_STEPS] >= max_steps:
                status = MAX_STEPS
                failed = True
                break
        if failed:
            break
        # accepted step [t, t_new]: outputs and integrated rates on the dense output
        t_new = t_stop if landing else t + h
        dense_coefficients(U, h1, h2)
        theta_a = 0.0
        k = ist[_I_OUT]
        while True:
            is_out = (not step_mode) and k < n_eval and t_eval[k] <= t_new
            th = 1.0
            if is_out:
                th = min(1.0, max(0.0, (t_eval[k] - t) / h))
            if th > theta_a:
                # two-point Gauss-Legendre rule on [theta_a, th] (Abramowitz & Stegun
                # 1964, Handbook of Mathematical Functions, 25.4.29)
                half = 0.5 * (th - theta_a)
                mid = 0.5 * (th + theta_a)
                w = half * h
                if e_idx >= 0:
                    for node_sign in range(2):
                        node = mid + (2 * node_sign - 1) * half * inv_sqrt3
                        s1 = 1.0 - node
                        cum[1] += w * (s1 * y[e_idx] + node * (
                            ynew[e_idx] + s1 * (h1[e_idx] + node * h2[e_idx])))
                if do_quad:
                    for node_sign in range(2):
                        node = mid + (2 * node_sign - 1) * half * inv_sqrt3
                        dense_eval(node, y, ynew, h1, h2, yd)
                        evaluate(field_at(cond, t + node * h), yd, model, ftmp, J, quad_mode, heat)
                        if do_rates:
                            r = work[3]
                            for j in range(n_r):
                                R_cum[j] += w * r[j]
                            linear_terms(yd, linear, lq)
                            for i in range(n):
                                L_cum[i] += w * lq[i]
                            if node_sign == 0:
                                for j in range(n_r):
                                    rq[j] = r[j]
                        gq[node_sign] = scal[0]
                        pq[node_sign] = scal[3]
                        hq[node_sign] = scal[4]
                    ist[_I_QUAD] += 2
                    _parcel_quadrature(cum, gq, pq, hq, rq, work[3], Rp_cum, w, h, theta_a,
                                       mid, half, expand, energy, do_rates)
            theta_a = th
            if not is_out:
                break
            dense_eval(th, y, ynew, h1, h2, yd)
            _store(k, t_eval[k], yd, outs, sums, table, cond, k_el)
            k += 1
        ist[_I_OUT] = k
        _accept_state(ynew, y, clipped, atol, n_species)
        h_used = h
        t = t_new
        ist[_I_ACC] += 1
        qn = charge_imbalance(y, charge, qn_floor)
        if qn > fst[_F_QN]:
            fst[_F_QN] = qn
        if h_fixed <= 0.0:
            h = next_step_accepted(h_used, err, err_prev, ist[_I_AFTER_REJ] == 1)
            err_prev = max(err, 1e-4)
            ist[_I_AFTER_REJ] = 0
        if step_mode and _store_step(t, y, ist, outs, sums, table, cond, k_el):
            status = BUFFER_FULL
            break
        if monitor and _table_stale(y, heavy, partner_idx, partner_ref, ptol):
            status = TABLE_STALE
            break
    fst[_F_T] = t
    fst[_F_H] = h
    fst[_F_ERR_PREV] = err_prev
    ist[_I_SEG] = seg
    ist[_I_STATUS] = status
    return status


@njit(cache=True)
def _run_bdf(y, fst, ist, stops, seg_E0, seg_slope, seg_ne, seg_soft, model, heat, rtol, atol,
             opts_f, opts_i, t_eval, out_t, out_y, out_R, out_L, out_cond, out_ext, out_Rp,
             R_cum, L_cum, cum, Rp_cum, clipped, partner_idx, partner_ref, heavy, charge, sp,
             D, D_scratch, J, lu, piv, wb):
    """The step loop of the variable-order BDF (:mod:`plasmazero.numerics.bdf`); same
    arguments, state slots, outputs and return codes as :func:`_run`, plus the history
    ``D`` (HISTORY_ROWS, n) and its scratch, the Jacobian ``J``, its factors ``lu``,
    ``piv`` and the Woodbury scratch ``wb``, which persist between calls (order, count of
    equal steps and whether J is valid in ``ist[_I_ORDER]``, ``ist[_I_EQUAL]``,
    ``ist[_I_HAVE_JAC]``; c of the factors in ``fst[_F_CLU]``), so that a full output
    buffer changes nothing. A hard segment start, the first call and a new
    electron table restart it at order 1 (``ist[_I_RESTART]``); at a soft segment start
    (a node of the electron table inside a field ramp) the history carries over.
    """
    n = y.shape[0]
    n_r = R_cum.shape[0]
    table = model[3]
    cond = model[4]
    work = model[5]
    linear = model[2]
    f = np.empty(n)
    ftmp = np.empty(n)
    fdt = np.zeros(n)
    y_pred = np.empty(n)
    ynew = np.empty(n)
    psi = np.empty(n)
    scale = np.empty(n)
    dcor = np.empty(n)
    tmp = np.empty(n)
    yd = np.empty(n)
    lq = np.empty(n)
    U = np.empty((1, n))
    wu = work[7]
    wc = work[8]
    ww = work[9]
    k_el = np.empty(table[2].shape[1])
    outs = (out_t, out_y, out_R, out_L, out_cond, out_ext, out_Rp)
    sums = (R_cum, L_cum, cum, Rp_cum)
    rq = np.empty(n_r)
    gq = np.empty(2)
    pq = np.zeros(2)
    hq = np.zeros(2)
    scal = work[6]
    inv_sqrt3 = 1.0 / math.sqrt(3.0)
    e_idx = int(cond[COND_ELECTRON])
    expand = cond[COND_EXPANSION] != 0.0
    energy = heat is not None and cond[COND_ENERGY] != 0.0
    n_species = linear[0].shape[0]
    newton_tol = newton_tolerance(rtol.min())
    eps = 2.220446049250313e-16

    t = fst[_F_T]
    h = fst[_F_H]
    order = ist[_I_ORDER]
    n_equal = ist[_I_EQUAL]
    h_wanted = h
    seg = ist[_I_SEG]
    n_seg = stops.shape[0] - 1
    n_eval = t_eval.shape[0]
    max_steps = opts_i[_O_MAX_STEPS]
    step_mode = opts_i[_O_MODE] == 1
    do_rates = opts_i[_O_RATES] == 1
    do_quad = do_rates or expand or energy
    jac_mode = JACOBIAN_SPLIT if sp[0][0] == 1 else JACOBIAN
    quad_mode = RHS if (expand or energy) else RATES
    monitor = opts_i[_O_MONITOR] == 1
    h_max = opts_f[_O_HMAX]
    ptol = opts_f[_O_PTOL]
    qn_floor = opts_f[_O_QN_FLOOR]
    status = SUCCESS
    have_jac = ist[_I_HAVE_JAC] == 1    # J (and the split parts) valid for the history
    c_lu = fst[_F_CLU]                  # c of the current factorisation (0: none)
    if seg < n_seg:
        _set_segment(cond, seg, stops, seg_E0, seg_slope, seg_ne)
    while True:
        if seg >= n_seg:
            break
        t_stop = stops[seg + 1]
        if t >= t_stop - 10.0 * eps * max(abs(t), abs(t_stop)):
            if not step_mode:
                _outputs_through(t_stop, y, t_eval, ist, outs, sums, table, cond, k_el)
            t = max(t, t_stop)
            seg += 1
            if seg < n_seg and seg_soft[seg] == 1 and ist[_I_RESTART] == 0:
                # a node of the electron table: the history carries over, with the step
                # size proposed before the landing shortened it
                if h_wanted > h:
                    change_history(D, order, h_wanted / h, D_scratch)
                    h = h_wanted
                    n_equal = 0
            else:
                ist[_I_RESTART] = 1
            if seg < n_seg:
                _set_segment(cond, seg, stops, seg_E0, seg_slope, seg_ne)
                if seg_ne[seg, 0] != 0.0 and e_idx >= 0:
                    y[e_idx] = seg_ne[seg, 1]
            continue
        if ist[_I_STEPS] >= max_steps:
            status = MAX_STEPS
            break
        span = t_stop - t
        if ist[_I_RESTART] == 1 or not have_jac:
            # Jacobian at the current point (a restart, or the first step of this call)
            for jac_pass in range(2 if ist[_I_RESTART] == 1 else 1):
                if jac_pass == 0:
                    for i in range(n):
                        yd[i] = y[i]
                    E_now = field_at(cond, t)
                    evaluate(E_now, yd, model, f, J, jac_mode, heat)
                    ist[_I_JAC] += 1
                    ist[_I_RHS] += 1
                    if heat is not None:
                        for col in range(n_species, n):
                            for i in range(n):
                                tmp[i] = yd[i]
                            dx = TEMPERATURE_STEP * max(yd[col], 1.0)
                            tmp[col] = yd[col] + dx
                            dx = tmp[col] - yd[col]
                            evaluate(E_now, tmp, model, ftmp, J, RHS, heat)
                            ist[_I_RHS] += 1
                            for i in range(n):
                                J[i, col] = (ftmp[i] - f[i]) / dx
                    if not (_all_finite(f) and _all_finite(J)):
                        break
                else:
                    # starting step (Hairer, Norsett & Wanner 1993, section II.4), order 1
                    if ist[_I_FIRST] == 1 and opts_f[_O_HFIRST] > 0.0:
                        h = min(opts_f[_O_HFIRST], span)
                    else:
                        d0 = _rms_scaled(y, y, atol, rtol)
                        d1 = _rms_scaled(f, y, atol, rtol)
                        h0 = 1e-6 * span if (d0 < 1e-5 or d1 < 1e-5) else 0.01 * d0 / d1
                        h0 = min(h0, span)
                        for i in range(n):
                            tmp[i] = y[i] + h0 * f[i]
                        evaluate(field_at(cond, t + h0), tmp, model, ftmp, J, RHS, heat)
                        ist[_I_RHS] += 1
                        for i in range(n):
                            ftmp[i] -= f[i]
                        d2 = _rms_scaled(ftmp, y, atol, rtol) / h0
                        big = max(d1, d2)
                        hh = max(1e-6 * span, h0 * 1e-3) if big <= 1e-15 else (0.01 / big) ** 0.5
                        h = min(100.0 * h0, hh, span)
                    for i in range(n):
                        D[0, i] = y[i]
                        D[1, i] = h * f[i]
                    order = 1
                    n_equal = 0
            if not (_all_finite(f) and _all_finite(J)):
                status = NON_FINITE_STATE
                ist[_I_CAUSE] = CAUSE_NON_FINITE
                for i in range(n):
                    if not (abs(f[i]) < math.inf):
                        ist[_I_WORST] = i
                        break
                break
            have_jac = True
            c_lu = 0.0
            ist[_I_RESTART] = 0
            ist[_I_FIRST] = 0
        if h > h_max:
            change_history(D, order, h_max / h, D_scratch)
            h = h_max
            n_equal = 0
        h_min = 10.0 * eps * abs(t) + 1e-300
        current_jac = False
        failed = False
        landing = False
        err = 0.0
        n_iter = 0
        while True:
            if h < h_min:
                status = STEP_TOO_SMALL
                failed = True
                break
            if ist[_I_STEPS] >= max_steps:
                status = MAX_STEPS
                failed = True
                break
            landing = False
            if t + 1.01 * h >= t_stop:
                h_wanted = h
                change_history(D, order, (t_stop - t) / h, D_scratch)
                h = t_stop - t
                n_equal = 0
                landing = True
            ist[_I_STEPS] += 1
            t_new = t_stop if landing else t + h
            predict(D, order, atol, rtol, y_pred, psi, scale)
            c = h / BDF_ALPHA[order]
            converged = False
            cause = 0
            E_new = field_at(cond, t_new)
            while True:
                if c_lu != c:
                    info = rodas4_factor(c / GAMMA, J, expand, wu, wc, ww, lu, piv, sp, wb)
                    ist[_I_LU] += 1
                    if info != 0:
                        cause = CAUSE_SINGULAR
                        ist[_I_WORST] = info - 1
                        c_lu = 0.0
                        break
                    c_lu = c
                for i in range(n):
                    ynew[i] = y_pred[i]
                    dcor[i] = 0.0
                dy_old = -1.0
                finite = True
                for it in range(NEWTON_MAXITER):
                    n_iter = it + 1
                    evaluate(E_new, ynew, model, f, J, RHS, heat)
                    ist[_I_RHS] += 1
                    if not _all_finite(f):
                        finite = False
                        break
                    inv_c = 1.0 / c
                    for i in range(n):
                        U[0, i] = f[i] - (psi[i] + dcor[i]) * inv_c
                    rodas4_stage_solve(0, 1.0, U[0], fdt, False, expand, wc, lu, piv, U, sp, wb)
                    dy = scaled_rms(U[0], scale, 1.0)
                    rate = -1.0
                    if dy_old >= 0.0:
                        rate = dy / dy_old
                    if rate >= 0.0 and (rate >= 1.0 or rate ** (NEWTON_MAXITER - it)
                                        / (1.0 - rate) * dy > newton_tol):
                        break
                    for i in range(n):
                        ynew[i] += U[0, i]
                        dcor[i] += U[0, i]
                    if dy == 0.0 or (rate >= 0.0 and rate / (1.0 - rate) * dy < newton_tol):
                        converged = True
                        break
                    dy_old = dy
                if converged:
                    break
                if not finite:
                    cause = CAUSE_NON_FINITE
                    break
                if current_jac:
                    cause = CAUSE_NEWTON
                    break
                # refresh the Jacobian at the predicted point and retry
                evaluate(E_new, y_pred, model, f, J, jac_mode, heat)
                ist[_I_JAC] += 1
                ist[_I_RHS] += 1
                if heat is not None:
                    for col in range(n_species, n):
                        for i in range(n):
                            tmp[i] = y_pred[i]
                        dx = TEMPERATURE_STEP * max(y_pred[col], 1.0)
                        tmp[col] = y_pred[col] + dx
                        dx = tmp[col] - y_pred[col]
                        evaluate(E_new, tmp, model, ftmp, J, RHS, heat)
                        ist[_I_RHS] += 1
                        for i in range(n):
                            J[i, col] = (ftmp[i] - f[i]) / dx
                if not (_all_finite(f) and _all_finite(J)):
                    cause = CAUSE_NON_FINITE
                    break
                c_lu = 0.0
                current_jac = True
            worst = 0
            safety = 0.9 * (2 * NEWTON_MAXITER + 1) / (2 * NEWTON_MAXITER + n_iter)
            if converged:
                for i in range(n):
                    scale[i] = atol[i] + rtol[i] * abs(ynew[i])
                err = scaled_rms(dcor, scale, BDF_ERROR_CONST[order])
                worst_q = 0.0
                for i in range(n):
                    q = abs(dcor[i]) / scale[i]
                    if q > worst_q:
                        worst_q = q
                        worst = i
                cause = CAUSE_ERROR if err > 1.0 else 0
                most = 0.0
                for i in range(n):
                    q = ynew[i] + atol[i]
                    if q < 0.0 and q / atol[i] < most:
                        most = q / atol[i]
                        worst = i
                        cause = CAUSE_NEGATIVE
            ist[_I_WORST] = worst
            if cause == 0:
                break
            ist[_I_REJ] += 1
            ist[_I_CAUSE] = cause
            if cause == CAUSE_ERROR:
                factor = max(BDF_MIN_FACTOR, safety * err ** (-1.0 / (order + 1)))
            else:
                factor = 0.5
                if cause == CAUSE_NEGATIVE:
                    ist[_I_REJ_NEG] += 1
                else:
                    c_lu = 0.0
            change_history(D, order, factor, D_scratch)
            h *= factor
            n_equal = 0
        if failed:
            break
        # accepted step [t, t_new]
        h_used = h
        update_history(D, order, dcor)
        theta_a = 0.0
        k = ist[_I_OUT]
        while True:
            is_out = (not step_mode) and k < n_eval and t_eval[k] <= t_new
            th = 1.0
            if is_out:
                th = min(1.0, max(0.0, (t_eval[k] - t) / h_used))
            if th > theta_a:
                half = 0.5 * (th - theta_a)
                mid = 0.5 * (th + theta_a)
                w = half * h_used
                for node_sign in range(2):
                    node = mid + (2 * node_sign - 1) * half * inv_sqrt3
                    history_eval(node, D, order, yd)
                    if e_idx >= 0:
                        cum[1] += w * yd[e_idx]
                    if do_quad:
                        evaluate(field_at(cond, t + node * h_used), yd, model, ftmp, J,
                                 quad_mode, heat)
                        if do_rates:
                            r = work[3]
                            for j in range(n_r):
                                R_cum[j] += w * r[j]
                            linear_terms(yd, linear, lq)
                            for i in range(n):
                                L_cum[i] += w * lq[i]
                            if node_sign == 0:
                                for j in range(n_r):
                                    rq[j] = r[j]
                        gq[node_sign] = scal[0]
                        pq[node_sign] = scal[3]
                        hq[node_sign] = scal[4]
                if do_quad:
                    ist[_I_QUAD] += 2
                    _parcel_quadrature(cum, gq, pq, hq, rq, work[3], Rp_cum, w, h_used,
                                       theta_a, mid, half, expand, energy, do_rates)
            theta_a = th
            if not is_out:
                break
            history_eval(th, D, order, yd)
            _store(k, t_eval[k], yd, outs, sums, table, cond, k_el)
            k += 1
        ist[_I_OUT] = k
        _accept_state(ynew, y, clipped, atol, n_species)
        for i in range(n):
            if y[i] != ynew[i]:
                D[0, i] = y[i]      # the history ends on the clipped state
        t = t_new
        ist[_I_ACC] += 1
        n_equal += 1
        qn = charge_imbalance(y, charge, qn_floor)
        if qn > fst[_F_QN]:
            fst[_F_QN] = qn
        if n_equal >= order + 1:
            new_order, factor = order_and_factor(D, order, err, safety, scale)
            order = new_order
            change_history(D, order, factor, D_scratch)
            h *= factor
            n_equal = 0
        if step_mode and _store_step(t, y, ist, outs, sums, table, cond, k_el):
            status = BUFFER_FULL
            break
        if monitor and _table_stale(y, heavy, partner_idx, partner_ref, ptol):
            status = TABLE_STALE
            break
    fst[_F_T] = t
    fst[_F_H] = h
    fst[_F_CLU] = c_lu
    ist[_I_HAVE_JAC] = 1 if have_jac else 0
    ist[_I_ORDER] = order
    ist[_I_EQUAL] = n_equal
    ist[_I_SEG] = seg
    ist[_I_STATUS] = status
    return status


# ----------------------------------------------------------------------------- driver


def _vector(value, n, name, default=0.0):
    if value is None:
        return np.full(n, float(default))
    v = np.asarray(value, dtype=np.float64)
    if v.ndim == 0:
        v = np.full(n, float(v))
    if v.shape != (n,):
        raise ValueError(f"{name} must be a scalar or have shape ({n},), got {v.shape}")
    if not np.all(np.isfinite(v)):
        raise ValueError(f"{name} must be finite")
    return np.ascontiguousarray(v)


def _electron_index(mech, electron_species):
    species = tuple(mech.species)
    if electron_species is not None:
        if electron_species not in species:
            raise ValueError(f"electron species {electron_species!r} is not in the mechanism")
        return species.index(electron_species)
    idx = getattr(mech, "electron_index", None)
    if idx is not None and int(idx) >= 0:
        return int(idx)
    for name in ("e", "e-"):
        if name in species:
            return species.index(name)
    return -1


def _expansion_factor(mech, mech_arrays, y_start, y_out, phi_quadrature, linear):
    """The parcel's expansion factor V(t)/V(t0) at the output rows.

    The compiled loop integrates ln(phi) = integral of d ln V/dt by quadrature; its error
    is of the order of the tolerance, so that element totals sum_i a_ei n_i phi drift at
    that level (measured 5e-5 at rtol 1e-4 through heated filaments). When the mechanism
    has element counts and the linear terms keep every atom in the gas, the number of
    atoms of the parcel is conserved, and phi = A(t0) / A(t) with A = sum over elements
    and species of a_ei n_i. The stepper keeps the ratios of the element totals exactly
    (they are linear invariants of the diluted system: a Rosenbrock stage maps the
    subspace they define onto itself), so this phi makes the element balance exact to
    round-off and agrees with the quadrature within the tolerance. Otherwise the
    quadrature value is returned.
    """
    counts = getattr(mech, "element_counts", None)
    elements = tuple(getattr(mech, "elements", ()))
    if (counts is None or phi_quadrature.size == 0 or np.any(linear[2] != 0.0)
            or np.all(phi_quadrature == 1.0)):
        return phi_quadrature.copy()                          # no expansion, or a source
    counts = np.asarray(counts, dtype=float)
    keep = np.array([e != "E" for e in elements], dtype=bool) if elements else np.ones(counts.shape[0], bool)
    atoms = counts[keep].sum(axis=0)                          # atoms per molecule of each species
    net_index, net_coeff = mech_arrays[1], mech_arrays[2]
    change = np.where(net_index >= 0, net_coeff * atoms[np.maximum(net_index, 0)], 0.0).sum(axis=1)
    if np.any(np.abs(change) > 1e-9 * max(float(atoms.max()), 1.0)):
        return phi_quadrature.copy()                          # the reactions do not keep atoms
    nu, P = linear[0], linear[1]
    for i in np.flatnonzero(nu != 0.0):
        if abs(float(P[i] @ atoms) - atoms[i]) > 1e-12 * max(atoms[i], 1.0):
            return phi_quadrature.copy()                      # a linear term removes atoms
    A = y_out @ atoms
    A0 = float(y_start @ atoms)
    if not (A0 > 0.0 and np.all(A > 0.0)):
        return phi_quadrature.copy()
    return A0 / A


def _mole_fractions(y, species, heavy, which):
    """Mole fractions (of the total density of the ``heavy`` species) of the ``which`` ones."""
    total = float(np.sum(y[heavy]))
    return {s: (float(y[i] / total) if total > 0.0 else 0.0)
            for i, s in enumerate(species) if which[i]}


def _check_table(table, mech):
    if table is None:
        return None
    if not isinstance(table, ElectronTable):
        raise TypeError("electron_table / rebuild_table must give a plasmazero.numerics.ElectronTable")
    want = tuple(mech.electron_processes)
    if table.processes and tuple(table.processes) != want:
        raise ValueError(f"electron table processes {table.processes} differ from the "
                         f"mechanism's electron_processes {want}")
    if table.k_m3_s.shape[1] != len(want):
        raise ValueError(f"electron table has {table.k_m3_s.shape[1]} columns, the mechanism "
                         f"has {len(want)} electron processes")
    return table


def linear_arrays(n, loss_frequency_s=None, loss_products=None, source_m3_s=None):
    """Validated linear-term arrays ``(nu (n,), P (n, n), S (n,))`` (see kinetics)."""
    nu = _vector(loss_frequency_s, n, "loss_frequency_s")
    if np.any(nu < 0.0):
        raise ValueError("loss_frequency_s must be >= 0")
    if loss_products is None:
        P = np.zeros((n, n))
    else:
        P = np.ascontiguousarray(loss_products, dtype=np.float64)
        if P.shape != (n, n) or not np.all(np.isfinite(P)) or np.any(P < 0.0):
            raise ValueError(f"loss_products must be finite, >= 0 and of shape ({n}, {n})")
    S = _vector(source_m3_s, n, "source_m3_s")
    return nu, P, S


def rate_multiplier_array(mech, rate_multipliers):
    """Validated rate multipliers, float64 (n_r,) (all ones for None)."""
    n_r = len(tuple(mech.reactions))
    mult = _vector(rate_multipliers, n_r, "rate_multipliers", default=1.0)
    if np.any(mult < 0.0):
        raise ValueError("rate_multipliers must be >= 0")
    return mult


#: ``electron_energy`` models: local field (coefficients at E/N(t)) or local mean energy
#: (an equation for the mean electron energy; kinetics docstring)
ELECTRON_ENERGY_MODELS = ("local_field", "local_mean_energy")
#: absolute tolerance of the mean electron energy (LMEA), eV (a choice of this code)
ATOL_MEAN_ENERGY_EV = 1e-6

#: step methods of :func:`integrate`
METHODS = ("rodas4", "bdf")

#: ``energy_equation`` names and their ``cond`` codes
ENERGY_EQUATIONS = {None: 0, "isobaric": ENERGY_ISOBARIC, "isochoric": ENERGY_ISOCHORIC}


def build_model(mech, T_gas_K, *, electron_table=None, loss_frequency_s=None,
                loss_products=None, source_m3_s=None, E_N_Td=0.0, rate_multipliers=None,
                constant_total_density=False, electron_species=None, energy_equation=None,
                heat_loss_W_m3_K=0.0, wall_temperature_K=None, electron_energy="local_field"):
    """The ``model`` tuple of :mod:`plasmazero.numerics.kinetics` for a mechanism.

    Used by :func:`integrate`; also lets callers evaluate the right-hand side and the
    Jacobian at a state (``kinetics.evaluate``), e.g. for tests and diagnostics. The field
    is the constant ``E_N_Td`` (Td) until :func:`integrate` sets its segments; the
    electron density is free (``cond[6] = 0``) until a prescribed segment sets it.
    ``rate_multipliers``, ``constant_total_density``, ``energy_equation``,
    ``heat_loss_W_m3_K``, ``wall_temperature_K`` and ``electron_energy`` as for
    :func:`integrate` (with an energy equation the state passed to ``kinetics.evaluate``
    continues with the temperature, then with the local mean energy approximation the mean
    electron energy; isobaric implies ``constant_total_density``).
    """
    if electron_energy not in ELECTRON_ENERGY_MODELS:
        raise ValueError(f"electron_energy must be one of {', '.join(ELECTRON_ENERGY_MODELS)}")
    if energy_equation not in ENERGY_EQUATIONS:
        raise ValueError("energy_equation must be None, 'isobaric' or 'isochoric'")
    heat_loss_W_m3_K = float(heat_loss_W_m3_K)
    if not (heat_loss_W_m3_K >= 0.0 and math.isfinite(heat_loss_W_m3_K)):
        raise ValueError("heat_loss_W_m3_K must be a finite number >= 0")
    species = tuple(mech.species)
    n = len(species)
    if energy_equation is not None:
        coeffs = np.asarray(mech.kernel_args[6]).reshape(n, -1)
        ranges = np.asarray(mech.kernel_args[7]).reshape(n, -1)
        ok = np.all(np.isfinite(coeffs), axis=1) & np.all(np.isfinite(ranges), axis=1)
        missing = [s for s, good in zip(species, ok) if not good]
        if missing:
            raise ValueError(f"the energy equation needs NASA-7 thermo for every species; "
                             f"missing: {', '.join(missing)}")
        if energy_equation == "isochoric" and constant_total_density:
            raise ValueError("an isochoric energy equation keeps the volume: "
                             "constant_total_density must be off")
        if energy_equation == "isobaric":
            constant_total_density = True
    species = tuple(mech.species)
    n = len(species)
    n_r = len(tuple(mech.reactions))
    n_p = len(tuple(mech.electron_processes))
    table = _check_table(electron_table, mech)
    reactant_index = np.ascontiguousarray(mech.reactant_index, dtype=np.int64)
    net_index, net_coeff = net_stoichiometry(reactant_index,
                                             np.asarray(mech.product_index, dtype=np.int64),
                                             np.asarray(mech.product_coeff, dtype=np.float64))
    mech_arrays = (reactant_index, net_index, net_coeff,
                   np.ascontiguousarray(mech.third_body, dtype=np.int64),
                   np.ascontiguousarray(mech.efficiencies, dtype=np.float64).reshape(-1, n),
                   np.ascontiguousarray(mech.multiply_M, dtype=np.bool_),
                   rate_multiplier_array(mech, rate_multipliers))
    if not left_packed(reactant_index):
        # the kernels stop at a row's first pad; move the pads to the end of each row
        reactant_index = np.ascontiguousarray(-np.sort(-reactant_index, axis=1))
        mech_arrays = (reactant_index,) + mech_arrays[1:]
    mech_arrays = mech_arrays + species_rows(net_index, net_coeff, n) + \
        efficiency_deviations(mech_arrays[4])
    n_tb = mech_arrays[4].shape[0]
    linear = linear_arrays(n, loss_frequency_s, loss_products, source_m3_s)
    cond = np.zeros(COND_SIZE)
    cond[0:4] = (float(T_gas_K), 0.0, float(E_N_Td), 0.0)
    cond[COND_EXPANSION] = 1.0 if constant_total_density else 0.0
    cond[COND_ELECTRON] = float(_electron_index(mech, electron_species))
    cond[COND_ENERGY] = float(ENERGY_EQUATIONS[energy_equation])
    cond[COND_HEAT_LOSS] = heat_loss_W_m3_K
    T_wall = float(T_gas_K if wall_temperature_K is None else wall_temperature_K)
    if not (T_wall > 0.0 and math.isfinite(T_wall)):
        raise ValueError("wall_temperature_K must be a positive temperature")
    cond[COND_T_WALL] = T_wall
    if electron_energy == "local_mean_energy":
        problems = mean_energy_problems(table)
        if problems:
            raise ValueError(problems[0])
        cond[COND_LMEA] = 1.0
    kernel_args = tuple(mech.kernel_args)
    work = (np.zeros(n_r), np.zeros(n_r), np.zeros(n_r), np.zeros(n_r), np.zeros(n_p),
            np.zeros(n_tb), np.zeros(6), np.zeros(n), np.zeros(n), np.zeros(n)) + \
        rate_cache(kernel_args, ratelaws) + (np.zeros(n), np.zeros(n))
    # the multiplier pass of evaluate is skipped when every factor is 1
    work[10][3] = 0.0 if np.all(mech_arrays[6] == 1.0) else 1.0
    return (mech_arrays, kernel_args, linear, table_arrays(table, n_p), cond, work)


#: automatic choice of the linear solver (``linear_solver="auto"``): the sparse LU when
#: the system has at least SPARSE_MIN_SPECIES species and one sparse factorisation needs
#: fewer than SPARSE_FLOP_FRACTION of the n^3 / 3 multiply-adds of the dense one
#: (measured, see the module docstring "Linear algebra"; a choice of this code)
SPARSE_MIN_SPECIES = 40
SPARSE_FLOP_FRACTION = 0.25


def linear_solver_arrays(model, linear_solver="auto"):
    """The linear-solver tuple of the stepper and the name of the choice.

    Parameters
    ----------
    model : tuple
        From :func:`build_model`.
    linear_solver : {"auto", "dense", "sparse"}
        "dense": LU with partial pivoting; "sparse": minimum-degree ordered LU with static
        pivots on the pattern of :func:`plasmazero.numerics.kinetics.jacobian_pattern`
        (dense fallback per step when a pivot is tiny, see ``linalg``); "auto": sparse
        when n >= ``SPARSE_MIN_SPECIES`` and its factorisation needs fewer than
        ``SPARSE_FLOP_FRACTION`` of the dense multiply-adds.

    Returns
    -------
    (tuple, str)
        ``sp`` for :func:`plasmazero.numerics.rosenbrock.rodas4_step` and "dense" or
        "sparse".
    """
    if linear_solver not in ("auto", "dense", "sparse"):
        raise ValueError("linear_solver must be 'auto', 'dense' or 'sparse'")
    n = model[2][0].shape[0]
    energy = model[4][COND_ENERGY] != 0.0 or model[4][COND_LMEA] != 0.0
    if energy and linear_solver == "sparse":
        raise ValueError("the energy equation and the local mean energy approximation use "
                         "the dense linear solver (their rows and columns are dense): give "
                         "linear_solver='dense' or 'auto'")
    ei = np.zeros(0, dtype=np.int64)
    ef = np.zeros(0)
    dense = (np.zeros(3, dtype=np.int64), ei, ei, ei, ei, ei, ei, ef, ef, np.zeros((2, 0)),
             np.zeros(2, dtype=np.int64))
    if linear_solver == "dense" or (linear_solver == "auto" and (n < SPARSE_MIN_SPECIES or energy)):
        return dense, "dense"
    order, indptr, indices, diag, flops = sparse_symbolic(jacobian_pattern(model, split=True))
    if linear_solver == "auto" and flops > SPARSE_FLOP_FRACTION * n ** 3 / 3.0:
        return dense, "dense"
    rows = np.repeat(np.arange(n), np.diff(indptr))
    third_bodies = 1 if np.any(model[0][3] >= 0) else 0
    sp = (np.array([1, third_bodies, 0], dtype=np.int64), order, indptr, indices, diag,
          np.ascontiguousarray(order[rows]), np.ascontiguousarray(order[indices]),
          np.zeros(indices.size), np.zeros(n), np.zeros((2, n)), np.zeros(2, dtype=np.int64))
    return sp, "sparse"


def integrate(mech, y0_m3, t_span_s, *, T_gas_K, field=None, electron_table=None,
              loss_frequency_s=None, loss_products=None, source_m3_s=None, t_eval_s=None,
              breakpoints_s=(), rtol=1e-6, atol_m3=None, max_steps=DEFAULT_MAX_STEPS,
              first_step_s=None, max_step_s=math.inf, fixed_step_s=None,
              rebuild_table=None, partner_tolerance=0.02, integrate_rates=True,
              electron_species=None, raise_on_failure=True, rate_multipliers=None,
              constant_total_density=False, electron_density_profile=None,
              linear_solver="auto", energy_equation=None, heat_loss_W_m3_K=0.0,
              wall_temperature_K=None, electron_energy="local_field", mean_energy0_eV=None,
              method="rodas4"):
    """Integrate the species balances of a compiled mechanism over ``t_span_s``.

    Parameters
    ----------
    mech : CompiledMechanism
        Duck-typed: needs ``species``, ``charge``, ``reactions``, ``reactant_index``,
        ``product_index``, ``product_coeff``, ``third_body``, ``efficiencies``,
        ``multiply_M``, ``kernel_args`` and ``electron_processes`` (the shared contract);
        ``electron_index`` is used when present.
    y0_m3 : array (n_s,)
        Initial densities, m^-3, >= 0.
    t_span_s : (float, float)
        Start and end time, s (end > start).
    T_gas_K : float
        Gas temperature, K: fixed, or the initial one with ``energy_equation``.
    field : plasmazero.numerics.FieldProfile, (times_s, E_N_Td), float or None
        Reduced field E/N(t), Td, piecewise linear; None means E/N = 0.
    electron_table : ElectronTable or None
        Electron rate coefficients versus E/N (columns = ``mech.electron_processes``).
        Required when the mechanism has electron-impact processes, unless
        ``rebuild_table`` is given (then it is built for the initial composition).
    loss_frequency_s : array (n_s,) or None
        First-order loss frequency of each species, s^-1 (walls, catalyst bed, flow).
    loss_products : array (n_s, n_s) or None
        ``loss_products[i, k]``: species k made per species i lost (e.g. 0.5 H2 per H).
    source_m3_s : array (n_s,) or None
        Constant source of each species, m^-3 s^-1 (feed).
    t_eval_s : array or None
        Output times within the span (sorted); None: every accepted step.
    breakpoints_s : sequence of float
        Extra restart times (discontinuities of the caller's terms).
    rtol : float or array (n_s,)
        Relative tolerance.
    atol_m3 : float, array (n_s,) or None
        Absolute tolerance, m^-3 (> 0); default ``max(1e6, 1e-20 * sum(y0))``.
    max_steps : int
        Maximum number of step attempts.
    first_step_s : float or None
        First step size, s (default: estimated).
    max_step_s : float
        Largest step size, s.
    fixed_step_s : float or None
        Constant step size without error control (for convergence studies).
    rebuild_table : callable or None
        ``rebuild_table(mole_fractions: dict) -> ElectronTable``, called when the
        collision-partner mole fractions drift by more than ``partner_tolerance``.
    partner_tolerance : float
        Absolute mole-fraction drift that triggers a rebuild (default 0.02).
    integrate_rates : bool
        Accumulate the integrated reaction rates (costs two rate evaluations per step).
    electron_species : str or None
        Name of the electron species (default: ``mech.electron_index`` or "e"/"e-").
    raise_on_failure : bool
        Raise :class:`IntegrationError` (which carries the partial result) on failure;
        otherwise return the result with its failure ``status`` and ``message``.
    rate_multipliers : array (n_r,) or None
        Factor on every rate coefficient row (default 1), applied after evaluation;
        REVERSE rows included, so give a reversible reaction's two rows the same factor
        to keep detailed balance (module docstring of ``kinetics``).
    constant_total_density : bool
        Isobaric expansion: hold the total density at its initial value while the
        parcel's volume follows the change in the number of molecules (module docstring).
    electron_density_profile : ElectronDensityProfile, (times_s, n_e_m3) or None
        Prescribed electron density, piecewise linear, NaN = free; its times are restart
        times (module docstring).
    linear_solver : {"auto", "dense", "sparse"}
        Linear algebra of the stepper (:func:`linear_solver_arrays`); the result's
        ``linear_solver`` says which was used ("auto" is dense with an energy equation or
        the local mean energy approximation).
    energy_equation : {None, "isobaric", "isochoric"}
        None: fixed gas temperature. Otherwise the gas temperature is integrated with the
        species from the enthalpy balance of :mod:`plasmazero.numerics.kinetics` (electron
        power e n_e w E in, reaction enthalpies, a wall heat loss out); every species needs
        thermo. "isobaric" follows a parcel at constant pressure (implies
        ``constant_total_density``: the total density then follows N = p / (k T));
        "isochoric" a closed volume (``constant_total_density`` must be off).
    heat_loss_W_m3_K : float
        Heat-transfer coefficient G of the loss G (T - T_wall), W m^-3 K^-1 (default 0:
        adiabatic).
    wall_temperature_K : float or None
        T_wall, K (default: the initial ``T_gas_K``).
    electron_energy : {"local_field", "local_mean_energy"}
        "local_field" (default): the electron coefficients follow E/N(t) through the table.
        "local_mean_energy": the mean electron energy is one more entry of the state,
        d<eps>/dt = N mu N ((E/N)^2 - (E/N)_eff^2), driven by the power the field gives
        the electrons (e mu E^2 per electron, mu at the current mean energy) against the
        losses of the steady state with the same mean energy; the coefficients are those of
        the table at the effective field (E/N)_eff whose mean energy is <eps> (Hagelaar &
        Pitchford 2005, section 3; kinetics docstring). The table's mean energy must rise
        strictly with E/N. The energy carried by electrons made or lost (ionization,
        attachment) is not booked separately.
    mean_energy0_eV : float or None
        Initial mean electron energy with "local_mean_energy", eV (default: the table's
        value at the initial field).
    method : {"rodas4", "bdf"}
        "rodas4" (default): the Rosenbrock method, one Jacobian and LU per step, global
        error close to ``rtol``. "bdf": the variable-order BDF (NDF) of
        :mod:`plasmazero.numerics.bdf`, which keeps its Jacobian over many steps and needs
        about two right-hand sides per step: cheaper per unit of time on long smooth
        stretches, but its global error is typically tens of times ``rtol`` (module
        docstring, "Choice of method"). Not with ``fixed_step_s``.

    Returns
    -------
    KineticsResult

    Raises
    ------
    IntegrationError
        The integration failed (``raise_on_failure``).
    ValueError
        Inconsistent arguments.

    References
    ----------
    See the module docstring.
    """
    if method not in METHODS:
        raise ValueError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
    if method == "bdf" and fixed_step_s is not None:
        raise ValueError("fixed_step_s is for the one-step method: use method='rodas4'")
    species = tuple(mech.species)
    n = len(species)
    n_r = len(tuple(mech.reactions))
    y = _vector(y0_m3, n, "y0_m3").copy()
    if np.any(y < 0.0):
        raise ValueError("y0_m3 must be >= 0")
    t0, t1 = (float(v) for v in t_span_s)
    if not (math.isfinite(t0) and math.isfinite(t1) and t1 > t0):
        raise ValueError("t_span_s must be two finite times with end > start")
    T_gas_K = float(T_gas_K)
    if not (T_gas_K > 0.0 and math.isfinite(T_gas_K)):
        raise ValueError("T_gas_K must be a positive temperature")
    energy = energy_equation is not None
    if energy_equation == "isobaric":
        constant_total_density = True
    prof = as_field(field)
    ne_prof = as_density_profile(electron_density_profile)
    bps = list(np.atleast_1d(np.asarray(breakpoints_s, dtype=float)))
    if ne_prof is not None:
        bps += list(ne_prof.times_s)
    stops, seg_E0, seg_slope = segments(prof, t0, t1, bps)

    rtol_v = _vector(rtol, n, "rtol")
    if np.any(rtol_v <= 0.0):
        raise ValueError("rtol must be > 0")
    if atol_m3 is None:
        atol_v = np.full(n, max(ATOL_FLOOR_M3, ATOL_FRACTION * float(np.sum(y))))
    else:
        atol_v = _vector(atol_m3, n, "atol_m3")
    if np.any(atol_v <= 0.0):
        raise ValueError("atol_m3 must be > 0")

    charge = np.asarray(mech.charge, dtype=np.float64)
    e_idx = _electron_index(mech, electron_species)
    if ne_prof is not None and e_idx < 0:
        raise ValueError("electron_density_profile needs an electron species in the mechanism")
    heavy = np.ones(n, dtype=np.bool_)
    if e_idx >= 0:
        heavy[e_idx] = False
    neutral = heavy & (charge == 0.0)

    n_p = len(tuple(mech.electron_processes))
    table = _check_table(electron_table, mech)
    rebuild_times = []
    n_rebuilds = 0
    if table is None and rebuild_table is not None:
        table = _check_table(rebuild_table(_mole_fractions(y, species, heavy, neutral)), mech)
        n_rebuilds += 1
    if table is None and n_p > 0:
        raise ValueError(f"the mechanism has electron-impact processes "
                         f"({', '.join(mech.electron_processes)}): give electron_table or rebuild_table")

    def partners(tab):
        names = [s for s in (tab.mole_fractions if tab is not None else {}) if s in species]
        if tab is not None and names:
            ref = [float(tab.mole_fractions[s]) for s in names]
        else:
            x = _mole_fractions(y, species, heavy, neutral)
            names = list(x)
            ref = [x[s] for s in names]
        return (np.array([species.index(s) for s in names], dtype=np.int64),
                np.array(ref, dtype=np.float64))

    # land on the table's nodes in field ramps, keeping the step size across them (the
    # coefficients' derivative jumps there: field.node_crossings); with the local mean
    # energy approximation the table is read at a field that is not known beforehand;
    # fixed-step runs keep their constant step (convergence studies)
    seg_soft = np.zeros(stops.size - 1, dtype=np.int64)
    if table is not None and electron_energy != "local_mean_energy" and fixed_step_s is None:
        nodes = node_crossings(stops, seg_E0, seg_slope, table.E_N_Td)
        if nodes.size:
            hard = stops
            stops, seg_E0, seg_slope = segments(prof, t0, t1, bps + list(nodes))
            seg_soft = (~np.isin(stops[:-1], hard)).astype(np.int64)
    seg_ne = density_segments(ne_prof, stops)
    if seg_ne[0, 0] != 0.0:
        y[e_idx] = seg_ne[0, 1]      # prescribed from the start: the profile's value
    partner_idx, partner_ref = partners(table)
    monitor = rebuild_table is not None and partner_idx.size > 0

    model = build_model(mech, T_gas_K, electron_table=table, loss_frequency_s=loss_frequency_s,
                        loss_products=loss_products, source_m3_s=source_m3_s,
                        rate_multipliers=rate_multipliers,
                        constant_total_density=constant_total_density,
                        electron_species=electron_species, energy_equation=energy_equation,
                        heat_loss_W_m3_K=heat_loss_W_m3_K, wall_temperature_K=wall_temperature_K,
                        electron_energy=electron_energy)
    lmea = electron_energy == "local_mean_energy"
    n_y = n + int(energy) + int(lmea)
    if energy:
        # the state continues with the gas temperature: tolerances, flags and clipping cover it
        y = np.r_[y, T_gas_K]
        rtol_v = np.r_[rtol_v, rtol_v.min()]
        atol_v = np.r_[atol_v, ATOL_TEMPERATURE_K]
        heavy = np.r_[heavy, False]
        charge = np.r_[charge, 0.0]
    i_eps = n_y - 1 if lmea else -1
    if lmea:
        # then with the mean electron energy
        if mean_energy0_eV is None:
            mean0 = interpolate_table(*model[3], float(seg_E0[0]), np.zeros(n_p))[0]
        else:
            mean0 = float(mean_energy0_eV)
        if not (mean0 > 0.0 and math.isfinite(mean0)):
            raise ValueError("mean_energy0_eV must be a positive energy")
        y = np.r_[y, mean0]
        rtol_v = np.r_[rtol_v, rtol_v.min()]
        atol_v = np.r_[atol_v, ATOL_MEAN_ENERGY_EV]
        heavy = np.r_[heavy, False]
        charge = np.r_[charge, 0.0]
    cond = model[4]
    cond[1:4] = (stops[0], seg_E0[0], seg_slope[0])
    cond[COND_ELECTRON] = float(e_idx)
    cond[COND_PRESCRIBED] = seg_ne[0, 0]
    cond[COND_ELECTRON_SLOPE] = seg_ne[0, 2]
    sp, solver_name = linear_solver_arrays(model, linear_solver)

    step_mode = t_eval_s is None
    if step_mode:
        t_eval = np.zeros(0)
        cap = STEP_BUFFER
    else:
        t_eval = np.ascontiguousarray(np.atleast_1d(np.asarray(t_eval_s, dtype=np.float64)))
        if t_eval.ndim != 1 or t_eval.size == 0 or np.any(np.diff(t_eval) < 0.0):
            raise ValueError("t_eval_s must be a non-empty sorted 1-D array")
        if t_eval[0] < t0 or t_eval[-1] > t1:
            raise ValueError("t_eval_s must lie within t_span_s")
        cap = t_eval.size
    out_t = np.zeros(cap)
    out_y = np.zeros((cap, n_y))
    out_R = np.zeros((cap, n_r))
    out_L = np.zeros((cap, n_y))
    out_cond = np.zeros((cap, 3))
    out_ext = np.zeros((cap, 4))
    out_Rp = np.zeros((cap, n_r))
    R_cum = np.zeros(n_r)
    L_cum = np.zeros(n_y)
    cum = np.zeros(4)
    Rp_cum = np.zeros(n_r)
    clipped = np.zeros(n_y)

    fst = np.zeros(_N_F)
    ist = np.zeros(_N_I, dtype=np.int64)
    fst[_F_T] = t0
    fst[_F_ERR_PREV] = 1.0
    ist[_I_RESTART] = 1
    ist[_I_FIRST] = 1
    opts_f = np.array([float(max_step_s), 0.0 if fixed_step_s is None else float(fixed_step_s),
                       float(partner_tolerance), 0.0 if first_step_s is None else float(first_step_s),
                       float(np.sum(atol_v[charge != 0.0]))])
    if not opts_f[_O_HMAX] > 0.0 or opts_f[_O_HFIX] < 0.0 or opts_f[_O_HFIRST] < 0.0:
        raise ValueError("max_step_s must be > 0, fixed_step_s and first_step_s > 0 when given")
    opts_i = np.array([int(max_steps), 1 if step_mode else 0, 1 if integrate_rates else 0,
                       1 if monitor else 0], dtype=np.int64)

    # outputs at the start time
    k_el = np.zeros(n_p)
    start = np.zeros(3)
    _conditions(t0, model[3], cond, k_el, start)
    n0 = 1 if step_mode else int(np.searchsorted(t_eval, t0, side="right"))
    out_t[:n0] = t0
    out_y[:n0] = y
    out_cond[:n0] = start
    out_ext[:n0, 0] = 1.0
    ist[_I_OUT] = n0
    fst[_F_QN] = charge_imbalance(y, charge, opts_f[_O_QN_FLOOR])
    y_start = y[:n].copy()

    bdf = method == "bdf"
    if bdf:
        history = np.zeros((HISTORY_ROWS, n_y))
        history_work = history_scratch(n_y)
        bdf_J = np.zeros((n_y, n_y))
        bdf_lu = np.zeros((n_y, n_y))
        bdf_piv = np.zeros(n_y, dtype=np.int64)
        bdf_wb = np.zeros(WB_SIZE)
    while True:
        if bdf:
            status = _run_bdf(y, fst, ist, stops, seg_E0, seg_slope, seg_ne, seg_soft, model,
                              heat_arrays(model), rtol_v, atol_v, opts_f, opts_i, t_eval, out_t,
                              out_y, out_R, out_L, out_cond, out_ext, out_Rp, R_cum, L_cum, cum,
                              Rp_cum, clipped, partner_idx, partner_ref, heavy, charge, sp,
                              history, history_work, bdf_J, bdf_lu, bdf_piv, bdf_wb)
        else:
            status = _run(y, fst, ist, stops, seg_E0, seg_slope, seg_ne, seg_soft, model,
                          heat_arrays(model), rtol_v, atol_v, opts_f, opts_i, t_eval, out_t,
                          out_y, out_R, out_L, out_cond, out_ext, out_Rp, R_cum, L_cum, cum,
                          Rp_cum, clipped, partner_idx, partner_ref, heavy, charge, sp)
        if status == BUFFER_FULL:
            grow = out_t.size
            out_t = np.concatenate([out_t, np.zeros(grow)])
            out_y = np.concatenate([out_y, np.zeros((grow, n_y))])
            out_R = np.concatenate([out_R, np.zeros((grow, n_r))])
            out_L = np.concatenate([out_L, np.zeros((grow, n_y))])
            out_cond = np.concatenate([out_cond, np.zeros((grow, 3))])
            out_ext = np.concatenate([out_ext, np.zeros((grow, 4))])
            out_Rp = np.concatenate([out_Rp, np.zeros((grow, n_r))])
            continue
        if status == TABLE_STALE:
            x = _mole_fractions(y, species, heavy, neutral)
            table = _check_table(rebuild_table(x), mech)
            if table is None:
                raise ValueError("rebuild_table returned None")
            problems = mean_energy_problems(table) if lmea else []
            if problems:
                raise ValueError("rebuild_table: " + problems[0])
            n_rebuilds += 1
            rebuild_times.append(float(fst[_F_T]))
            model = model[:3] + (table_arrays(table, n_p),) + model[4:]
            clear_rate_cache(model[5])
            if bdf:
                ist[_I_RESTART] = 1     # the coefficients jump: the history is no longer valid
            # the new table was built for x: that is the new reference
            names = [s_ for s_ in table.mole_fractions if s_ in x]
            if names:
                partner_idx = np.array([species.index(s_) for s_ in names], dtype=np.int64)
            partner_ref = np.array([y[i] for i in partner_idx]) / max(float(np.sum(y[heavy])), 1e-300)
            continue
        break

    m = int(ist[_I_OUT])
    counters = Counters(n_steps=int(ist[_I_STEPS]), n_accepted=int(ist[_I_ACC]),
                        n_rejected=int(ist[_I_REJ]),
                        n_rejected_negative=int(ist[_I_REJ_NEG]), n_rhs=int(ist[_I_RHS]),
                        n_jac=int(ist[_I_JAC]), n_lu=int(ist[_I_LU]),
                        n_rate_quadrature=int(ist[_I_QUAD]), n_table_rebuilds=n_rebuilds,
                        n_lu_sparse=int(sp[10][0]), n_lu_dense_fallback=int(sp[10][1]))
    if status == SUCCESS:
        message = "success"
        f_t = f_h = math.nan
        f_s = ""
    else:
        f_t = float(fst[_F_T])
        f_h = float(fst[_F_H])
        f_s = (species[int(ist[_I_WORST])] if 0 <= ist[_I_WORST] < n
               else ("gas temperature" if ist[_I_WORST] == n and energy else ""))
        cause = CAUSE_TEXT.get(int(ist[_I_CAUSE]), "")
        message = (f"integration failed at t = {f_t:.6g} s: {STATUS_TEXT[status]}"
                   f"{' (last rejection: ' + cause + ')' if cause else ''}; step size "
                   f"{f_h:.3g} s; species with the largest error: {f_s or '?'} "
                   f"({counters.n_steps} steps, {counters.n_rejected} rejected)")
    yk = out_y[:m, :n]
    T_out = out_y[:m, n].copy() if energy else np.full(m, T_gas_K)
    mean_out = out_cond[:m, 1].copy()
    drift_out = out_cond[:m, 2].copy()
    E_eff_out = out_cond[:m, 0].copy()
    if lmea:
        tab = model[3]
        mean_out = out_y[:m, i_eps].copy()
        for r in range(m):
            E_eff_out[r], muN = field_for_mean_energy(tab[0], tab[1], tab[3], tab[4], mean_out[r])
            drift_out[r] = muN * E_eff_out[r]
    result = KineticsResult(
        species=species, reactions=tuple(mech.reactions), times_s=out_t[:m].copy(),
        densities_m3=yk.copy(), T_gas_K=T_out, E_N_Td=out_cond[:m, 0].copy(),
        mean_energy_eV=mean_out, electron_drift_velocity_m_s=drift_out,
        effective_E_N_Td=E_eff_out, electron_energy=electron_energy,
        electron_density_m3=(yk[:, e_idx].copy() if e_idx >= 0 else np.zeros(m)),
        integrated_rates_m3=out_R[:m].copy(), integrated_linear_m3=out_L[:m, :n].copy(),
        expansion_factor=(_expansion_factor(mech, model[0], y_start, yk, out_ext[:m, 0], model[2])
                          if constant_total_density else out_ext[:m, 0].copy()),
        integrated_electron_density_s_m3=out_ext[:m, 1].copy(),
        integrated_rates_parcel_m3=(out_Rp[:m].copy() if constant_total_density
                                    else out_R[:m].copy()),
        linear_solver=solver_name, energy_equation=energy_equation or "",
        electron_energy_J_m3=out_ext[:m, 2].copy(), heat_loss_J_m3=out_ext[:m, 3].copy(),
        clipped_m3=clipped[:n], quasi_neutrality=float(fst[_F_QN]), counters=counters,
        status=int(status), message=message, table_rebuild_times_s=tuple(rebuild_times),
        failure_time_s=f_t, failure_step_s=f_h, failure_species=f_s)
    if status != SUCCESS and raise_on_failure:
        raise IntegrationError(result)
    return result
