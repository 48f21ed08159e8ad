"""Method coefficients, conservation, restarts, non-negativity, failures, composition-
dependent electron tables and a comparison with scipy's Radau on a pulsed toy plasma.

The plasma here is the ion/electron toy system of ``systems.py`` (species, rate numbers
and electron table invented for the tests, not physical data); a real plasma mechanism
comes later.
"""

from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import systems
from plasmazero.numerics import ElectronTable, FieldProfile, IntegrationError, integrate
from plasmazero.numerics import results, rosenbrock

PULSE = FieldProfile([0.0, 2e-9, 12e-9, 14e-9], [0.0, 150.0, 150.0, 0.0])   # Td, invented


# ------------------------------------------------------------------ the method itself

def _conditions(b, alpha, beta, g, theta=1.0):
    """Order conditions of Rosenbrock methods up to order 4 (Hairer & Wanner 1996,
    Solving ODEs II, section IV.7, Table 7.1), written for the continuous weights b(theta)
    (theta = 1: the step). beta excludes the diagonal gamma."""
    a = alpha.sum(axis=1)
    bb = beta.sum(axis=1)
    t = theta
    return np.array([
        b.sum() - t,
        b @ bb - (t ** 2 / 2 - g * t),
        b @ a ** 2 - t ** 3 / 3,
        b @ beta @ bb - (t ** 3 / 6 - g * t ** 2 + g ** 2 * t),
        b @ a ** 3 - 1 / 4,
        b @ (a * (alpha @ bb)) - (1 / 8 - g / 3),
        b @ beta @ a ** 2 - (1 / 12 - g / 3),
        b @ beta @ beta @ bb - (1 / 24 - g / 2 + 1.5 * g ** 2 - g ** 3),
    ])


def test_rodas4_order_conditions_hold_numerically():
    sf = rosenbrock.standard_form()
    g = rosenbrock.GAMMA
    alpha, gam = sf["alpha"], sf["gamma"]
    beta = alpha + gam - np.diag(np.diag(gam))
    assert np.allclose(np.diag(gam), g)
    assert np.max(np.abs(_conditions(sf["b"], alpha, beta, g))) < 1e-13     # order 4
    embedded = _conditions(sf["b_hat"], alpha, beta, g)
    assert np.max(np.abs(embedded[:4])) < 1e-13                             # order 3
    assert np.max(np.abs(embedded[4:])) > 1e-3      # and not 4: the estimate is meaningful
    # the stage times and f_t weights are those of the transformed coefficients
    assert np.allclose(alpha.sum(axis=1), rosenbrock.ALPHA, atol=1e-14)
    assert np.allclose(gam.sum(axis=1), rosenbrock.D, atol=1e-14)
    # stiffly accurate: b equals the last row of (alpha + gamma), so R(infinity) = 0
    assert np.allclose(sf["b"], (alpha + gam)[-1], atol=1e-13)
    ones = np.ones(6)
    for z in (-1e3, -1e6, -1e9):
        R = 1.0 + z * sf["b"] @ np.linalg.solve(np.eye(6) - z * (alpha + gam), ones)
        assert abs(R) < 10.0 / abs(z)
    # dense output: order-3 continuous conditions for every theta, exact at the ends
    for th in np.linspace(0.0, 1.0, 11):
        c = _conditions(sf["dense"](th), alpha, beta, g, th)[:4]
        assert np.max(np.abs(c)) < 1e-13, (th, c)
    assert np.allclose(sf["dense"](1.0), sf["b"], atol=1e-13)


# ------------------------------------------------------------- the pulsed toy plasma

def _pulse(**kw):
    args = dict(T_gas_K=300.0, field=PULSE, electron_table=systems.toy_table(), rtol=1e-6,
                atol_m3=1e6)
    args.update(kw)
    return integrate(systems.toy_plasma(), systems.toy_initial(), (0.0, 1e-3), **args)


