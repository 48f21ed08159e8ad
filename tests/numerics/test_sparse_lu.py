"""The sparse LU on the known Jacobian pattern against the dense LU with partial pivoting.

Systems: the invented toy plasma of ``systems.py``, the shipped example mechanism
``every_law.yaml`` (invented rate numbers) and the invented cluster plasma of
``synthetic.py`` (81 species); none of the numbers is physical data. References: the
dense path of the same code (Gaussian elimination with partial pivoting, Golub & Van Loan
2013, algorithm 3.4.1) and numpy.linalg.solve (LAPACK gesv), both independent of the
sparse ordering, static pivoting and Woodbury updates tested here.
"""

from pathlib import Path

import numpy as np
import pytest

import synthetic
import systems
from plasmazero.numerics import integrate, kinetics
from plasmazero.numerics.integrate import build_model, linear_solver_arrays
from plasmazero.numerics.linalg import sparse_factor, sparse_solve, sparse_symbolic
from plasmazero.numerics.rosenbrock import GAMMA, rodas4_step
from test_integrator_features import PULSE
from test_jacobian import _random_linear, _random_state

EVERY_LAW = Path(__file__).resolve().parents[2] / "mechanisms" / "examples" / "every_law.yaml"


def _systems():
    from plasmazero.physics.compiled import load_compiled_mechanism

    every = load_compiled_mechanism(EVERY_LAW)
    cluster, _ = synthetic.cluster_plasma(40)
    return [(systems.toy_plasma(), systems.toy_table()),
            (every, systems.toy_table(columns=every.electron_processes)),
            (cluster, None)]


def _random_model(rng, mech, table, expand):
    n = len(mech.species)
    linear = _random_linear(rng, n)
    model = build_model(mech, rng.uniform(250.0, 1200.0), electron_table=table,
                        loss_frequency_s=linear[0], loss_products=linear[1],
                        source_m3_s=linear[2], constant_total_density=expand)
    if mech.electron_index >= 0 and rng.random() < 0.3:
        model[4][kinetics.COND_PRESCRIBED] = 1.0
        model[4][kinetics.COND_ELECTRON_SLOPE] = rng.uniform(-1e24, 1e24)
    return model


# ---------------------------------------------------------------- symbolic analysis

def test_minimum_degree_avoids_the_fill_of_an_arrow_matrix():
    # arrow matrix: dense first row and column, diagonal elsewhere. In the natural order
    # eliminating the hub first fills everything; minimum degree takes it last: no fill
    # (George & Liu 1989, SIAM Review 31, 1, the standard example)
    n = 12
    pat = np.eye(n, dtype=bool)
    pat[0, :] = pat[:, 0] = True
    order, indptr, indices, diag, flops = sparse_symbolic(pat)
    # the hub goes last but one at the latest (a tie with the last leaf)
    assert 0 in order[-2:] and sorted(order) == list(range(n))
    assert indices.size == pat.sum()                       # no fill at all
    assert flops == 2 * (n - 1)               # hub row: n-1 multipliers, one update each
    for k in range(n):                        # rows sorted, diagonal where it says
        row = indices[indptr[k]:indptr[k + 1]]
        assert np.all(np.diff(row) > 0) and indices[diag[k]] == k


def test_pattern_covers_the_jacobian_and_the_split_is_exact():
    rng = np.random.default_rng(21)
    for mech, table in _systems():
        n = len(mech.species)
        for _ in range(20):
            model = _random_model(rng, mech, table, expand=True)
            y = _random_state(rng, mech)
            E_N = rng.choice([0.0, rng.uniform(1.0, 300.0)])
            f = np.zeros(n)
            J = np.zeros((n, n))
            Js = np.zeros((n, n))
            # the full pattern holds every non-zero of the chemistry (expansion off) ...
            model[4][kinetics.COND_EXPANSION] = 0.0
            kinetics.evaluate(E_N, y, model, f, J, kinetics.JACOBIAN)
            assert not np.any((J != 0.0) & ~kinetics.jacobian_pattern(model))
            # ... and the split pattern every non-zero of the split Jacobian
            model[4][kinetics.COND_EXPANSION] = 1.0
            kinetics.evaluate(E_N, y, model, f, Js, kinetics.JACOBIAN_SPLIT)
            assert not np.any((Js != 0.0) & ~kinetics.jacobian_pattern(model, split=True))
            u, c, w = (model[5][i].copy() for i in (7, 8, 9))
            kinetics.evaluate(E_N, y, model, f, J, kinetics.JACOBIAN)
            # J = J_split + w 1^T - u c^T, to round-off of the terms (c_k carries that of
            # the column sum of J over N_D, whose entries are sums with cancellation
            # themselves: measured 2e-13 of this size)
            rebuilt = Js + w[:, None] - np.outer(u, c)
            col = (np.abs(Js) + np.abs(w)[:, None]).sum(axis=0) / model[5][6][1]
            size = np.abs(Js) + np.abs(w)[:, None] + np.abs(np.outer(u, c)) + np.outer(u, col)
            assert np.all(np.abs(J - rebuilt) <= 1e-11 * size + 1e-300)


