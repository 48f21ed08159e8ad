"""Options the discharge workflow needs: rate multipliers, isobaric expansion of the gas
parcel, a prescribed electron density and the time integral of the electron density.

References are closed-form solutions derived in the comments (independent computations of
this file), central finite differences of the right-hand side, and scipy's Radau IIA
(Hairer & Wanner 1996, Solving ODEs II, section IV.8) on hand-written right-hand sides.
Every rate number is invented for the tests (the toy systems of ``systems.py``, the
shipped example ``every_law.yaml``, and the small systems below); none is physical data.
"""

from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

import systems
from plasmazero.numerics import ElectronDensityProfile, FieldProfile, integrate, kinetics
from plasmazero.numerics.integrate import build_model
from test_jacobian import _fd_jacobian, _gross, _random_linear, _random_state

EVERY_LAW = Path(__file__).resolve().parents[2] / "mechanisms" / "examples" / "every_law.yaml"
PULSE = FieldProfile([0.0, 2e-9, 12e-9, 14e-9], [0.0, 150.0, 150.0, 0.0])   # Td, invented
N0 = 2.4e25          # m^-3, about 1 bar at 300 K


def _tol_units(y, ref, rtol, atol):
    return np.max(np.abs(y - ref) / (atol + rtol * np.abs(ref)))


# ----------------------------------------------------------------- rate multipliers

def test_rate_multipliers_scale_the_rate_coefficients():
    k1, k2, m1, m2 = 2.0, 0.5, 1.5, 0.2
    mech = systems.build(("A", "B", "C"), [("A => B", ("k", k1)), ("B => C", ("k", k2))])
    t = np.linspace(0.0, 10.0, 41)
    res = integrate(mech, [1e20, 0.0, 0.0], (0.0, 10.0), T_gas_K=300.0, t_eval_s=t,
                    rtol=1e-8, atol_m3=1e8, rate_multipliers=[m1, m2])
    # Bateman (1910), Proc. Cambridge Phil. Soc. 15, 423, with k1 m1 and k2 m2
    a, b = k1 * m1, k2 * m2
    A = 1e20 * np.exp(-a * t)
    B = 1e20 * a / (b - a) * (np.exp(-a * t) - np.exp(-b * t))
    assert _tol_units(res.densities_m3[:, :2], np.c_[A, B], 1e-8, 1e8) < 3.0
    with pytest.raises(ValueError, match="rate_multipliers"):
        integrate(mech, [1e20, 0.0, 0.0], (0.0, 1.0), T_gas_K=300.0, rate_multipliers=[1.0])
    with pytest.raises(ValueError, match="rate_multipliers"):
        integrate(mech, [1e20, 0.0, 0.0], (0.0, 1.0), T_gas_K=300.0,
                  rate_multipliers=[1.0, -1.0])


def test_rate_multipliers_reach_k_dk_and_the_jacobian():
    from plasmazero.physics.compiled import load_compiled_mechanism

    mech = load_compiled_mechanism(EVERY_LAW)
    table = systems.toy_table(columns=mech.electron_processes)
    rng = np.random.default_rng(11)
    n = mech.n_species
    y = _random_state(rng, mech)
    mult = 10.0 ** rng.uniform(-1.0, 1.0, mech.n_reactions)
    plain = build_model(mech, 600.0, electron_table=table)
    scaled = build_model(mech, 600.0, electron_table=table, rate_multipliers=mult)
    f = np.zeros(n)
    J = np.zeros((n, n))
    kinetics.evaluate(80.0, y, plain, f, J, kinetics.JACOBIAN)
    k0, dk0 = plain[5][0].copy(), plain[5][1].copy()
    kinetics.evaluate(80.0, y, scaled, f, J, kinetics.JACOBIAN)
    # each row scaled on its own, REVERSE rows included (detailed balance is the caller's
    # business: same factor on both rows)
    np.testing.assert_allclose(scaled[5][0], k0 * mult, rtol=1e-14)
    np.testing.assert_allclose(scaled[5][1], dk0 * mult, rtol=1e-14)
    J_fd = _fd_jacobian(scaled, y, 80.0)
    g = _gross(mech, scaled, y, (np.zeros(n), np.zeros((n, n)), np.zeros(n)))
    bound = 1e-6 * np.abs(J) + 1e-7 * g[:, None] / y[None, :]
    assert np.max(np.abs(J - J_fd) / bound) < 1.0


