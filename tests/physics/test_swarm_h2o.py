"""Swarm parameters of the shipped H2O cross sections against measured swarm data.

The shipped set (``mechanisms/cross_sections/h2o.yaml``) rests on Born-dipole formulas,
recall and one adjustment (the electronic losses, scaled to the Townsend-form fit below, so
that check is one of the adjustment, not an independent test). References:

* zero-field mobility N mu of electrons in H2O at about 294 K: 1.5e23 /(V m s), derived by us
  (independent computation, Blanc's law 1/mu_mix = sum x_i/mu_i) from the zero-field
  mobilities measured by Milloy, Reid & Crompton 1975 (Aust. J. Phys. 28, 231; values taken
  from the stored abstract): 4.7e6 cm s-1 Td-1 in dry air and 8.4e5 cm s-1 Td-1 in air with
  1.5 % water vapour. Blanc's law is not exact for electrons (the collision frequencies of air
  and H2O depend differently on speed): tolerance 30 %.
* Townsend ionization coefficient: alpha/p = A exp(-B p/E), A = 13 /(cm Torr),
  B = 290 V/(cm Torr), valid for E/p = 150-1000 V/(cm Torr) (value from memory of Raizer,
  Gas Discharge Physics, Springer 1991, table 4.1, after von Engel), p at 0 degC.
* no measured drift velocity, characteristic energy or attachment coefficient of water vapour
  above thermal energies could be recalled reliably: those are not tested (README).

Superelastic collisions use ``excited_fractions="boltzmann"`` at 293 K, which this set needs
(the rotational excitation and its detailed-balance reverse, see h2o_rotation).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section
from reference.thermal_mobility import thermal_reduced_mobility

T_GAS_K = 293.0
K_B = 1.380649e-23              # J/K (CODATA 2018, exact)
E_CHARGE = 1.602176634e-19      # C (CODATA 2018, exact)
M_E = 9.1093837015e-31          # kg (CODATA 2018)
TORR_PA = 101325.0 / 760.0      # Pa (definition)
KT_STP_J = K_B * 273.15
#: E/p of the Townsend-form check, V/(cm Torr), inside the 150-1000 validity range (Raizer 1991)
FIT_E_P = np.array([150.0, 200.0, 300.0, 500.0])
LOW_E_N_TD = np.array([1.0, 10.0])


def _blanc_h2o_mobility():
    """N mu of pure H2O from Milloy, Reid & Crompton 1975 by Blanc's law, 1/(V m s)."""
    x_w = 0.015                           # water mole fraction of their humid air (taken)
    mu_air = 4.7e6 * 1e-2 / 1e-21         # 4.7e6 cm s-1 Td-1 (taken) -> N mu in 1/(V m s)
    mu_mix = 8.4e5 * 1e-2 / 1e-21         # 8.4e5 cm s-1 Td-1 (taken)
    return x_w / (1.0 / mu_mix - (1.0 - x_w) / mu_air)


@pytest.fixture(scope="module")
def h2o():
    return load_cross_sections(shipped_cross_section("h2o"))


@pytest.fixture(scope="module")
def mixture(h2o):
    return build_mixture([(h2o, 1.0)])


@pytest.fixture(scope="module")
def low(mixture):
    return solve_swarm(mixture, LOW_E_N_TD, T_gas_K=T_GAS_K, excited_fractions="boltzmann")


def test_file_is_complete(h2o):
    """Sources, provenance, products, the full channel list of the brief, thresholds."""
    assert h2o.gas == "H2O" and abs(h2o.mass_amu - 18.01528) < 1e-9
    for p in h2o.processes:
        assert p.source and p.provenance in ("taken", "recalled", "fitted", "adjusted"), p.id
        assert p.energy_eV[-1] >= 1000.0, p.id
        if p.kind in ("ionization", "attachment") or "dissociation" in p.id:
            assert p.products, p.id
    products = {p.products for p in h2o.processes}
    for want in ("H + OH", "H- + OH", "O- + H2", "OH- + H", "H2O+ + e", "OH+ + H + e"):
        assert want in products, want
    # level energies (common practice): bend 0.198 eV, stretch 0.453 eV, IP 12.62 eV
    assert h2o.process("h2o_v010").threshold_eV == pytest.approx(0.198)
    assert h2o.process("h2o_v100_001").threshold_eV == pytest.approx(0.453)
    assert h2o.process("h2o_ionization").threshold_eV == pytest.approx(12.62)


