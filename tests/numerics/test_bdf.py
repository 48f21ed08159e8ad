"""The variable-order BDF option (``integrate(..., method="bdf")``) against outside references.

* scipy's own implementation of the same method (``solve_ivp(method="BDF")``, Shampine &
  Reichelt 1997): on Robertson's problem the two take the same number of steps within a
  few per cent (a general-purpose library used as the reference of the port);
* Robertson's problem at t = 1e11 against the stiff-test-set reference (Hairer & Wanner
  1996; values from memory, as in test_robertson.py);
* closed forms (Bateman 1910 for A -> B -> C; 2 A -> B);
* the toy pulsed plasma of ``systems.py`` (invented numbers) against scipy's Radau IIA
  at rtol 1e-10, with element and charge conservation and the integrated rates;
* the shipped CO2 mechanism over a filament and afterglow against Radau;
* the difference-form kernels against exact polynomial interpolation (mathematical
  facts: re-interpolating the differences of a polynomial of degree <= k on a new
  spacing is exact; the dense output reproduces the polynomial).
"""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import systems
from plasmazero.numerics import FieldProfile, integrate
from plasmazero.numerics import bdf

PULSE = FieldProfile([0.0, 2e-9, 12e-9, 14e-9], [0.0, 150.0, 150.0, 0.0])   # Td, invented


# ----------------------------------------------------------------- kernels, exact facts

def _differences(p, t_new, h, order):
    """Backward differences nabla^j p(t_new) on the spacing h, j = 0..order."""
    vals = np.array([p(t_new - m * h) for m in range(order + 1)])
    D = np.zeros((bdf.HISTORY_ROWS, 1))
    for j in range(order + 1):
        D[j, 0] = vals[0]
        vals = vals[:-1] - vals[1:]
    return D


@pytest.mark.parametrize("order", [1, 2, 3, 4, 5])
def test_history_change_and_dense_output_are_exact_for_polynomials(order):
    rng = np.random.default_rng(order)
    coeffs = rng.normal(size=order + 1)

    def p(t):
        return float(np.polyval(coeffs, t))

    t_new, h = 0.7, 0.05
    D = _differences(p, t_new, h, order)
    out = np.zeros(1)
    for theta in (0.0, 0.3, 1.0):
        bdf.history_eval(theta, D, order, out)
        assert out[0] == pytest.approx(p(t_new - (1.0 - theta) * h), rel=1e-12, abs=1e-12)
    factor = 1.7
    bdf.change_history(D, order, factor, bdf.history_scratch(1))
    expected = _differences(p, t_new, factor * h, order)
    np.testing.assert_allclose(D[:order + 1, 0], expected[:order + 1, 0], rtol=1e-10, atol=1e-12)


def test_method_constants():
    # Shampine & Reichelt (1997), Table 1: kappa; alpha_k = (1 - kappa_k) sum 1/m;
    # kappa = 0 at order 5 (the plain BDF5); error constant of BDF1 is 1/2
    assert bdf.KAPPA[5] == 0.0 and bdf.KAPPA[2] == pytest.approx(-1.0 / 9.0)
    assert bdf.ALPHA[1] == pytest.approx(1.185)
    assert bdf.ERROR_CONST[1] == pytest.approx(-0.185 + 0.5)
    assert bdf.newton_tolerance(1e-6) == pytest.approx(1e-3)


# ---------------------------------------------------------------- Robertson, scipy

ROB_ATOL = np.array([1e-8, 1e-14, 1e-8])
ROB_RTOL = 1e-6
# reference at t = 1e11 from memory of Hairer & Wanner (1996) and the IVP test set
# (Mazzia & Magherini, problem ROBER), as in test_robertson.py
ROB_REF = np.array([0.2083340149701255e-07, 0.8333360770334713e-13, 0.9999999791665050])


def _robertson_f(t, y):
    k1, k2, k3 = 0.04, 3e7, 1e4
    return [-k1 * y[0] + k3 * y[1] * y[2], k1 * y[0] - k3 * y[1] * y[2] - k2 * y[1] ** 2,
            k2 * y[1] ** 2]


