"""The integrator against closed-form solutions, and its measured order of convergence.

All rate coefficients here are invented for the tests (constant k, ARRHENIUS with
b = Ea = 0); the references are exact solutions of the rate equations.
"""

import numpy as np
import pytest

import systems
from plasmazero.numerics import ElectronTable, FieldProfile, integrate

RTOL = 1e-7
ATOL = 1e8          # m^-3, for densities of order 1e20 m^-3
N0 = 1e20           # m^-3


def _tol_units(y, ref, rtol=RTOL, atol=ATOL):
    return np.max(np.abs(y - ref) / (atol + rtol * np.abs(ref)))


def test_consecutive_first_order_bateman():
    k1, k2 = 2.0, 0.5
    mech = systems.build(("A", "B", "C"), [("A => B", ("k", k1)), ("B => C", ("k", k2))])
    t = np.linspace(0.0, 10.0, 41)
    res = integrate(mech, [N0, 0.0, 0.0], (0.0, 10.0), T_gas_K=300.0, t_eval_s=t,
                    rtol=RTOL, atol_m3=ATOL)
    # Bateman (1910), Proc. Cambridge Phil. Soc. 15, 423: A -> B -> C
    A = N0 * np.exp(-k1 * t)
    B = N0 * k1 / (k2 - k1) * (np.exp(-k1 * t) - np.exp(-k2 * t))
    C = N0 - A - B
    ref = np.c_[A, B, C]
    assert _tol_units(res.densities_m3, ref) < 3.0          # measured 0.55
    # integrated rates: int k1 A dt = N0 (1 - exp(-k1 t)) and int k2 B dt = C(t)
    R = res.integrated_rates_m3
    assert _tol_units(R[:, 0], N0 * (1.0 - np.exp(-k1 * t))) < 3.0   # measured 0.04
    assert _tol_units(R[:, 1], C) < 3.0                                # measured 0.02


def test_a_decayed_species_is_flushed_to_zero_not_left_subnormal():
    """A -> B, k = 10 s^-1, with steps held at k h = 0.5 (``max_step_s``) so that A decays
    step by step: the exact A = N0 exp(-k t) passes 1e-30 atol (the flush,
    integrate.FLUSH_FRACTION) at t = 14.3 s and would be subnormal by t = 75 s. The
    integrator sets it to zero instead (subnormal arithmetic is slow), and B holds all of
    A (exact: B = N0 (1 - exp(-k t)))."""
    mech = systems.build(("A", "B"), [("A => B", ("k", 10.0))])
    t = np.array([1.0, 20.0, 100.0])
    res = integrate(mech, [N0, 0.0], (0.0, 100.0), T_gas_K=300.0, t_eval_s=t,
                    rtol=RTOL, atol_m3=ATOL, max_step_s=0.05)
    A, B = res.densities_m3[:, 0], res.densities_m3[:, 1]
    assert _tol_units(A[:1], N0 * np.exp(-10.0 * t[:1])) < 3.0
    assert A[1] == 0.0 and A[2] == 0.0
    assert _tol_units(B, N0 * (1.0 - np.exp(-10.0 * t))) < 3.0


def test_reversible_reaction_reaches_its_equilibrium_constant():
    kf, kr = 3.0, 1.0
    mech = systems.build(("A", "B"), [("A => B", ("k", kf)), ("B => A", ("k", kr))])
    t = np.linspace(0.0, 8.0, 33)
    res = integrate(mech, [N0, 0.0], (0.0, 8.0), T_gas_K=300.0, t_eval_s=t, rtol=RTOL,
                    atol_m3=ATOL)
    # closed form: A = A_eq + (A0 - A_eq) exp(-(kf + kr) t), A_eq = A0 kr / (kf + kr)
    A_eq = N0 * kr / (kf + kr)
    A = A_eq + (N0 - A_eq) * np.exp(-(kf + kr) * t)
    assert _tol_units(res.densities_m3, np.c_[A, N0 - A]) < 3.0     # measured 0.09
    B_over_A = res.densities_m3[-1, 1] / res.densities_m3[-1, 0]
    assert B_over_A == pytest.approx(kf / kr, rel=1e-6)     # K = kf / kr (detailed balance)


def test_second_order_recombination():
    k = 1e-20   # m^3/s
    mech = systems.build(("A", "B"), [("A + A => B", ("k", k))])
    t = np.geomspace(1e-3, 100.0, 31)
    res = integrate(mech, [N0, 0.0], (0.0, 100.0), T_gas_K=300.0, t_eval_s=t, rtol=RTOL,
                    atol_m3=ATOL)
    # dA/dt = -2 k A^2: A = A0 / (1 + 2 k A0 t), B = (A0 - A) / 2
    A = N0 / (1.0 + 2.0 * k * N0 * t)
    assert _tol_units(res.densities_m3, np.c_[A, 0.5 * (N0 - A)]) < 3.0   # measured 0.21


