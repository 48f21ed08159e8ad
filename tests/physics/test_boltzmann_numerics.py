"""Numerical properties of the two-term Boltzmann solver: conservation, convergence, errors.

The model gases are invented for these tests (analytic shapes with every process kind);
they are not physical data and carry no provenance beyond that.
"""

import numpy as np
import pytest

from plasmazero.boltzmann import (
    DEFAULT_CELLS,
    ConvergenceError,
    build_mixture,
    build_operator,
    level_populations,
    solve_swarm,
    uniform_grid,
)
from plasmazero.data.cross_sections import make_cross_section_set
from plasmazero.data.errors import InputError
from plasmazero.physics.boltzmann import operator as op_module


_gas = make_cross_section_set


def _model_parts():
    """Two invented gases with every process kind (model data for numerics only)."""
    a = _gas("MA", 20.0, [
        ("ma_m", "momentum_transfer", [0, 1, 10, 100, 1e4], [5e-20, 8e-20, 1.5e-19, 5e-20, 5e-21], 0.0, None),
        ("ma_v", "excitation", [0.3, 0.5, 2.0, 10.0], [0, 3e-20, 1e-20, 0.0], 0.3, 2.0),
        ("ma_e", "excitation", [8.0, 12.0, 30.0, 1e4], [0, 5e-21, 1e-20, 1e-21], 8.0, None),
        ("ma_i", "ionization", [14.0, 20.0, 80.0, 1e4], [0, 5e-21, 3e-20, 3e-21], 14.0, None),
        ("ma_a", "attachment", [0.0, 2.0, 4.0, 6.0, 8.0], [0, 0, 5e-22, 0, 0], 0.0, None),
    ])
    b = _gas("MB", 40.0, [
        ("mb_m", "total_momentum_transfer", [0, 10, 1e4], [2e-20, 1e-19, 1e-20], 0.0, None),
        ("mb_e", "excitation", [11.0, 15.0, 1e4], [0, 5e-21, 1e-21], 11.0, None),
        ("mb_i", "ionization", [16.0, 50.0, 1e4], [0, 2e-20, 2e-21], 16.0, None),
    ])
    return [(a, 0.7), (b, 0.3)]


EN_TD = np.geomspace(1.0, 300.0, 9)


@pytest.mark.parametrize("growth", ["temporal", "spatial", "none"])
@pytest.mark.parametrize("sharing", ["equal", "one_takes_all"])
def test_power_balance_closes(growth, sharing):
    # energy conservation of the discrete scheme: field power = elastic + inelastic -
    # superelastic + growth, to rounding (HP2005 power balance; common practice, no source)
    mix = build_mixture(_model_parts())
    tab = solve_swarm(mix, EN_TD, 300.0, growth=growth, sharing=sharing,
                      excited_fractions={"ma_v": 0.01})
    assert np.all(tab.power_balance_residual < 1e-6)
    total = sum(tab.power_fractions.values())
    assert np.allclose(total, 1.0, atol=1e-6)
    assert np.all(tab.power_fractions["ma_v:reverse"] < 0.0)
    assert np.all(tab.power_fractions["ma_e"][EN_TD > 20.0] > 0.0)
    if growth == "none":
        assert np.all(tab.power_fractions["growth"] == 0.0)
        assert np.all(tab.power_fractions["ma_a"] == 0.0)


def test_normalisation_and_tail():
    mix = build_mixture(_model_parts())
    tab = solve_swarm(mix, EN_TD, 300.0)
    du = tab.energy_eV[:, 1] - tab.energy_eV[:, 0]
    norm = np.sum(np.sqrt(tab.energy_eV) * tab.eedf_eV_m3_2, axis=1) * du
    assert np.allclose(norm, 1.0, rtol=1e-12, atol=0)  # normalisation of the EEDF (common practice, no source)
    assert np.all(tab.tail_decades >= 10.0)  # the automatic grid's criterion (solver.py docstring)
    assert np.all(tab.eedf_eV_m3_2 >= 0.0)
    assert tab.eedf_eV_m3_2.shape == (EN_TD.size, DEFAULT_CELLS)
    # a fixed upper bound is kept
    fixed = solve_swarm(mix, [30.0], 300.0, max_energy_eV=50.0)
    assert float(fixed.max_energy_eV[0]) == 50.0