def test_rate_cache_returns_the_kernel_values():
    # the cache of kinetics (constant rows once, electron rows per E/N, falloff rows per
    # call, reverse rows through 1/Kc) against direct calls of the rate-law kernel
    from plasmazero.physics.compiled import load_compiled_mechanism
    from plasmazero.physics.ratelaws import rate_coefficients

    mech = load_compiled_mechanism(EVERY_LAW)
    table = systems.toy_table(columns=mech.electron_processes)
    rng = np.random.default_rng(12)
    n = mech.n_species
    model = build_model(mech, 500.0, electron_table=table)
    f = np.zeros(n)
    J = np.zeros((n, n))
    for i in range(40):
        if i == 20:                       # a new table: the cache must be cleared
            table = systems.toy_table(columns=mech.electron_processes, scale=3.0)
            model = model[:3] + (build_model(mech, 500.0, electron_table=table)[3],) + model[4:]
            kinetics.clear_rate_cache(model[5])
        model[4][0] = rng.choice([500.0, 800.0])             # gas temperature changes too
        E_N = rng.choice([0.0, 50.0, rng.uniform(1.0, 300.0)])
        y = _random_state(rng, mech)
        kinetics.evaluate(E_N, y, model, f, J, rng.choice([kinetics.RATES, kinetics.RHS]))
        k_el, mean, _ = table.at(E_N)
        nM = model[5][2].copy()
        k = np.zeros(mech.n_reactions)
        dk = np.zeros(mech.n_reactions)
        rate_coefficients(mech.kernel_args, model[4][0], model[4][0], E_N, mean, k_el, nM, k, dk)
        np.testing.assert_allclose(model[5][0], k, rtol=1e-13, atol=0.0)
        np.testing.assert_allclose(model[5][1], dk, rtol=1e-13, atol=0.0)


# ------------------------------------------------- Jacobian of expansion and prescribed n_e

def _expansion_violations(mech, table, n_states, seed, drop_rank_one=False):
    """Max over random states of |J - J_fd| / bound with the expansion term on and, in
    half of the states, a prescribed electron row."""
    rng = np.random.default_rng(seed)
    n = len(mech.species)
    e = mech.electron_index
    worst = 0.0
    for _ in range(n_states):
        linear = _random_linear(rng, n)
        model = build_model(mech, rng.uniform(250.0, 1200.0), electron_table=table,
                            loss_frequency_s=linear[0], loss_products=linear[1],
                            source_m3_s=linear[2], constant_total_density=True)
        cond = model[4]
        prescribed = e >= 0 and rng.random() < 0.5
        cond[kinetics.COND_PRESCRIBED] = 1.0 if prescribed else 0.0
        cond[kinetics.COND_ELECTRON_SLOPE] = rng.uniform(-1e25, 1e25)
        y = _random_state(rng, mech)
        E_N = rng.choice([0.0, rng.uniform(1.0, 300.0)])
        f = np.zeros(n)
        J = np.zeros((n, n))
        kinetics.evaluate(E_N, y, model, f, J,
                          kinetics.JACOBIAN_SPLIT if drop_rank_one else kinetics.JACOBIAN)
        # f sums to zero (total density constant) up to round-off of its terms
        g = _gross(mech, model, y, linear)
        N = y.sum()
        assert abs(f.sum()) < 1e-12 * (g.sum() + abs(model[5][6][2]))
        if prescribed:
            assert f[e] == cond[kinetics.COND_ELECTRON_SLOPE] and np.all(J[e] == 0.0)
        J_fd = _fd_jacobian(model, y, E_N)
        # size of the terms that make up J (it may be a small difference of them): the
        # chemistry and diagonal part and the rank-one part u c^T of the dilution
        J_split = np.zeros((n, n))
        kinetics.evaluate(E_N, y, model, f, J_split, kinetics.JACOBIAN_SPLIT)
        size = np.abs(J_split) + np.abs(np.outer(model[5][7], model[5][8]))
        # the dilution term n_i S / N carries the round-off of S = sum_k F_k (and F_e is
        # the prescribed slope on a prescribed segment)
        slope = abs(cond[kinetics.COND_ELECTRON_SLOPE]) if prescribed else 0.0
        gd = g + y * (g.sum() + slope) / N
        bound = 1e-6 * size + 1e-7 * gd[:, None] / y[None, :]
        worst = max(worst, float(np.max(np.abs(J - J_fd) / bound)))
    return worst