def test_pulse_and_afterglow_against_scipy_radau():
    t_eval = np.r_[0.0, np.linspace(1e-9, 14e-9, 14), np.geomspace(2e-8, 1e-3, 30)]
    res = _pulse(t_eval_s=t_eval)
    ref = systems.radau_reference(systems.toy_plasma(), systems.toy_initial(), t_eval,
                                  T_gas_K=300.0, field=PULSE, table=systems.toy_table(),
                                  rtol=1e-10, atol=1e3)
    err = np.abs(res.densities_m3 - ref) / (1e6 + 1e-6 * np.abs(ref))
    # global error in units of the requested local tolerance: measured 2.4
    assert err.max() < 10.0, err.max()
    assert res.densities_m3[:, 0].max() > 1e17          # the pulse did ionize
    assert res.counters.n_steps < 1000                  # measured 723


def test_elements_and_charge_are_conserved():
    mech = systems.toy_plasma()
    res = _pulse()
    totals = mech.element_counts @ res.densities_m3.T          # (n_elements, n_t)
    drift = np.abs(totals - totals[:, :1]).max(axis=1)
    charged = np.abs(mech.charge) @ res.densities_m3.T
    scale = np.where(np.array(mech.elements) == "E", charged.max(), np.abs(totals[:, 0]))
    # measured: 3e-15 (X, Y) and 2.5e-15 of the peak charged density (charge)
    assert np.all(drift / scale < 1e-10), drift / scale
    assert np.all(res.clipped_m3 == 0.0)
    assert res.quasi_neutrality < 1e-9                          # measured 4e-14


def test_conservation_with_the_compiled_example_mechanism():
    # the shipped example of the mechanism layer (invented rate numbers), compiled from
    # its file: reverse reactions, falloff, expressions in Te, a negative ion
    from plasmazero.physics.compiled import load_compiled_mechanism

    path = Path(__file__).resolve().parents[2] / "mechanisms" / "examples" / "every_law.yaml"
    mech = load_compiled_mechanism(path)
    y0 = np.zeros(mech.n_species)
    y0[mech.species.index("Ar")] = 0.9 * 2.4e25
    y0[mech.species.index("O2")] = 0.1 * 2.4e25
    y0[mech.species.index("e")] = y0[mech.species.index("Ar+")] = 1e14
    res = integrate(mech, y0, (0.0, 1e-3), T_gas_K=300.0, field=PULSE,
                    electron_table=systems.toy_table(columns=mech.electron_processes),
                    atol_m3=1e6, t_eval_s=np.geomspace(1e-10, 1e-3, 30))
    assert res.densities_m3[:, mech.species.index("O3")].max() > 1e17   # chemistry ran
    totals = mech.element_counts @ res.densities_m3.T
    drift = np.abs(totals - (mech.element_counts @ y0)[:, None]).max(axis=1)
    charged = np.abs(mech.charge) @ res.densities_m3.T
    scale = np.where(np.array(mech.elements) == "E", charged.max(), mech.element_counts @ y0)
    assert np.all(drift / scale < 1e-10), drift / scale      # measured 5e-15
    assert res.quasi_neutrality < 1e-9                         # measured 5e-14


def test_quasi_neutrality_reports_an_unbalanced_loss():
    loss = np.zeros(len(systems.TOY_SPECIES))
    loss[0] = 1e7          # electrons lost to a wall, ions kept: charge builds up
    res = _pulse(loss_frequency_s=loss)
    assert res.quasi_neutrality > 0.5                           # measured 1.0


def test_integrated_rates_close_the_balances_with_linear_terms():
    mech = systems.toy_plasma()
    n = len(mech.species)
    loss = np.full(n, 2e3)
    products = np.zeros((n, n))
    products[mech.species.index("Y"), mech.species.index("Y2")] = 0.5   # Y -> 0.5 Y2 at walls
    source = np.zeros(n)
    source[mech.species.index("Y2")] = 1e21
    res = _pulse(loss_frequency_s=loss, loss_products=products, source_m3_s=source,
                 t_eval_s=np.geomspace(1e-10, 1e-3, 40))
    nu = mech.stoichiometry
    change = res.densities_m3 - res.densities_m3[0]
    explained = (res.integrated_rates_m3 - res.integrated_rates_m3[0]) @ nu.T + \
        (res.integrated_linear_m3 - res.integrated_linear_m3[0])
    # within the accuracy of the solution (gross flux through each species times rtol;
    # measured at most 1.2e-7 of the gross flux)
    R = res.integrated_rates_m3[-1]
    gross = np.abs(nu) @ R + np.abs(res.integrated_linear_m3[-1]) + 1e6
    assert np.all(np.abs(change - explained) <= 1e-6 * gross), np.abs(change - explained) / gross