def test_halving_the_cell_size_changes_the_mean_energy_by_less_than_0_1_percent():
    # the convergence criterion of the default grid (module docstring of solver.py)
    mix = build_mixture(_model_parts())
    coarse = solve_swarm(mix, EN_TD, 300.0)
    changes = []
    for i, en in enumerate(EN_TD):
        fine = solve_swarm(mix, [en], 300.0, n_cells=2 * DEFAULT_CELLS,
                           max_energy_eV=float(coarse.max_energy_eV[i]))
        changes.append(abs(float(fine.mean_energy_eV[0]) / float(coarse.mean_energy_eV[i]) - 1.0))
    assert max(changes) < 1e-3
    # and the change falls with the cell size (order ~1.5 here, limited by the midpoint
    # measure sqrt(u_i) du of the lowest cells; solver.py module docstring)
    changes_half = []
    for i, en in enumerate(EN_TD):
        half = solve_swarm(mix, [en], 300.0, n_cells=DEFAULT_CELLS // 2,
                           max_energy_eV=float(coarse.max_energy_eV[i]))
        changes_half.append(abs(float(coarse.mean_energy_eV[i]) / float(half.mean_energy_eV[0]) - 1.0))
    assert max(changes_half) > 2.0 * max(changes)


def test_particle_and_energy_conservation_of_every_transfer():
    mix = build_mixture(_model_parts())
    forward, upper = level_populations(mix, 300.0, {"ma_v": 0.01})
    for growth, sharing in [("temporal", "equal"), ("temporal", "one_takes_all"), ("none", "equal")]:
        op = build_operator(mix, uniform_grid(60.0, 300), forward, upper, growth, sharing)
        u = op.grid.centres_eV
        for t, cid in enumerate(op.channel_ids):
            k = op.channel_process[t]
            kind = mix.kinds[k]
            pop = op.channel_population[t]
            loss = pop * op.rate_rows[t]
            # transfers are stored only for channels that move electrons (not attachment)
            idx = [i for i, c in enumerate(op.channel_ids) if mix.kinds[op.channel_process[i]] != 4]
            if kind == 4:
                continue
            row = idx.index(t)
            glo, ghi, lo = op.transfer_glo[row], op.transfer_ghi[row], op.transfer_lo[row]
            arrived = glo + ghi
            mult = 2.0 if (kind == 3 and growth != "none" and sharing == "equal") else 1.0
            scale = float(np.abs(loss).max()) * max(1.0, float(u[-1]))
            assert np.allclose(arrived, mult * loss, rtol=1e-12, atol=1e-14 * scale)  # number of electrons
            energy_after = glo * u[lo] + ghi * u[np.minimum(lo + 1, u.size - 1)]
            if kind == 3 and growth != "none" and sharing == "one_takes_all":
                energy_after = energy_after + loss * u[0]  # the secondary, counted in cell 0
            shift = -mix.thresholds_eV[k] if not cid.endswith(":reverse") else mix.thresholds_eV[k]
            ok = loss > 0
            assert np.allclose(energy_after[ok], (loss * (u + shift))[ok], rtol=1e-12, atol=1e-14 * scale)  # energy


def test_growth_models_agree_without_ionization_or_attachment():
    # with negligible ionization and attachment the three growth models are the same
    # equation (HP2005 section 2.2; common practice, no source)
    mix = build_mixture(_model_parts())
    t, s, n = (solve_swarm(mix, [3.0], 300.0, growth=g, max_energy_eV=8.0)
               for g in ("temporal", "spatial", "none"))
    for field in ("mean_energy_eV", "drift_velocity_m_s", "reduced_diffusion_1_ms"):
        assert np.allclose(getattr(t, field), getattr(s, field), rtol=1e-6, atol=0)
        assert np.allclose(getattr(t, field), getattr(n, field), rtol=1e-6, atol=0)


@pytest.mark.parametrize("growth", ["temporal", "spatial"])
def test_townsend_coefficients_are_consistent_with_the_rates(growth):
    mix = build_mixture(_model_parts())
    tab = solve_swarm(mix, [100.0, 300.0], 300.0, growth=growth)
    # alpha/N = sum x k_ion / W, eta/N = sum x k_att / W (definitions, HP2005 transport coefficients)
    rates = tab.rate_coefficients_m3_s
    ion = 0.7 * rates["ma_i"] + 0.3 * rates["mb_i"]
    att = 0.7 * rates["ma_a"]
    assert np.allclose(tab.townsend_ionization_m2 * tab.drift_velocity_m_s, ion, rtol=1e-10, atol=0)
    assert np.allclose(tab.townsend_attachment_m2 * tab.drift_velocity_m_s, att, rtol=1e-10, atol=0)
    assert np.allclose(tab.net_production_m3_s, ion - att, rtol=1e-9, atol=0)
    # flux drift velocity = (E/N) mu N - (alpha/N) D N (HP2005 section 4)
    alpha = tab.townsend_ionization_m2 - tab.townsend_attachment_m2 if growth == "spatial" else 0.0
    W = tab.E_N_Td * 1e-21 * tab.reduced_mobility_1_mVs - alpha * tab.reduced_diffusion_1_ms
    assert np.allclose(W, tab.drift_velocity_m_s, rtol=1e-10, atol=0)