# ------------------------------------------------------------ one step, dense vs sparse

def _step(model, y, h, J, sp):
    n = y.size
    f0 = np.zeros(n)
    kinetics.evaluate(model[4][2], y, model, f0, np.zeros((n, n)), kinetics.RHS)
    U = np.zeros((6, n))
    ynew = np.zeros(n)
    info = rodas4_step(0.0, y, h, f0, J, np.zeros(n), False, model, np.zeros((n, n)),
                       np.zeros(n, dtype=np.int64), U, np.zeros(n), np.zeros(n), ynew, sp)
    assert info == 0
    return U, ynew


def test_one_rosenbrock_step_is_the_same_with_both_solvers():
    rng = np.random.default_rng(22)
    worst_step = worst_stage = 0.0
    for mech, table in _systems():
        n = len(mech.species)
        for _ in range(15):
            expand = bool(rng.random() < 0.6)
            model = _random_model(rng, mech, table, expand)
            model[4][2] = rng.choice([0.0, rng.uniform(1.0, 300.0)])     # E/N of the step
            y = _random_state(rng, mech)
            h = 10.0 ** rng.uniform(-12.0, -3.0)
            dense, _ = linear_solver_arrays(model, "dense")
            sparse, _ = linear_solver_arrays(model, "sparse")
            J = np.zeros((n, n))
            Js = np.zeros((n, n))
            kinetics.evaluate(model[4][2], y, model, np.zeros(n), J, kinetics.JACOBIAN)
            kinetics.evaluate(model[4][2], y, model, np.zeros(n), Js, kinetics.JACOBIAN_SPLIT)
            Ud, yd = _step(model, y, h, J, dense)
            Us, ys = _step(model, y, h, Js, sparse)
            assert sparse[10][0] == 1 and sparse[10][1] == 0      # no fallback needed
            # independent check of the first stage: (I/(gamma h) - J) u_1 = f(y), to the
            # rounding of a solve with this condition number
            f0 = np.zeros(n)
            kinetics.evaluate(model[4][2], y, model, f0, np.zeros((n, n)), kinetics.RHS)
            M = np.eye(n) / (GAMMA * h) - J
            u1 = np.linalg.solve(M, f0)
            bound = 1e-14 * np.linalg.cond(M) * np.abs(u1).max()
            worst_stage = max(worst_stage, np.abs(Us[0] - u1).max() / bound,
                              np.abs(Ud[0] - u1).max() / bound)
            # the whole step, where it is a sensible step for these random states (with
            # steps far too long they blow up to 1e80 and more, and later stages amplify
            # any rounding difference)
            if h < 1e-7:
                worst_step = max(worst_step, np.abs(ys - yd).max() / np.abs(y).max())
    assert worst_stage < 1.0, worst_stage            # measured 0.1
    assert worst_step < 1e-11, worst_step            # measured 4e-16


def test_fallback_to_dense_on_a_zero_pivot():
    # A <=> B with a hand-made Jacobian that makes the diagonal of I/(gamma h) - J zero:
    # the static pivot fails, the dense LU pivots, the step is the same
    mech = systems.build(("A", "B"), [("A => B", ("k", 1.0)), ("B => A", ("k", 1.0))])
    model = build_model(mech, 300.0)
    y = np.array([1e20, 2e20])
    h = 1e-3
    J = np.array([[1.0 / (GAMMA * h), 1.0], [1.0, 1.0 / (GAMMA * h)]])
    dense, _ = linear_solver_arrays(model, "dense")
    sparse, name = linear_solver_arrays(model, "sparse")
    assert name == "sparse"
    Ud, yd = _step(model, y, h, J.copy(), dense)
    Us, ys = _step(model, y, h, J.copy(), sparse)
    assert tuple(sparse[10]) == (0, 1)                  # refused once, done densely
    np.testing.assert_array_equal(ys, yd)