# ---------------------------------------------------------------------- restarts

def test_a_step_field_is_followed_exactly():
    field = FieldProfile([5e-9, 5e-9, 15e-9, 15e-9], [0.0, 150.0, 150.0, 0.0])
    res = _pulse(field=field, t_eval_s=None)
    t = res.times_s
    assert 5e-9 in t and 15e-9 in t             # steps land on the jumps
    # no ionization before the jump (k = 0 at 0 Td), and the field seen at each output
    before = t <= 5e-9
    assert np.all(res.integrated_rates_m3[before, 1] == 0.0)
    assert np.all(res.E_N_Td[before] == 0.0)
    assert np.all(res.E_N_Td[(t > 5e-9) & (t <= 15e-9)] == 150.0)
    assert np.all(res.E_N_Td[t > 15e-9] == 0.0)
    # same as integrating the three pieces separately (restart = fresh integration)
    y = systems.toy_initial()
    for (a, b, E) in ((0.0, 5e-9, 0.0), (5e-9, 15e-9, 150.0), (15e-9, 1e-3, 0.0)):
        y = integrate(systems.toy_plasma(), y, (a, b), T_gas_K=300.0, field=E,
                      electron_table=systems.toy_table(), rtol=1e-6, atol_m3=1e6,
                      t_eval_s=[b]).densities_m3[-1]
    err = np.abs(res.densities_m3[-1] - y) / (1e6 + 1e-6 * np.abs(y))
    assert err.max() < 1.0, err.max()         # measured 0.0 (identical arithmetic)


def test_steps_land_on_the_table_nodes_of_a_field_ramp():
    """The coefficients are linear between the table's nodes, so their derivative jumps
    there; in a ramp the integrator lands on each node crossing (field.node_crossings)
    and keeps its step size across (Hairer, Norsett & Wanner 1993, section II.6: stop at
    a known discontinuity). Accuracy of the whole pulse: the Radau test above."""
    from plasmazero.numerics.field import node_crossings, segments

    grid = systems.toy_table().E_N_Td
    stops, E0, slope = segments(PULSE, 0.0, 1e-3, [])
    nodes = node_crossings(stops, E0, slope, grid)
    # the toy grid has 40 nodes from 1 to 1000 Td; 0 -> 150 Td crosses those below 150,
    # twice (up and down), 150 itself is not a node
    inside = grid[(grid > 0.0) & (grid < 150.0)]
    assert nodes.size == 2 * inside.size
    np.testing.assert_allclose(nodes[:inside.size], inside / 150.0 * 2e-9, rtol=1e-12)
    np.testing.assert_allclose(nodes[inside.size:], 12e-9 + (150.0 - inside[::-1]) / 150.0 * 2e-9,
                               rtol=1e-12)
    res = _pulse(t_eval_s=None)
    t = res.times_s
    for tn in nodes:
        assert np.min(np.abs(t - tn)) <= 1e-12 * tn
    # the field seen at the landing points is the node value
    at = np.array([np.argmin(np.abs(t - tn)) for tn in nodes[:inside.size]])
    np.testing.assert_allclose(res.E_N_Td[at], inside, rtol=1e-9)


def test_user_breakpoints_are_restart_times():
    bps = [1e-7, 3.3e-6]
    res = _pulse(t_eval_s=None, breakpoints_s=bps)
    assert all(b in res.times_s for b in bps)


# ---------------------------------------------------------------- non-negativity