def _robertson_jac(t, y):
    k1, k2, k3 = 0.04, 3e7, 1e4
    return [[-k1, k3 * y[2], k3 * y[1]], [k1, -k3 * y[2] - 2 * k2 * y[1], -k3 * y[1]],
            [0.0, 2 * k2 * y[1], 0.0]]


def test_robertson_against_the_reference_and_scipys_bdf():
    res = integrate(systems.robertson(), [1.0, 0.0, 0.0], (0.0, 1e11), T_gas_K=300.0,
                    rtol=ROB_RTOL, atol_m3=ROB_ATOL, t_eval_s=[0.0, 1e11], method="bdf")
    y = res.densities_m3[-1]
    err = np.abs(y - ROB_REF) / (ROB_ATOL + ROB_RTOL * np.abs(ROB_REF))
    assert np.all(err < 1.0), err                         # measured (0.02, 0.09, 2e-4)
    np.testing.assert_allclose(y.sum(), 1.0, rtol=0, atol=1e-13)   # linear invariant
    sol = solve_ivp(_robertson_f, (0.0, 1e11), [1.0, 0.0, 0.0], method="BDF",
                    jac=_robertson_jac, rtol=ROB_RTOL, atol=ROB_ATOL)
    assert sol.success
    c = res.counters
    # the same method: measured 624 accepted steps against scipy's 624, 1790 against
    # 1782 right-hand sides, 21 against 22 Jacobians
    assert abs(c.n_accepted - (sol.t.size - 1)) <= 0.05 * (sol.t.size - 1)
    assert abs(c.n_rhs - sol.nfev) <= 0.1 * sol.nfev
    assert c.n_jac <= 2 * sol.njev + 2


def test_robertson_every_step_output_continues_across_buffer_growth():
    # more accepted steps than the first output buffer holds (integrate.STEP_BUFFER):
    # the method keeps its history when the buffer grows, so the counts do not change
    kw = dict(T_gas_K=300.0, rtol=1e-9, atol_m3=ROB_ATOL * 1e-3, method="bdf")
    every = integrate(systems.robertson(), [1.0, 0.0, 0.0], (0.0, 1e11), **kw)
    final = integrate(systems.robertson(), [1.0, 0.0, 0.0], (0.0, 1e11), t_eval_s=[1e11], **kw)
    assert every.counters.n_accepted > 1024
    assert every.times_s.size == every.counters.n_accepted + 1
    assert np.all(np.diff(every.times_s) > 0.0)
    assert every.counters.n_steps == final.counters.n_steps
    np.testing.assert_allclose(every.densities_m3[-1], final.densities_m3[-1], rtol=1e-12)


# ---------------------------------------------------------------- closed forms

def test_bateman_chain_and_second_order_recombination():
    N0, rtol, atol = 1e20, 1e-7, 1e8
    k1, k2 = 2.0, 0.5
    mech = systems.build(("A", "B", "C"), [("A => B", ("k", k1)), ("B => C", ("k", k2))])
    t = np.linspace(0.0, 10.0, 41)
    res = integrate(mech, [N0, 0.0, 0.0], (0.0, 10.0), T_gas_K=300.0, t_eval_s=t,
                    rtol=rtol, atol_m3=atol, method="bdf")
    # Bateman (1910), Proc. Cambridge Phil. Soc. 15, 423
    A = N0 * np.exp(-k1 * t)
    B = N0 * k1 / (k2 - k1) * (np.exp(-k1 * t) - np.exp(-k2 * t))
    ref = np.c_[A, B, N0 - A - B]
    err = np.abs(res.densities_m3 - ref) / (atol + rtol * np.abs(ref))
    assert err.max() < 50.0, err.max()        # global error of a multistep method; measured 9
    # 2 A -> B with k (m^3/s): A = A0 / (1 + 2 k A0 t), closed form of the rate equation
    k = 1e-16
    mech = systems.build(("A", "B"), [("2 A => B", ("k", k))])
    t = np.geomspace(1e-6, 1e-2, 20)
    res = integrate(mech, [N0, 0.0], (0.0, 1e-2), T_gas_K=300.0, t_eval_s=t, rtol=rtol,
                    atol_m3=atol, method="bdf")
    A = N0 / (1.0 + 2.0 * k * N0 * t)
    err = np.abs(res.densities_m3[:, 0] - A) / (atol + rtol * A)
    assert err.max() < 50.0, err.max()
    np.testing.assert_allclose(res.densities_m3 @ [1.0, 2.0], N0, rtol=1e-13)