def test_expansion_jacobian_over_a_cloud():
    from plasmazero.physics.compiled import load_compiled_mechanism

    mech = load_compiled_mechanism(EVERY_LAW)
    table = systems.toy_table(columns=mech.electron_processes)
    assert _expansion_violations(mech, table, 100, seed=5) < 1.0            # measured 0.0035
    assert _expansion_violations(systems.toy_plasma(), systems.toy_table(), 100,
                                 seed=6) < 1.0                                # measured 0.0023


def test_the_comparison_sees_a_missing_rank_one_term():
    mech = systems.toy_plasma()
    assert _expansion_violations(mech, systems.toy_table(), 20, seed=7,
                                 drop_rank_one=True) > 10.0                   # measured 9e5


# ------------------------------------------------------------- isobaric expansion

def test_dissociation_at_constant_pressure_closed_form():
    # A -> B + C (k) in an inert diluent D, total density held at N0. Independent
    # computation: the parcel amount a = n_A phi obeys da/dt = phi f_A = -k a, so
    # a = A0 exp(-k t); the parcel holds N0 phi = N0 + A0 (1 - exp(-k t)) molecules.
    k, A0 = 1e3, 0.3 * N0
    mech = systems.build(("A", "B", "C", "D"), [("A => B + C", ("k", k))])
    t = np.linspace(0.0, 5e-3, 11)
    res = integrate(mech, [A0, 0.0, 0.0, N0 - A0], (0.0, 5e-3), T_gas_K=300.0, t_eval_s=t,
                    rtol=1e-8, constant_total_density=True)
    decay = np.exp(-k * t)
    phi = 1.0 + A0 / N0 * (1.0 - decay)
    np.testing.assert_allclose(res.expansion_factor, phi, rtol=1e-9)         # measured 3.5e-10
    np.testing.assert_allclose(res.densities_m3.sum(axis=1), N0, rtol=1e-13)  # measured 1.6e-15
    # A decays to 0.7 % of A0: its relative error grows (measured 9.7e-9)
    np.testing.assert_allclose(res.density("A") * phi, A0 * decay, rtol=1e-7)
    # reactions per initial volume: int k n_A phi dt = A0 (1 - exp(-k t))
    np.testing.assert_allclose(res.integrated_rates_parcel_m3[1:, 0], A0 * (1.0 - decay[1:]),
                               rtol=1e-8)                                     # measured 2.1e-9
    # off: phi = 1 and the parcel integral is the per-volume one
    off = integrate(mech, [A0, 0.0, 0.0, N0 - A0], (0.0, 5e-3), T_gas_K=300.0, t_eval_s=t)
    assert np.all(off.expansion_factor == 1.0)
    assert np.array_equal(off.integrated_rates_parcel_m3, off.integrated_rates_m3)