def test_significant_negatives_are_rejected_and_small_ones_clipped():
    # 2A -> B with a far too large first step: the attempt overshoots to A < 0
    k, A0 = 1e-20, 1e20
    mech = systems.build(("A", "B"), [("A + A => B", ("k", k))],
                         composition={"A": {"Z": 1}, "B": {"Z": 2}})
    t = np.geomspace(1e-3, 100.0, 20)
    res = integrate(mech, [A0, 0.0], (0.0, 100.0), T_gas_K=300.0, first_step_s=50.0,
                    rtol=1e-6, atol_m3=1e8, t_eval_s=t)
    assert res.counters.n_rejected_negative >= 1
    assert np.all(res.densities_m3 >= 0.0)
    A = A0 / (1.0 + 2.0 * k * A0 * t)                      # closed form
    assert np.max(np.abs(res.densities_m3[:, 0] - A) / (1e8 + 1e-6 * A)) < 3.0
    # without error control (fixed steps) the overshoot is accepted and clipped; the
    # clipped amount is booked, so that element totals change by exactly that amount
    fixed = integrate(mech, [A0, 0.0], (0.0, 10.0), T_gas_K=300.0, fixed_step_s=10.0)
    assert fixed.clipped_m3[0] > 0.0 and np.all(fixed.densities_m3 >= 0.0)
    counts = mech.element_counts
    gained = counts @ (fixed.densities_m3[-1] - fixed.densities_m3[0])
    np.testing.assert_allclose(gained, counts @ fixed.clipped_m3, rtol=1e-12)


# ---------------------------------------------------------------------- failures

def test_failure_report_when_max_steps_is_too_small():
    with pytest.raises(IntegrationError) as info:
        _pulse(max_steps=20)
    e = info.value
    assert e.status == results.MAX_STEPS
    assert 0.0 < e.time_s < 1e-3 and e.step_s > 0.0
    assert e.species in systems.TOY_SPECIES
    msg = str(e)
    assert "maximum number of steps" in msg and f"t = {e.time_s:.6g} s" in msg
    assert f"step size {e.step_s:.3g} s" in msg and e.species in msg
    # the partial result stops at the failure time
    assert e.result.times_s[-1] <= e.time_s
    res = _pulse(max_steps=20, raise_on_failure=False)
    assert not res.success and res.status == results.MAX_STEPS


def test_failure_report_on_a_blow_up():
    # dA/dt = +k A^2 blows up at t = 1 / (k A0) = 1 s: no integrator can pass it
    mech = systems.build(("A",), [("A + A => A + A + A", ("k", 1e-20))])
    with pytest.raises(IntegrationError) as info:
        integrate(mech, [1e20], (0.0, 2.0), T_gas_K=300.0)
    e = info.value
    assert e.status in (results.STEP_TOO_SMALL, results.NON_FINITE_STATE)
    assert e.time_s == pytest.approx(1.0, rel=1e-3)
    assert e.species == "A"


def test_bad_arguments_are_refused():
    mech = systems.toy_plasma()
    y0 = systems.toy_initial()
    with pytest.raises(ValueError, match="electron-impact"):
        integrate(mech, y0, (0.0, 1e-6), T_gas_K=300.0)
    with pytest.raises(ValueError, match="processes"):
        integrate(mech, y0, (0.0, 1e-6), T_gas_K=300.0,
                  electron_table=systems.toy_table(columns=("a", "b")))
    with pytest.raises(ValueError, match="y0_m3"):
        integrate(mech, -y0, (0.0, 1e-6), T_gas_K=300.0, electron_table=systems.toy_table())


# ------------------------------------------------- composition-dependent electron tables

def _dissociation_system():
    mech = systems.build(("e", "Y2", "Y"), [("e + Y2 => e + Y + Y", ("electron", 0, 1.0))],
                         charge={"e": -1}, composition={"e": {}, "Y2": {"Y": 2}, "Y": {"Y": 1}},
                         electron_processes=("diss",))

    def table_for(x):
        # INVENTED: the dissociation coefficient grows as the Y2 fraction falls
        k = 1e-15 * (1.0 + 10.0 * (0.2 - x["Y2"]))
        return ElectronTable(E_N_Td=[0.0, 100.0], k_m3_s=[[k], [k]],
                             mean_energy_eV=[0.04, 3.0], drift_velocity_m_s=[0.0, 1e5],
                             processes=("diss",), mole_fractions={"Y2": x["Y2"]})

    return mech, table_for


