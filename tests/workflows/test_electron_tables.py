"""Electron tables for the kinetics: detailed-balance reverse rates and thermal populations."""

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section, shipped_root
from plasmazero.workflows import dbd, electron_tables as et


@pytest.fixture(scope="module")
def co2_mixture():
    return build_mixture([(load_cross_sections(shipped_cross_section("co2")), 1.0)])


def test_reverse_rates_by_detailed_balance_match_the_solver(co2_mixture):
    # Klein & Rosseland (1921): the superelastic rate computed from the EEDF with the
    # reverse cross section equals the solver's own reverse rate for the same EEDF (the
    # population 1e-6 is too small to change the EEDF)
    t = solve_swarm(co2_mixture, np.array([0.0, 10.0, 100.0]), 300.0, excited_fractions={"co2_v001": 1e-6})
    k = et.reverse_rate_coefficients(co2_mixture.processes[co2_mixture.index("co2_v001")], t)
    np.testing.assert_allclose(k, t.rate_coefficients_m3_s["co2_v001:reverse"], rtol=1e-5, atol=0)


def test_thermal_populations_follow_the_solver_rule(co2_mixture):
    # the same Boltzmann rule as excited_fractions="boltzmann" of the solver: the two give
    # the same EEDF
    pops = et.thermal_populations(co2_mixture, 300.0)
    a = solve_swarm(co2_mixture, np.array([1.0]), 300.0, excited_fractions=pops)
    b = solve_swarm(co2_mixture, np.array([1.0]), 300.0, excited_fractions="boltzmann")
    assert a.mean_energy_eV[0] == pytest.approx(b.mean_energy_eV[0], rel=1e-10)
    # bending level of CO2 at 300 K: 2 exp(-0.083 eV / kT) / Z, about 7 % (common practice)
    assert 0.05 < pops["co2_v010"] < 0.09


def test_table_columns_follow_the_mechanism_and_rebuild_on_drift():
    loaded, mech = dbd.load_mechanism_pair(shipped_root() / "co2" / "mechanism.yaml")
    pmap = et.partner_map(loaded, mech)
    y = np.zeros(len(mech.species))
    y[mech.species.index("CO2")] = 2.4e25
    x, exc, uncovered = et.partner_fractions(pmap, y)
    assert x["CO2"] == pytest.approx(1.0) and uncovered == pytest.approx(0.0)
    table, _ = et.build_table(pmap, mech, x, exc, 300.0, extra_E_N_Td=(123.0,))
    assert table.processes == mech.electron_processes
    assert 123.0 in table.E_N_Td
    y[mech.species.index("CO")] = 0.1 * 2.4e25
    x2, _, _ = et.partner_fractions(pmap, y)
    assert et.partner_drift(x, x2) == pytest.approx(0.1 / 1.1 * 1.0, rel=1e-9)
