"""Shipped argon cross sections against measured swarm behaviour.

Townsend ionization: the empirical fit alpha/p = A exp(-B p/E) with A = 12 cm^-1 Torr^-1,
B = 180 V cm^-1 Torr^-1, valid for E/p = 100-600 V cm^-1 Torr^-1 (Raizer 1991, Gas
Discharge Physics, Springer, Table 4.1; values from memory). p is referred to 0 C, so
N = 133.322 Pa / (k 273.15 K) per Torr. The fit reproduces measurements to roughly 20 % in
its range; with the recalled cross sections (provenance: recalled, 10-30 %) the tolerance
is 35 %.
"""

import math

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section

N_PER_TORR = 133.322 / (1.380649e-23 * 273.15)


@pytest.fixture(scope="module")
def table():
    mix = build_mixture([(load_cross_sections(shipped_cross_section("ar")), 1.0)])
    # 283, 424 and 495 Td: the part of the fit's range inside the 1-500 Td of DBDs (above,
    # the set overestimates alpha: +23 % at 849 Td, +48 % at 1414 Td, see mechanisms/README.md)
    e_over_p = np.array([100.0, 150.0, 175.0])                    # V cm^-1 Torr^-1
    en_Td = e_over_p * 1e2 / N_PER_TORR / 1e-21
    return e_over_p, solve_swarm(mix, en_Td, 300.0)


def test_townsend_ionization_against_the_empirical_fit(table):
    e_over_p, t = table
    fit = 12.0 * np.exp(-180.0 / e_over_p) * 1e2 / N_PER_TORR    # m2
    np.testing.assert_allclose(t.townsend_ionization_m2, fit, rtol=0.35, atol=0)


def test_no_attachment_and_a_few_eV_mean_energy(table):
    # argon does not attach electrons (common practice, no source); mean energies in the
    # glow-discharge range of E/N are several eV (common practice, no source)
    _, t = table
    assert np.all(t.townsend_attachment_m2 == 0.0)
    assert np.all((t.mean_energy_eV > 5.0) & (t.mean_energy_eV < 20.0))
    assert math.isclose(float(t.power_balance_residual.max()), 0.0, abs_tol=1e-6)