@pytest.mark.parametrize("method", ["rodas4", "bdf"])
def test_electron_table_follows_the_composition(method):
    mech, table_for = _dissociation_system()
    N, n_e, T = 2.4e25, 1e19, 2e-4
    y0 = np.array([n_e, 0.2 * N, 0.8 * N])
    kw = dict(T_gas_K=300.0, field=100.0, rtol=1e-8, atol_m3=1e6, t_eval_s=[T], method=method)
    calls = []

    def rebuild(x):
        calls.append(dict(x))
        return table_for(x)

    fixed = integrate(mech, y0, (0.0, T), electron_table=table_for({"Y2": 0.2}), **kw)
    coarse = integrate(mech, y0, (0.0, T), rebuild_table=rebuild, **kw)
    fine = integrate(mech, y0, (0.0, T), rebuild_table=table_for, partner_tolerance=0.002, **kw)
    # the first call builds the initial table; later ones come after a drift > 0.02
    x = [c["Y2"] for c in calls]
    assert x[0] == pytest.approx(0.2) and len(x) >= 6        # measured 10 calls
    assert np.all(-np.diff(x) > 0.02)
    assert coarse.counters.n_table_rebuilds == len(calls)
    assert len(coarse.table_rebuild_times_s) == len(calls) - 1
    assert fine.counters.n_table_rebuilds > 3 * len(calls)
    # reference with the coefficient following the composition continuously
    # (scipy LSODA, rtol 1e-11): Y2' = -k(x) n_e Y2, Y' = 2 k(x) n_e Y2, x = Y2 / (Y2 + Y)

    def f(t, u):
        k = 1e-15 * (1.0 + 10.0 * (0.2 - u[0] / (u[0] + u[1])))
        return [-k * n_e * u[0], 2.0 * k * n_e * u[0]]

    ref = solve_ivp(f, (0.0, T), y0[1:], method="LSODA", rtol=1e-11, atol=1e6).y[0, -1]
    errs = [abs(r.densities_m3[-1, 1] - ref) / ref for r in (fixed, coarse, fine)]
    # measured: 19.5 (table never rebuilt), 0.31 (0.02), 0.052 (0.002)
    assert errs[2] < errs[1] < errs[0]
    assert errs[1] < 0.5 and errs[2] < 0.1


# ------------------------------------------------------------ electron table rules

def test_electron_table_interpolation_rules():
    # invented table: zero-field row, then 10 and 1000 Td
    table = ElectronTable(E_N_Td=[0.0, 10.0, 1000.0], k_m3_s=[[1.0], [3.0], [7.0]],
                          mean_energy_eV=[0.04, 1.0, 9.0], drift_velocity_m_s=[0.0, 1e4, 1e5],
                          processes=("p",))
    assert table.at(0.0)[0][0] == 1.0 and table.at(0.0)[1] == 0.04     # zero-field row
    assert table.at(5.0)[0][0] == pytest.approx(2.0)    # linear in E/N from the 0 row
    assert table.at(100.0)[0][0] == pytest.approx(5.0)  # linear in ln E/N: halfway
    assert table.at(100.0)[1] == pytest.approx(5.0)
    assert table.at(5000.0)[0][0] == 7.0                # flat above the grid
    no_zero = ElectronTable(E_N_Td=[10.0, 1000.0], k_m3_s=[[3.0], [7.0]],
                            mean_energy_eV=[1.0, 9.0], drift_velocity_m_s=[1e4, 1e5])
    assert no_zero.at(0.0)[0][0] == 3.0                 # flat below the grid
    with pytest.raises(ValueError, match="increasing"):
        ElectronTable(E_N_Td=[10.0, 5.0], k_m3_s=[[1.0], [2.0]], mean_energy_eV=[1.0, 2.0],
                      drift_velocity_m_s=[0.0, 0.0])
    with pytest.raises(ValueError, match="mean_energy_eV"):
        ElectronTable(E_N_Td=[0.0, 5.0], k_m3_s=[[1.0], [2.0]], mean_energy_eV=[0.0, 2.0],
                      drift_velocity_m_s=[0.0, 0.0])