def test_sparse_factor_refuses_tiny_pivots_and_growth():
    pat = np.ones((2, 2), dtype=bool)
    order, indptr, indices, diag, _ = sparse_symbolic(pat)
    w = np.zeros(2)

    def factor(M):
        val = np.array([M[order[k], order[indices[p]]]
                        for k in range(2) for p in range(indptr[k], indptr[k + 1])])
        return sparse_factor(indptr, indices, diag, val, w), val

    assert factor(np.array([[0.0, 1.0], [1.0, 0.0]]))[0] == 1          # zero first pivot
    assert factor(np.array([[1e-9, 1.0], [1.0, 1.0]]))[0] == 3         # growth 1e9
    info, val = factor(np.array([[4.0, 1.0], [2.0, 3.0]]))
    assert info == 0
    b = np.array([1.0, 2.0])
    sparse_solve(indptr, indices, diag, val, order, b, w)
    np.testing.assert_allclose(b, np.linalg.solve([[4.0, 1.0], [2.0, 3.0]], [1.0, 2.0]),
                               rtol=1e-15)


# ---------------------------------------------------------------- whole integrations

def test_fixed_step_integrations_agree_to_rounding():
    mech = systems.toy_plasma()
    y0 = systems.toy_initial()
    t = np.linspace(0.0, 2e-8, 11)
    out = {}
    for solver in ("dense", "sparse"):
        for expand in (False, True):
            r = integrate(mech, y0, (0.0, 2e-8), T_gas_K=300.0, field=PULSE,
                          electron_table=systems.toy_table(), fixed_step_s=1e-10, t_eval_s=t,
                          constant_total_density=expand, linear_solver=solver,
                          electron_density_profile=([0.0, 3e-9, 6e-9], [1e14, 1e17, 1e16]))
            assert r.linear_solver == solver
            out[solver, expand] = r
    for expand in (False, True):
        d, s = out["dense", expand], out["sparse", expand]
        assert s.counters.n_lu_sparse == s.counters.n_lu == 200
        assert d.counters.n_lu_sparse == 0
        rel = np.abs(s.densities_m3 - d.densities_m3) / (np.abs(d.densities_m3) + 1e6)
        assert rel.max() < 1e-11, rel.max()              # measured 2e-14, 9e-14
        np.testing.assert_allclose(s.expansion_factor, d.expansion_factor, rtol=1e-13)


def test_adaptive_integrations_agree_within_the_tolerance():
    # step-size control amplifies the rounding differences (the error estimate is a
    # small difference of stage vectors), so here the two runs agree to the tolerance
    mech, y0 = synthetic.cluster_plasma(40)
    t = np.geomspace(1e-9, 1e-3, 13)
    runs = [integrate(mech, y0, (0.0, 1e-3), T_gas_K=300.0, t_eval_s=t, rtol=1e-6,
                      atol_m3=1e6, constant_total_density=True, linear_solver=s)
            for s in ("dense", "sparse", "auto")]
    d, s, a = runs
    assert s.counters.n_lu_sparse == s.counters.n_lu and s.counters.n_lu_dense_fallback == 0
    assert a.linear_solver == "sparse"                  # 81 species, LU fill below 1/2
    err = np.abs(s.densities_m3 - d.densities_m3) / (1e6 + 1e-6 * np.abs(d.densities_m3))
    assert err.max() < 0.1, err.max()                   # measured 1.4e-7 tolerance units
    assert abs(s.counters.n_steps - d.counters.n_steps) <= 0.05 * d.counters.n_steps  # 149, 149
    el = mech.element_counts @ (s.densities_m3 * s.expansion_factor[:, None]).T
    assert np.abs(el[0] / el[0, 0] - 1.0).max() < 1e-8       # units of A; measured 1.6e-9


def test_automatic_choice():
    small = build_model(systems.toy_plasma(), 300.0)
    assert linear_solver_arrays(small, "auto")[1] == "dense"      # 8 species
    with pytest.raises(ValueError, match="linear_solver"):
        linear_solver_arrays(small, "lapack")