def test_linear_losses_products_and_source():
    k, nu, S = 0.3, 0.7, 2e19           # s^-1, s^-1, m^-3 s^-1
    mech = systems.build(("A", "B", "C"), [("A => C", ("k", k))])
    loss = np.array([nu, 0.0, 0.0])
    products = np.zeros((3, 3))
    products[0, 1] = 0.5                # each A lost at the wall gives 0.5 B
    source = np.array([S, 0.0, 0.0])
    t = np.linspace(0.0, 6.0, 25)
    res = integrate(mech, [N0, 0.0, 0.0], (0.0, 6.0), T_gas_K=300.0, t_eval_s=t, rtol=RTOL,
                    atol_m3=ATOL, loss_frequency_s=loss, loss_products=products,
                    source_m3_s=source)
    # closed form with lam = k + nu: A = S/lam + (A0 - S/lam) exp(-lam t)
    lam = k + nu
    A = S / lam + (N0 - S / lam) * np.exp(-lam * t)
    intA = S * t / lam + (N0 - S / lam) * (1.0 - np.exp(-lam * t)) / lam
    ref = np.c_[A, 0.5 * nu * intA, k * intA]
    assert _tol_units(res.densities_m3, ref) < 3.0                  # measured 0.14
    L = res.integrated_linear_m3
    assert _tol_units(L[:, 0], S * t - nu * intA) < 3.0             # measured 0.38
    assert _tol_units(L[:, 1], 0.5 * nu * intA) < 3.0               # measured 0.05
    assert np.all(L[:, 2] == 0.0)


# ----------------------------------------------------- field ramp through an E/N table

K_LO, K_HI, E_LO, E_HI = 1e-16, 5e-16, 10.0, 1000.0   # invented table, m^3/s and Td
N_E = 1e18                                           # m^-3, electrons as a catalyst
E_START, E_END, T_RAMP = 100.0, 400.0, 1e-2          # Td, Td, s


def _ramp_system():
    mech = systems.build(("e", "X", "Y"), [("e + X => e + Y", ("electron", 0, 1.0))],
                         charge={"e": -1}, electron_processes=("p",))
    table = ElectronTable(E_N_Td=[E_LO, E_HI], k_m3_s=[[K_LO], [K_HI]],
                          mean_energy_eV=[1.0, 5.0], drift_velocity_m_s=[1e4, 1e5],
                          processes=("p",))
    field = FieldProfile([0.0, T_RAMP], [E_START, E_END])
    return mech, table, field


def _ramp_exact(t):
    """X(t)/X0 = exp(-n_e int k dt), k linear in ln E, E linear in t (closed form)."""
    s = (E_END - E_START) / T_RAMP
    b = (K_HI - K_LO) / np.log(E_HI / E_LO)
    E = E_START + s * t

    def F(e):   # antiderivative of k(E(t)) in t
        return (K_LO * e + b * (e * np.log(e / E_LO) - e)) / s

    return np.exp(-N_E * (F(E) - F(E_START)))


def test_field_ramp_through_the_electron_table():
    mech, table, field = _ramp_system()
    t = np.linspace(0.0, T_RAMP, 11)
    res = integrate(mech, [N_E, N0, 0.0], (0.0, T_RAMP), T_gas_K=300.0, field=field,
                    electron_table=table, t_eval_s=t, rtol=RTOL, atol_m3=ATOL)
    X = N0 * _ramp_exact(t)
    assert _tol_units(res.densities_m3[:, 1], X) < 3.0               # measured 0.24
    np.testing.assert_allclose(res.E_N_Td, E_START + (E_END - E_START) * t / T_RAMP, rtol=1e-12)
    # mean energy linear in ln E/N between the two rows of the table
    w = np.log(res.E_N_Td / E_LO) / np.log(E_HI / E_LO)
    np.testing.assert_allclose(res.mean_energy_eV, 1.0 + 4.0 * w, rtol=1e-12)


# ------------------------------------------------------------ order of convergence

def _slope(h, err):
    return np.polyfit(np.log(h), np.log(err), 1)[0]


def test_measured_order_is_four_nonlinear_autonomous():
    # 2A -> B with fixed steps against its closed form A = A0 / (1 + 2 k A0 t)
    k, T = 1e-20, 1.0
    mech = systems.build(("A", "B"), [("A + A => B", ("k", k))])
    steps = T / np.array([16.0, 32.0, 64.0, 128.0])
    err = []
    for h in steps:
        res = integrate(mech, [N0, 0.0], (0.0, T), T_gas_K=300.0, fixed_step_s=h,
                        t_eval_s=[T], integrate_rates=False)
        err.append(abs(res.densities_m3[-1, 0] - N0 / (1.0 + 2.0 * k * N0 * T)) / N0)
    assert 3.7 < _slope(steps, err) < 4.4, (err, _slope(steps, err))   # measured 4.06


def test_measured_order_is_four_with_a_field_ramp_and_dense_output_order():
    # non-autonomous (df/dt through the field), exact solution in closed form
    mech, table, field = _ramp_system()
    steps = T_RAMP / np.array([16.0, 32.0, 64.0, 128.0])
    err_end, err_dense = [], []
    for h in steps:
        n = int(round(T_RAMP / h))
        inside = (np.arange(n) + 1.0 / 3.0) * h          # theta = 1/3 in every step
        res = integrate(mech, [N_E, N0, 0.0], (0.0, T_RAMP), T_gas_K=300.0, field=field,
                        electron_table=table, fixed_step_s=h, t_eval_s=np.r_[inside, T_RAMP],
                        integrate_rates=False)
        assert res.counters.n_steps == n
        err = np.abs(res.densities_m3[:, 1] / N0 - _ramp_exact(res.times_s))
        err_end.append(err[-1])
        err_dense.append(err[:-1].max())
    p_end = _slope(steps, err_end)
    p_dense = _slope(steps, err_dense)
    assert 3.7 < p_end < 4.4, (err_end, p_end)        # measured 4.08
    # dense output of order 3 (local error O(h^4)); at interior points the error is the
    # method's global error plus that local one, so the slope must be at least 3
    assert 2.8 < p_dense < 4.5, (err_dense, p_dense)  # measured 3.9