def test_recombination_at_constant_pressure_closed_form():
    # 2 A -> B (k) in a diluent D at constant N0. Independent computation: with parcel
    # amounts a = n_A phi, b = (A0 - a) / 2 and N0 phi = a + b + D0 = (A0 + a) / 2 + D0,
    # da/dt = -2 k a^2 / phi = -2 k N0 a^2 / ((A0 + a) / 2 + D0); separating variables,
    # (A0/2 + D0) (1/a - 1/A0) + ln(A0 / a) / 2 = 2 k N0 t, solved for a by bisection.
    k, A0 = 1e-22, 0.5 * N0
    D0 = N0 - A0
    mech = systems.build(("A", "B", "D"), [("A + A => B", ("k", k))])
    t = np.geomspace(1e-5, 1e-1, 9)
    res = integrate(mech, [A0, 0.0, D0], (0.0, 0.1), T_gas_K=300.0, t_eval_s=t, rtol=1e-8,
                    constant_total_density=True)

    def parcel_a(tt):
        return brentq(lambda a: (0.5 * A0 + D0) * (1.0 / a - 1.0 / A0)
                      + 0.5 * np.log(A0 / a) - 2.0 * k * N0 * tt, 1e-12 * A0, A0,
                      xtol=1e-14 * A0, rtol=1e-15)

    a = np.array([parcel_a(tt) for tt in t])
    phi = ((A0 + a) / 2.0 + D0) / N0
    assert phi[-1] < 0.8                                   # a strong contraction
    np.testing.assert_allclose(res.expansion_factor, phi, rtol=1e-8)    # measured 8.6e-10
    np.testing.assert_allclose(res.density("A"), a / phi, rtol=1e-7)    # measured 2.7e-9


def _ozone_system():
    # INVENTED rate numbers (orders of magnitude of oxygen chemistry only)
    return systems.build(
        ("Ar", "O2", "O", "O3"),
        [("O2 => O + O", ("k", 2e3)),
         ("O + O2 + M => O3 + M", ("k", 6e-46), {"Ar": 0.7}),
         ("O + O3 => O2 + O2", ("k", 8e-21)),
         ("O + O + M => O2 + M", ("k", 5e-45))],
        composition={"Ar": {"Ar": 1}, "O2": {"O": 2}, "O": {"O": 1}, "O3": {"O": 3}})


def test_elements_per_parcel_are_conserved_with_expansion():
    mech = _ozone_system()
    y0 = np.array([0.5 * N0, 0.5 * N0, 0.0, 0.0])
    t = np.geomspace(1e-6, 1e-2, 20)
    res = integrate(mech, y0, (0.0, 1e-2), T_gas_K=300.0, t_eval_s=t, rtol=1e-10,
                    constant_total_density=True)
    phi = res.expansion_factor
    assert phi.min() < 0.9                                  # the number of molecules changed
    np.testing.assert_allclose(res.densities_m3.sum(axis=1), N0, rtol=1e-13)
    per_parcel = mech.element_counts @ (res.densities_m3 * phi[:, None]).T
    ref = mech.element_counts @ y0
    # conserved to the accuracy of the integration (phi and n_i are integrated
    # separately): measured 1.1e-11 at rtol 1e-10 (5e-8 at rtol 1e-6)
    assert np.all(np.abs(per_parcel - ref[:, None]) <= 1e-10 * ref[:, None])
    # molar bookkeeping: n_i phi - n_i(0) = sum_j nu_ij int r_j phi dt
    nu = mech.stoichiometry
    Rp = res.integrated_rates_parcel_m3
    resid = res.densities_m3 * phi[:, None] - y0 - Rp @ nu.T
    # relative to the gross flux through each species plus its own amount (Ar reacts not)
    gross = np.abs(nu) @ Rp[-1] + y0
    assert np.all(np.abs(resid) <= 1e-10 * gross), np.abs(resid).max(axis=0) / gross  # 1e-11


# --------------------------------------------------------- prescribed electron density

def _prescribed(**kw):
    args = dict(T_gas_K=300.0, field=PULSE, electron_table=systems.toy_table(), rtol=1e-6,
                atol_m3=1e6)
    args.update(kw)
    return integrate(systems.toy_plasma(), systems.toy_initial(), (0.0, 1e-3), **args)


# invented profile: ramp up, plateau rising, fall, then free (afterglow)
NE_TIMES = [0.0, 2e-9, 12e-9, 14e-9]
NE_VALUES = [1e14, 1e18, 2e18, 5e17]


def _ne_by_hand(t):
    """The same profile written by hand (piecewise linear), m^-3."""
    return float(np.interp(t, NE_TIMES, NE_VALUES))