# ---------------------------------------------------------------- pulsed plasma

def _pulse(**kw):
    args = dict(T_gas_K=300.0, field=PULSE, electron_table=systems.toy_table(), rtol=1e-7,
                atol_m3=1e6, method="bdf")
    args.update(kw)
    return integrate(systems.toy_plasma(), systems.toy_initial(), (0.0, 1e-3), **args)


def test_toy_pulse_against_radau_conservation_and_rates():
    mech = systems.toy_plasma()
    t_eval = np.r_[0.0, np.linspace(1e-9, 14e-9, 14), np.geomspace(2e-8, 1e-3, 30)]
    res = _pulse(t_eval_s=t_eval)
    ref = systems.radau_reference(mech, systems.toy_initial(), t_eval, T_gas_K=300.0,
                                  field=PULSE, table=systems.toy_table(), rtol=1e-10, atol=1e3)
    err = np.abs(res.densities_m3 - ref) / (1e6 + 1e-7 * np.abs(ref))
    assert err.max() < 100.0, err.max()
    assert res.densities_m3[:, 0].max() > 1e17
    # elements and charge: linear invariants, kept by every Newton iteration
    totals = mech.element_counts @ res.densities_m3.T
    drift = np.abs(totals - totals[:, :1]).max(axis=1)
    charged = np.abs(mech.charge) @ res.densities_m3.T
    scale = np.where(np.array(mech.elements) == "E", charged.max(), np.abs(totals[:, 0]))
    assert np.all(drift / scale < 1e-10), drift / scale
    # integrated rates (Gauss quadrature on the interpolating polynomial) close the balances
    nu = mech.stoichiometry
    change = res.densities_m3 - res.densities_m3[0]
    explained = (res.integrated_rates_m3 - res.integrated_rates_m3[0]) @ nu.T
    gross = np.abs(nu) @ res.integrated_rates_m3[-1] + 1e6
    assert np.all(np.abs(change - explained) <= 1e-5 * gross), np.abs(change - explained) / gross


def test_rodas4_and_bdf_agree_on_a_pulse_with_a_prescribed_electron_density():
    ne = ([0.0, 2e-9, 12e-9, 14e-9, 14e-9], [1e14, 1e18, 2e18, 5e17, math.nan])
    t_eval = np.geomspace(1e-9, 1e-3, 25)
    a = _pulse(t_eval_s=t_eval, electron_density_profile=ne, rtol=1e-9, method="rodas4")
    b = _pulse(t_eval_s=t_eval, electron_density_profile=ne, rtol=1e-9)
    # in units of atol + 1e-6 |y|: measured 3.1, on a density of a few atol (the global
    # error of both methods at these tolerances is of the order of atol on such species)
    err = np.abs(a.densities_m3 - b.densities_m3) / (1e6 + 1e-6 * np.abs(a.densities_m3))
    assert err.max() < 10.0, err.max()
    big = a.densities_m3 > 1e14      # 1e8 atol: the relative tolerance governs
    assert np.max(np.abs(a.densities_m3 - b.densities_m3)[big] / a.densities_m3[big]) < 1e-6
    # the prescribed profile is followed (linear between its nodes)
    assert b.electron_density_m3[np.searchsorted(t_eval, 2e-9)] == pytest.approx(
        np.interp(t_eval[np.searchsorted(t_eval, 2e-9)], ne[0][:4], ne[1][:4]), rel=1e-9)


def test_bad_method_arguments():
    with pytest.raises(ValueError, match="method must be one of"):
        _pulse(method="euler")
    with pytest.raises(ValueError, match="fixed_step_s"):
        _pulse(fixed_step_s=1e-10)