def test_momentum_transfer_dipole_limit(h2o):
    """Below 0.1 eV the momentum transfer follows the point-dipole Born law (8 pi/3) D^2/k^2.

    Independent computation: D = 1.855 debye = 0.7298 e a0 (common practice) gives
    (8 pi/3) D^2 a0^2 (13.606 eV) = 16.9e-20 m2 eV; the recalled short-range part adds 4e-20 m2.
    """
    d_au = 1.855 * 0.393430
    a_m2_eV = 8.0 * math.pi / 3.0 * d_au ** 2 * (0.529177e-10) ** 2 * 13.605693
    assert a_m2_eV == pytest.approx(16.9e-20, rel=0.005)
    mt = h2o.process("h2o_momentum")
    for e in (0.01, 0.03, 0.1):
        assert float(mt.sigma_m2(e)) == pytest.approx(a_m2_eV / e + 4e-20, rel=0.01)


def test_electrons_thermal_at_low_field(low):
    """With the rotational reverse, electrons stay at the gas temperature up to 10 Td.

    Reference: mean energy 3/2 kT (common practice); tolerance 1 %.
    """
    kT = K_B * T_GAS_K / E_CHARGE
    np.testing.assert_allclose(low.mean_energy_eV, 1.5 * kT, rtol=0.01)


def test_zero_field_mobility_quadrature(mixture, low):
    """N mu at 1 Td equals the Maxwellian quadrature over the set (independent computation as in
    test_swarm_h2.py: sigma_m = elastic + inelastic + detailed-balance reverses; Huxley &
    Crompton 1974, ch. 3). Tolerance 2 %."""
    muN = thermal_reduced_mobility(mixture.processes, T_GAS_K)   # tests/reference/thermal_mobility.py
    assert low.reduced_mobility_1_mVs[0] == pytest.approx(muN, rel=0.02)


def test_zero_field_mobility_measured(low):
    """N mu within 30 % of 1.5e23 /(V m s) derived from Milloy, Reid & Crompton 1975.

    Measured here: 1.40e23 against 1.53e23 (-8 %).
    """
    ref = _blanc_h2o_mobility()
    assert ref == pytest.approx(1.53e23, rel=0.01)
    assert low.reduced_mobility_1_mVs[0] == pytest.approx(ref, rel=0.30)


def test_reverse_needed(mixture):
    """Without the rotational reverse the electrons are cooled far below the gas temperature
    (the reason the file asks for excited_fractions='boltzmann'): mean energy below half of
    3/2 kT at 10 Td. (growth="none": nothing ionizes or attaches at these energies.)"""
    tab = solve_swarm(mixture, [10.0], T_gas_K=T_GAS_K, growth="none")
    kT = K_B * T_GAS_K / E_CHARGE
    assert tab.mean_energy_eV[0] < 0.5 * 1.5 * kT


def test_ionization_coefficient_townsend_form(mixture):
    """alpha/N (steady-state Townsend growth) within 25 % of the H2O Townsend-form fit at
    E/p = 150-500 V/(cm Torr) (424-1414 Td). Adjusted to it (module docstring); measured here:
    -14 % to +13 %."""
    n_per_cm3_torr = TORR_PA / KT_STP_J * 1e-6
    en_Td = FIT_E_P / n_per_cm3_torr / 1e-17
    ref = 13.0 * np.exp(-290.0 / FIT_E_P) / n_per_cm3_torr * 1e-4     # A, B from memory of Raizer 1991
    tab = solve_swarm(mixture, en_Td, T_gas_K=T_GAS_K, growth="spatial", excited_fractions="boltzmann")
    np.testing.assert_allclose(tab.townsend_ionization_m2, ref, rtol=0.25)