def test_prescribed_electron_density_is_followed_then_free_against_radau():
    t_eval = np.r_[0.0, np.linspace(1e-9, 14e-9, 14), np.geomspace(2e-8, 1e-3, 30)]
    res = _prescribed(t_eval_s=t_eval, electron_density_profile=(NE_TIMES, NE_VALUES))
    e = systems.TOY_SPECIES.index("e")
    on = t_eval <= 14e-9
    want = np.array([_ne_by_hand(t) for t in t_eval[on]])
    np.testing.assert_allclose(res.electron_density_m3[on], want, rtol=1e-13)
    # integral of n_e: exact for a piecewise-linear n_e (trapezoid per interval)
    tt = np.r_[0.0, 2e-9, 12e-9, 14e-9]
    exact = np.sum(np.diff(tt) * 0.5 * (np.array(NE_VALUES[1:]) + np.array(NE_VALUES[:-1])))
    assert res.integrated_electron_density_s_m3[on][-1] == pytest.approx(exact, rel=1e-12)
    # afterglow: free electrons, decaying by recombination and attachment-free chemistry
    assert res.electron_density_m3[-1] < 0.5 * NE_VALUES[-1]

    # independent reference: scipy Radau on a hand-written system. During the profile the
    # state is every species but the electrons, whose density is _ne_by_hand(t); then the
    # full system from n_e(14 ns).
    mech = systems.toy_plasma()
    model = build_model(mech, 300.0, electron_table=systems.toy_table())
    cond = model[4]
    n = len(mech.species)
    heavy = np.arange(n) != e
    f = np.zeros(n)
    J = np.zeros((n, n))

    def full(t, y, mode):
        cond[1], cond[2], cond[3] = t, PULSE.at(t), 0.0
        kinetics.evaluate(cond[2], np.ascontiguousarray(y), model, f, J, mode)

    def rhs_pulse(t, z):
        y = np.empty(n)
        y[heavy] = z
        y[e] = _ne_by_hand(t)
        full(t, y, kinetics.RHS)
        return f[heavy].copy()

    def jac_pulse(t, z):
        y = np.empty(n)
        y[heavy] = z
        y[e] = _ne_by_hand(t)
        full(t, y, kinetics.JACOBIAN)
        return J[np.ix_(heavy, heavy)].copy()

    ref = np.zeros((t_eval.size, n))
    z = systems.toy_initial()[heavy]
    for a, b in zip(NE_TIMES[:-1], NE_TIMES[1:]):      # restart at the kinks
        cuts = np.unique([a, b] + [c for c in PULSE.times_s if a < c < b])
        for c0, c1 in zip(cuts[:-1], cuts[1:]):
            inside = (t_eval > c0) & (t_eval <= c1)
            sol = solve_ivp(rhs_pulse, (c0, c1), z, method="Radau", jac=jac_pulse,
                            rtol=1e-10, atol=1e3, t_eval=np.unique(np.r_[t_eval[inside], c1]))
            assert sol.success, sol.message
            rows = np.flatnonzero(inside)
            for m, tm in zip(rows, t_eval[inside]):
                ref[m, heavy] = sol.y[:, list(rows).index(m)]
                ref[m, e] = _ne_by_hand(tm)
            z = sol.y[:, -1]
    ref[0, heavy] = systems.toy_initial()[heavy]
    ref[0, e] = NE_VALUES[0]
    y = np.empty(n)
    y[heavy] = z
    y[e] = NE_VALUES[-1]
    after = t_eval > 14e-9

    def rhs(t, y):
        full(t, y, kinetics.RHS)
        return f.copy()

    def jac(t, y):
        full(t, y, kinetics.JACOBIAN)
        return J.copy()

    sol = solve_ivp(rhs, (14e-9, 1e-3), y, method="Radau", jac=jac, rtol=1e-10, atol=1e3,
                    t_eval=t_eval[after])
    ref[after] = sol.y.T
    err = np.abs(res.densities_m3 - ref) / (1e6 + 1e-6 * np.abs(ref))
    assert err.max() < 10.0, err.max()        # measured 2.3 (tolerance units)


