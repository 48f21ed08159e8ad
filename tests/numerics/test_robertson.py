"""Robertson's stiff chemical kinetics problem (Robertson 1966) solved by the integrator.

The three reactions A -> B (0.04), B + B -> B + C (3e7), B + C -> A + C (1e4) give the
classic stiff test problem of Hairer & Wanner (1996), Solving ODEs II, section IV.1,
integrated here out to t = 1e11 as in their stiff test set and the IVP test set of
Mazzia & Magherini (problem "ROBER").
"""

import numpy as np
from scipy.integrate import solve_ivp

import systems
from plasmazero.numerics import integrate

RTOL = 1e-6
ATOL = np.array([1e-8, 1e-14, 1e-8])
T_END = 1e11

# Reference solution at t = 1e11: value from memory of Hairer & Wanner (1996), Solving
# ODEs II (stiff test problems), and of the IVP test set of Mazzia & Magherini (problem
# ROBER, reference solution at t = 1e11).
Y_REF_1E11 = np.array([0.2083340149701255e-07, 0.8333360770334713e-13, 0.9999999791665050])


def _run(**kw):
    return integrate(systems.robertson(), [1.0, 0.0, 0.0], (0.0, T_END), T_gas_K=300.0,
                     rtol=RTOL, atol_m3=ATOL, **kw)


def test_robertson_at_1e11_against_the_test_set_reference():
    res = _run(t_eval_s=[0.0, T_END])
    y = res.densities_m3[-1]
    err = np.abs(y - Y_REF_1E11) / (ATOL + RTOL * np.abs(Y_REF_1E11))
    # measured: (3.0e-5, 1.2e-4, 2.8e-7) tolerance units
    assert np.all(err < 1.0), err
    # cost cap like scipy's own tests: measured 2701 right-hand sides, 450 steps
    assert res.counters.n_rhs < 3500, res.counters
    assert res.counters.n_steps < 600, res.counters


def test_robertson_large_time_asymptote():
    # Independent computation (this file): for t -> inf, y2 is quasi-steady,
    # 0.04 y1 = 1e4 y2 y3 with y3 -> 1, so y2 = 4e-6 y1 and y1' = -3e7 y2^2
    # = -4.8e-4 y1^2, y1 ~ 1 / (4.8e-4 t). Corrections are O(y1) relative.
    res = _run(t_eval_s=[1e9, 1e10, T_END])
    t = res.times_s
    y1 = res.densities_m3[:, 0]
    y2 = res.densities_m3[:, 1]
    np.testing.assert_allclose(y1, 1.0 / (4.8e-4 * t), rtol=2e-4)    # measured 7.5e-5
    np.testing.assert_allclose(y2, 4e-6 * y1, rtol=2e-4)


def test_robertson_against_radau_and_mass_conservation():
    t_eval = np.array([0.0, 0.4, 40.0, 4e2, 4e5, 4e8, T_END])
    res = _run(t_eval_s=t_eval)
    # independent reference: scipy Radau IIA (order 5) at rtol 1e-10
    k1, k2, k3 = 0.04, 3e7, 1e4

    def f(t, y):
        return [-k1 * y[0] + k3 * y[1] * y[2], k1 * y[0] - k3 * y[1] * y[2] - k2 * y[1] ** 2,
                k2 * y[1] ** 2]

    def jac(t, y):
        return [[-k1, k3 * y[2], k3 * y[1]],
                [k1, -k3 * y[2] - 2 * k2 * y[1], -k3 * y[1]],
                [0.0, 2 * k2 * y[1], 0.0]]

    ref = solve_ivp(f, (0.0, T_END), [1.0, 0.0, 0.0], method="Radau", jac=jac, rtol=1e-10,
                    atol=[1e-14, 1e-20, 1e-14], t_eval=t_eval).y.T
    err = np.abs(res.densities_m3 - ref) / (ATOL + RTOL * np.abs(ref))
    assert err.max() < 5.0, err.max()   # measured 0.52 tolerance units
    # y1 + y2 + y3 = 1 is a linear invariant, kept by Rosenbrock methods to round-off
    np.testing.assert_allclose(res.densities_m3.sum(axis=1), 1.0, rtol=0, atol=1e-13)


def test_every_step_output_and_counters():
    res = _run()
    c = res.counters
    assert res.times_s.size == c.n_accepted + 1
    assert np.all(np.diff(res.times_s) > 0.0)
    assert res.times_s[0] == 0.0 and res.times_s[-1] == T_END
    assert c.n_steps == c.n_accepted + c.n_rejected == c.n_lu
    assert c.n_jac == c.n_accepted
    # Integrated rates: sum_j nu_ij int r_j dt = y_i(T) - y_i(0) up to the solution's
    # accuracy, relative to the gross flux sum_j |nu_ij| int r_j dt through species i
    # (measured: 1e-7 of 1350 for A, 1.6e-7 of 1 for C).
    mech = systems.robertson()
    R = res.integrated_rates_m3[-1]
    nu = mech.stoichiometry
    resid = nu @ R - (res.densities_m3[-1] - res.densities_m3[0])
    gross = np.abs(nu) @ R
    assert np.all(np.abs(resid) <= RTOL * gross), (resid, gross)
    assert np.all(np.diff(res.integrated_rates_m3, axis=0) >= 0.0)
