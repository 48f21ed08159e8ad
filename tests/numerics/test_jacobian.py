"""The analytic Jacobian against central finite differences over clouds of random states.

Mechanisms: the shipped example ``mechanisms/examples/every_law.yaml`` (compiled by the
mechanism layer: plain three-body reactions with efficiencies, Lindemann and Troe falloff,
reverse reactions by detailed balance, Landau-Teller, expressions, a reactant of order
two), and the invented ion/electron toy system of ``systems.py``. Both carry invented
rate numbers; only the derivatives are tested. Each cloud draws random densities over
many decades, random gas temperatures, reduced fields and linear loss terms.
"""

from pathlib import Path

import numpy as np
import pytest

import systems
from plasmazero.numerics import kinetics
from plasmazero.numerics.integrate import build_model

EVERY_LAW = Path(__file__).resolve().parents[2] / "mechanisms" / "examples" / "every_law.yaml"


def _every_law():
    from plasmazero.physics.compiled import load_compiled_mechanism

    return load_compiled_mechanism(EVERY_LAW)


def _random_state(rng, mech):
    """Densities (m^-3): electrons and ions 1e12-1e19, the rest 1e14-2.5e25."""
    n = len(mech.species)
    y = 10.0 ** rng.uniform(14.0, 25.4, n)
    charged = np.asarray(mech.charge) != 0
    y[charged] = 10.0 ** rng.uniform(12.0, 19.0, charged.sum())
    return y


def _random_linear(rng, n):
    loss = np.where(rng.random(n) < 0.5, 10.0 ** rng.uniform(0.0, 5.0, n), 0.0)
    products = np.where(rng.random((n, n)) < 0.2, rng.uniform(0.0, 2.0, (n, n)), 0.0)
    np.fill_diagonal(products, 0.0)
    source = np.where(rng.random(n) < 0.3, 10.0 ** rng.uniform(15.0, 22.0, n), 0.0)
    return loss, products, source


def _fd_jacobian(model, y, E_N):
    n = y.size
    J = np.zeros((n, n))
    fp = np.zeros(n)
    fm = np.zeros(n)
    dummy = np.zeros((n, n))
    for s in range(n):
        d = 1e-6 * y[s]
        yp = y.copy()
        ym = y.copy()
        yp[s] += d
        ym[s] -= d
        kinetics.evaluate(E_N, yp, model, fp, dummy, kinetics.RHS)
        kinetics.evaluate(E_N, ym, model, fm, dummy, kinetics.RHS)
        J[:, s] = (fp - fm) / (yp[s] - ym[s])
    return J


def _gross(mech, model, y, linear):
    """Gross rate through each species, m^-3 s^-1: every reaction counts in which the
    species appears on either side (also as a catalyst), plus the linear terms."""
    r = np.abs(model[5][3])
    g = np.zeros(y.size)
    for j in range(r.size):
        for s in mech.reactant_index[j]:
            if s >= 0:
                g[s] += r[j]
        for s, c in zip(mech.product_index[j], mech.product_coeff[j]):
            if s >= 0:
                g[s] += c * r[j]
    loss, products, source = linear
    return g + loss * y + products.T @ (loss * y) + source


def _cloud_violations(mech, table, n_states, seed, drop_dk=False):
    rng = np.random.default_rng(seed)
    n = len(mech.species)
    worst = 0.0
    for _ in range(n_states):
        linear = _random_linear(rng, n)
        model = build_model(mech, rng.uniform(250.0, 1200.0), electron_table=table,
                            loss_frequency_s=linear[0], loss_products=linear[1],
                            source_m3_s=linear[2])
        y = _random_state(rng, mech)
        E_N = rng.choice([0.0, rng.uniform(1.0, 300.0)])
        f = np.zeros(n)
        J = np.zeros((n, n))
        kinetics.evaluate(E_N, y, model, f, J, kinetics.JACOBIAN)
        if drop_dk:
            # the same Jacobian without the falloff term dk/dn_M (test of the test)
            mech_arrays, _, lin, _, _, work = model
            J = np.zeros((n, n))
            kinetics.add_jacobian(y, mech_arrays, lin, work[0], np.zeros_like(work[1]),
                                  work[2], J)
        g = _gross(mech, model, y, linear)
        J_fd = _fd_jacobian(model, y, E_N)
        # round-off of f is ~1e-15 g_i, so the central difference is good to
        # ~1e-9 g_i / y_s; the bound leaves a factor 100, plus 1e-6 relative
        bound = 1e-6 * np.abs(J) + 1e-7 * g[:, None] / y[None, :]
        worst = max(worst, float(np.max(np.abs(J - J_fd) / bound)))
    return worst


def test_every_law_jacobian_over_a_cloud():
    mech = _every_law()
    table = systems.toy_table(columns=mech.electron_processes)
    assert _cloud_violations(mech, table, 150, seed=1) < 1.0     # measured 0.003


def test_toy_plasma_jacobian_over_a_cloud():
    mech = systems.toy_plasma()
    assert _cloud_violations(mech, systems.toy_table(), 150, seed=2) < 1.0   # measured 0.003


def test_the_comparison_sees_a_missing_falloff_derivative():
    # without dk/dn_M the falloff rows disagree with the finite differences
    mech = _every_law()
    table = systems.toy_table(columns=mech.electron_processes)
    assert _cloud_violations(mech, table, 30, seed=3, drop_dk=True) > 10.0   # measured 1e7


def test_lindemann_and_third_body_efficiencies_by_hand():
    # hand-checkable: A + B (+M) -> C Lindemann, and A + A + M -> D with efficiencies
    mech = systems.build(
        ("A", "B", "C", "D"),
        [("A + B (+M) => C (+M)", ("lindemann", 1e-42, 0.0, 0.0, 1e-17, 0.0, 0.0), {"C": 3.0}),
         ("A + A + M => D", ("k", 1e-44), {"B": 0.5, "D": 0.0})])
    model = build_model(mech, 300.0)
    y = np.array([1e22, 2e22, 3e22, 4e22])
    f = np.zeros(4)
    J = np.zeros((4, 4))
    kinetics.evaluate(0.0, y, model, f, J, kinetics.JACOBIAN)
    A, B, C, D = y
    M1 = A + B + 3.0 * C + D                  # efficiencies of reaction 1
    M2 = A + 0.5 * B + C                      # efficiencies of reaction 2
    k0, kinf = 1e-42, 1e-17
    k1 = kinf * (k0 * M1 / kinf) / (1.0 + k0 * M1 / kinf)     # Lindemann (1922)
    dk1 = k0 / (1.0 + k0 * M1 / kinf) ** 2
    r1 = k1 * A * B
    r2 = 1e-44 * M2 * A * A
    assert f[2] == pytest.approx(r1, rel=1e-12)
    assert f[3] == pytest.approx(r2, rel=1e-12)
    # d f_C / d C = dk1/dM * 3 * A * B (C is a third body with efficiency 3)
    assert J[2, 2] == pytest.approx(3.0 * dk1 * A * B, rel=1e-10)
    # d f_D / d A = k2 (2 M2 A + A^2 * 1), d f_D / d B = k2 A^2 * 0.5, d f_D / d D = 0
    assert J[3, 0] == pytest.approx(1e-44 * (2.0 * M2 * A + A * A), rel=1e-12)
    assert J[3, 1] == pytest.approx(1e-44 * 0.5 * A * A, rel=1e-12)
    assert J[3, 3] == 0.0