def test_prescribed_segments_jumps_and_free_gaps():
    # prescribed on [2, 4] ns (jump up at 2 ns), free on [4, 6] ns (NaN), prescribed again
    # on [6, 8] ns with a restart at the profile's value; free after 8 ns
    prof = ElectronDensityProfile([2e-9, 4e-9, 4e-9, 6e-9, 6e-9, 8e-9],
                                  [5e17, 5e17, np.nan, np.nan, 3e17, 1e17])
    t_eval = np.linspace(0.0, 1e-8, 41)
    res = integrate(systems.toy_plasma(), systems.toy_initial(), (0.0, 1e-8), T_gas_K=300.0,
                    field=PULSE, electron_table=systems.toy_table(), rtol=1e-6, atol_m3=1e6,
                    t_eval_s=t_eval, electron_density_profile=prof)
    ne = res.electron_density_m3
    first = (t_eval > 2e-9) & (t_eval <= 4e-9)
    second = (t_eval > 6e-9) & (t_eval <= 8e-9)
    np.testing.assert_allclose(ne[first], 5e17, rtol=1e-13)
    np.testing.assert_allclose(ne[second], 3e17 - 1e26 * (t_eval[second] - 6e-9), rtol=1e-13)
    # before 2 ns the seed electrons evolve freely (avalanche in the field)
    assert ne[t_eval == 2e-9][0] != 5e17
    gap = (t_eval > 4e-9) & (t_eval < 6e-9)
    assert np.all(ne[gap] != 5e17) and np.all(ne[gap] > 0.0)          # free, not held
    assert np.all(np.diff(ne[t_eval > 8e-9]) != 0.0)
    assert res.counters.n_steps < 600                     # measured 232
    with pytest.raises(ValueError, match="electron"):
        integrate(systems.robertson(), [1.0, 0.0, 0.0], (0.0, 1.0), T_gas_K=300.0,
                  electron_density_profile=([0.0, 1.0], [1.0, 1.0]))
    with pytest.raises(ValueError, match="n_e_m3"):
        ElectronDensityProfile([0.0, 1.0], [1.0, -1.0])


def test_prescribed_electrons_with_expansion_keep_the_total_density():
    prof = ElectronDensityProfile(NE_TIMES, NE_VALUES)
    mech = systems.toy_plasma()
    y0 = systems.toy_initial()
    res = _prescribed(t_eval_s=np.geomspace(1e-10, 1e-3, 25), electron_density_profile=prof,
                      constant_total_density=True, rtol=1e-9)
    np.testing.assert_allclose(res.densities_m3.sum(axis=1), y0.sum(), rtol=1e-13)
    phi = res.expansion_factor
    per_parcel = mech.element_counts @ (res.densities_m3 * phi[:, None]).T
    ref = mech.element_counts @ y0
    heavy_elements = np.array(mech.elements) != "E"      # charge is not kept: n_e imposed
    rel = np.abs(per_parcel - ref[:, None]).max(axis=1)[heavy_elements] / ref[heavy_elements]
    assert np.all(rel < 1e-10), rel                      # measured 8e-15
    assert phi[-1] != 1.0


def test_integrated_electron_density_closed_form():
    # free electrons lost at a wall (invented frequency): n_e = n0 exp(-nu t),
    # int n_e dt = n0 (1 - exp(-nu t)) / nu
    mech = systems.build(("e", "X"), [("e + X => e + X", ("k", 0.0))], charge={"e": -1})
    nu, n0 = 2e5, 1e16
    t = np.linspace(0.0, 2e-5, 21)
    res = integrate(mech, [n0, N0], (0.0, 2e-5), T_gas_K=300.0, t_eval_s=t, rtol=1e-8,
                    loss_frequency_s=[nu, 0.0], atol_m3=1e3)
    np.testing.assert_allclose(res.integrated_electron_density_s_m3,
                               n0 * (1.0 - np.exp(-nu * t)) / nu, rtol=1e-7,
                               atol=1e-30)                           # measured 1.0e-9
    assert res.integrated_electron_density_s_m3[0] == 0.0