def test_marching_matches_the_eliminations():
    # the O(nnz) downward marching, the banded elimination and the sparse LU solve one system alike
    mix = build_mixture(_model_parts())
    forward, upper = level_populations(mix, 300.0, None)
    op = build_operator(mix, uniform_grid(40.0, 200), forward, upper)
    assert op.marchable
    n = op.grid.n_cells
    m = np.sqrt(op.grid.centres_eV) * op.grid.du_eV
    zeros = np.zeros(n + 1)
    out = np.empty((9, n + 1))
    args = (op.grid.faces_eV, op.sigma_m_f, op.sigma_eps_f, op.grid.du_eV, 100e-21, 0.0259, 2e-15, 0.0,
            zeros, zeros, op.loss, m, op.transfer_lo, op.transfer_glo, op.transfer_ghi)
    F_march = op_module.linear_solve(*args, 1, True, np.zeros((1, 1)), out)
    F_band = op_module.linear_solve(*args, 1, False, np.zeros((n, n)), out)
    F_dense = op_module.linear_solve(*args, n, False, np.zeros((n, n)), out)  # sparse-LU path
    A = np.zeros((n, n))
    rhs = op_module.assemble(A, out[5], out[6], np.zeros(n + 1), np.zeros(n + 1), op.loss + 2e-15 * m,
                             op.transfer_lo, op.transfer_glo, op.transfer_ghi, m)
    F_numpy = np.linalg.solve(A, rhs)
    F_numpy /= np.sum(m * F_numpy)
    for F in (F_band, F_dense, F_numpy):  # independent computations: elimination and SuperLU
        assert np.allclose(F_march, F, rtol=1e-9, atol=0)


def test_input_errors():
    a, b = _model_parts()
    with pytest.raises(InputError, match="MB"):
        build_mixture([(a[0], 1.2), (b[0], -0.2)])
    with pytest.raises(InputError, match="add up to"):
        build_mixture([(a[0], 0.5), (b[0], 0.4)])
    with pytest.raises(InputError, match="twice"):
        build_mixture([(a[0], 0.5), (a[0], 0.5)])
    mix = build_mixture(_model_parts())
    with pytest.raises(InputError, match="E/N"):
        solve_swarm(mix, [10.0, -1.0])
    with pytest.raises(InputError, match="E/N"):
        solve_swarm(mix, ["ten"])
    with pytest.raises(InputError, match="growth"):
        solve_swarm(mix, [10.0], growth="sideways")
    with pytest.raises(InputError, match="sharing"):
        solve_swarm(mix, [10.0], sharing="unfair")
    with pytest.raises(InputError, match="0 K"):
        solve_swarm(mix, [0.0], 0.0)
    with pytest.raises(InputError, match="ma_e"):
        solve_swarm(mix, [10.0], excited_fractions={"ma_e": 0.1})  # no weight ratio
    with pytest.raises(InputError, match="nothing"):
        solve_swarm(mix, [10.0], excited_fractions={"nothing": 0.1})


def test_duplicate_ids_are_qualified_with_the_gas():
    g1 = _gas("G1", 4.0, [("m", "momentum_transfer", [0, 1e4], [1e-19, 1e-19], 0.0, None),
                          ("x", "excitation", [1.0, 1e4], [1e-20, 1e-20], 1.0, None)])
    g2 = _gas("G2", 8.0, [("m", "momentum_transfer", [0, 1e4], [1e-19, 1e-19], 0.0, None),
                          ("y", "excitation", [2.0, 1e4], [1e-20, 1e-20], 2.0, None)])
    mix = build_mixture([(g1, 0.5), (g2, 0.5)])
    assert mix.process_ids == ("G1/m", "x", "G2/m", "y")
    tab = solve_swarm(mix, [10.0])
    assert set(tab.rate_coefficients_m3_s) == {"x", "y"}


def test_runaway_is_reported_with_the_field():
    # a cross section falling as 1/u lets electrons run away: no steady EEDF exists
    e = np.concatenate(([0.0], np.geomspace(1e-3, 1e6, 200)))
    s = 1e-19 / np.maximum(e, 1e-3)
    mix = build_mixture([(_gas("RW", 4.0, [("rw_m", "momentum_transfer", e, s, 0.0, None)]), 1.0)])
    with pytest.raises(ConvergenceError, match="E/N = 1000 Td"):
        solve_swarm(mix, [1000.0])
