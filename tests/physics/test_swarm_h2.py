"""Swarm parameters of the shipped H2 cross sections against measured swarm data.

The shipped set (``mechanisms/cross_sections/h2.yaml``) was assembled from a partial copy of
a published compilation (Raju 2012) and from memory of the cited publications; nothing in it
was adjusted to the data below, so these are genuine checks. References:

* characteristic energy D/mu: the table of Townsend energy factors of Kaye & Laby (NPL,
  Tables of Physical and Chemical Constants, section 4.4.5 "Electron diffusion", version 1.0),
  taken from a stored copy of that page. Kaye & Laby give D/mu = eta p/(N e) with N the
  number density at s.t.p., i.e. D/mu = eta k (273.15 K)/e, and E/p in V m-1 Pa-1; we read
  p consistently as the pressure reduced to 0 degC, so E/N = (E/p) k (273.15 K).
* Townsend ionization coefficient: alpha/p = A exp(-B p/E), A = 5 /(cm Torr),
  B = 130 V/(cm Torr), valid for E/p = 150-600 V/(cm Torr) (value from memory of Raizer,
  Gas Discharge Physics, Springer 1991, table 4.1, after von Engel), p at 0 degC.
* drift velocity: no stored copy of a measured H2 table (Dutton 1975, J. Phys. Chem. Ref.
  Data 4, 577, or later) could be found. Two values are recalled from memory, to about a
  third (tolerance 40 %): about 1e6 cm/s at E/p = 1 V/(cm Torr), about 3 Td (the early
  drift-tube data of Bradbury & Nielsen 1936, Phys. Rev. 49, 388, and Pack & Phelps 1961,
  Phys. Rev. 121, 798), and about 1e7 cm/s at 100 Td (bulk; the order of magnitude of the
  measurements at moderate E/N, e.g. Roznerski & Leja 1984, J. Phys. D 17, 279, not one
  recalled table value). In addition the drift velocity is checked in the thermal limit,
  against an independent quadrature of the momentum-transfer cross sections over a
  Maxwellian.
* flux and bulk drift velocity: the solver gives the flux velocity, time-of-flight
  experiments the bulk (centroid) velocity (Robson 1991, Aust. J. Phys. 44, 685). At 3 Td
  ionization is absent and the two are equal; at 100 Td the bulk velocity is taken from the
  independent Monte Carlo of ``tests/reference/montecarlo.py`` on the same cross sections
  (bulk/flux measured 1.02 there, 1.21 at 300 Td and 1.38 at 500 Td).

Superelastic collisions use ``excited_fractions="boltzmann"`` at 293 K (the rotational
processes are population-folded; see their notes and the README).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section
from reference import montecarlo as mc
from reference.thermal_mobility import thermal_reduced_mobility

T_GAS_K = 293.0
K_B = 1.380649e-23              # J/K (CODATA 2018, exact)
E_CHARGE = 1.602176634e-19      # C (CODATA 2018, exact)
M_E = 9.1093837015e-31          # kg (CODATA 2018)
TORR_PA = 101325.0 / 760.0      # Pa (definition)
KT_STP_J = K_B * 273.15         # kT at 0 degC, the s.t.p. of Kaye & Laby's table

#: E/p of Kaye & Laby's table, V m-1 Pa-1 (taken from Kaye & Laby 4.4.5)
KL_E_P = np.array([0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 10.0, 20.0, 30.0, 40.0])
#: Townsend energy factor eta of H2 at those E/p (taken from Kaye & Laby 4.4.5)
KL_ETA_H2 = np.array([6.0, 10.0, 18.0, 23.0, 28.0, 32.0, 55.0, 100.0, 130.0, 150.0])
#: E/p of the Townsend-form check, V/(cm Torr): inside the 150-600 validity range (Raizer 1991)
FIT_E_P = np.array([150.0, 175.0, 300.0])
#: relative tolerance at each FIT_E_P (see test_ionization_coefficient_townsend_form)
FIT_TOL = np.array([0.25, 0.25, 0.35])


def _kl_points():
    en_Td = KL_E_P * KT_STP_J / 1e-21
    dmu_eV = KL_ETA_H2 * KT_STP_J / E_CHARGE
    return en_Td, dmu_eV


def _fit_points():
    n_per_cm3_torr = TORR_PA / KT_STP_J * 1e-6          # molecules per cm3 at 1 Torr, 0 degC
    en_Td = FIT_E_P / n_per_cm3_torr / 1e-17            # V cm2 -> Td
    alpha_N_m2 = 5.0 * np.exp(-130.0 / FIT_E_P) / n_per_cm3_torr * 1e-4   # A, B from memory of Raizer 1991
    return en_Td, alpha_N_m2


@pytest.fixture(scope="module")
def h2():
    return load_cross_sections(shipped_cross_section("h2"))


@pytest.fixture(scope="module")
def mixture(h2):
    return build_mixture([(h2, 1.0)])


@pytest.fixture(scope="module")
def table(mixture):
    en_Td, _ = _kl_points()
    en = np.concatenate([[0.01], en_Td])
    return solve_swarm(mixture, en, T_gas_K=T_GAS_K, excited_fractions="boltzmann")


def test_file_is_complete(h2):
    """Every process has a source, a provenance and, where it dissociates, ionizes or attaches, products."""
    assert h2.gas == "H2" and abs(h2.mass_amu - 2.01588) < 1e-9
    kinds = {p.kind for p in h2.processes}
    assert kinds == {"momentum_transfer", "excitation", "ionization", "attachment"}
    for p in h2.processes:
        assert p.source and p.provenance in ("taken", "recalled", "fitted", "adjusted"), p.id
        assert p.energy_eV[-1] >= 1000.0, p.id
        if p.kind in ("ionization", "attachment") or "dissociation" in p.id:
            assert p.products, p.id
    assert h2.process("h2_dissociation").products == "H + H"
    assert h2.process("h2_attachment").products == "H- + H"
    # thresholds of the spectroscopic levels (common practice: H2 v=1 0.516 eV, v=2 1.003 eV,
    # ionization energy 15.43 eV, rotational J=0->2 43.9 meV)
    assert h2.process("h2_v01").threshold_eV == pytest.approx(0.516)
    assert h2.process("h2_v02").threshold_eV == pytest.approx(1.003)
    assert h2.process("h2_ionization").threshold_eV == pytest.approx(15.43)
    assert h2.process("h2_rot_j0_j2").threshold_eV == pytest.approx(0.0439)


def test_rotational_populations_add_up(h2):
    """The folded populations are those of normal H2 (ortho:para = 3:1) at 293 K.

    Reference: the J=0 -> 2 table value 0.636e-20 m2 at 1 eV (Raju 2012, table 18.6, taken)
    times f_0 = 0.131, the Boltzmann fraction of J=0 in normal H2 at 293 K (independent
    computation: para fraction 1/4 shared by J = 0, 2, 4 with weights (2J+1) exp(-E_J/kT)).
    """
    kT = K_B * T_GAS_K / E_CHARGE
    e = {0: 0.0, 2: 0.0439, 4: 0.1447}
    z = sum((2 * j + 1) * math.exp(-e[j] / kT) for j in e)
    f0 = 0.25 / z
    assert f0 == pytest.approx(0.131, abs=0.001)
    assert float(h2.process("h2_rot_j0_j2").sigma_m2(1.0)) == pytest.approx(0.636e-20 * f0, rel=0.01)


def test_characteristic_energy_kaye_laby(table):
    """D/mu within 20 % of Kaye & Laby from 1.9 to 150 Td.

    Tolerance: the old Townsend-method data (5-10 %), the s.t.p. reading of E/p and eta
    (about 7 % either way) and the two-term approximation (a few %). Measured here:
    -5 % to +15 %.
    """
    _, dmu_ref = _kl_points()
    dmu = table.characteristic_energy_eV[1:]
    np.testing.assert_allclose(dmu, dmu_ref, rtol=0.20)


def test_ionization_coefficient_townsend_form(mixture):
    """alpha/N (steady-state Townsend growth) against the Townsend-form fit of H2.

    At E/p = 150 and 175 V/(cm Torr) (424 and 495 Td, the part of the fit's range inside
    the 1-500 Td of DBDs) within 25 %; at 300 V/(cm Torr) (849 Td) within 35 %: the fit
    itself is good to about 20 %, and the two-term approximation and the higher singlet
    states left out of the set (README) raise the computed value at high E/N.
    Measured here: -8 %, +1 % and +31 %.
    """
    en_Td, alpha_ref = _fit_points()
    tab = solve_swarm(mixture, en_Td, T_gas_K=T_GAS_K, growth="spatial", excited_fractions="boltzmann")
    ratio = tab.townsend_ionization_m2 / alpha_ref
    assert np.all(np.abs(ratio - 1.0) < FIT_TOL), ratio


def test_drift_velocity_at_3_td(mixture):
    """About 1e4 m/s at E/p = 1 V/(cm Torr) (from memory, module docstring); tolerance 40 %.

    E/p is read at 293 K (3.0 Td); read at 0 degC it would be 2.8 Td, 7 % lower, inside the
    tolerance. No ionization or attachment at this field, so flux = bulk. Measured here:
    1.02e4 m/s (+2 %).
    """
    en_Td = 1.0 * 1e2 / (TORR_PA / (K_B * T_GAS_K)) / 1e-21      # 1 V/(cm Torr) at 293 K
    tab = solve_swarm(mixture, [en_Td], T_gas_K=T_GAS_K, excited_fractions="boltzmann")
    assert tab.townsend_ionization_m2[0] == 0.0
    eta_D_m_s = tab.townsend_attachment_m2[0] * tab.reduced_diffusion_1_ms[0]
    assert eta_D_m_s < 1e-4 * tab.drift_velocity_m_s[0]      # order of the bulk-flux difference
    assert tab.drift_velocity_m_s[0] == pytest.approx(1.0e4, rel=0.40)


def test_bulk_drift_velocity_at_100_td(h2, mixture):
    """About 1e5 m/s at 100 Td (bulk; from memory, module docstring); tolerance 40 %.

    Compared with the Monte Carlo bulk velocity of the shipped set (gas at rest: at 100 Td
    the 293 K gas motion and the rotational reverses change the drift by 0.6 %).
    The Monte Carlo flux velocity must agree with the solver's within 3 %. Measured here:
    bulk 1.10e5 m/s (+10 %), flux 1.07e5 m/s.
    """
    gas = mc.gas_from_cross_sections(h2, 1000.0, 50001)
    r = mc.run_swarm(gas, 100.0, 0.0, n_electrons=500, relax_collisions=3000.0,
                     sample_collisions=6000.0, n_batches=10, init_energy_eV=5.0, seed=17)
    tab = solve_swarm(mixture, [100.0], T_gas_K=T_GAS_K, excited_fractions="boltzmann")
    flux = tab.drift_velocity_m_s[0]
    assert flux == pytest.approx(r.flux_drift_m_s, rel=0.03)
    assert r.bulk_drift_m_s == pytest.approx(1.0e5, rel=0.40)


def test_thermal_limit_of_mobility(mixture, table):
    """At 0.01 Td the EEDF is the 293 K Maxwellian and N mu its quadrature.

    Independent computation: N mu = gamma/(3 kT) int u F(u)/sigma_m(u) du over a Maxwellian F
    at 293 K (Huxley & Crompton 1974, The Diffusion and Drift of Electrons in Gases, ch. 3),
    with sigma_m the elastic momentum transfer plus every inelastic cross section and the
    detailed-balance reverses, weighted by the populations of the mixture model
    (Reid 1979, Aust. J. Phys. 32, 231, eq. 4; Klein & Rosseland 1921). Tolerance 2 %.
    """
    kT = K_B * T_GAS_K / E_CHARGE
    muN = thermal_reduced_mobility(mixture.processes, T_GAS_K)   # tests/reference/thermal_mobility.py
    assert table.mean_energy_eV[0] == pytest.approx(1.5 * kT, rel=0.01)
    assert table.reduced_mobility_1_mVs[0] == pytest.approx(muN, rel=0.02)
    assert table.drift_velocity_m_s[0] == pytest.approx(muN * 0.01e-21, rel=0.02)


def test_without_superelastic_rotation_close_above_1_td(mixture):
    """Without excited_fractions (no reverses) D/mu stays within 5 % above 1 Td (file notes)."""
    en = np.array([1.0, 3.77, 37.7])
    with_rev = solve_swarm(mixture, en, T_gas_K=T_GAS_K, excited_fractions="boltzmann")
    without = solve_swarm(mixture, en, T_gas_K=T_GAS_K)
    np.testing.assert_allclose(without.characteristic_energy_eV, with_rev.characteristic_energy_eV, rtol=0.05)
    np.testing.assert_allclose(without.drift_velocity_m_s, with_rev.drift_velocity_m_s, rtol=0.05)
