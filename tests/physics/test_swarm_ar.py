"""Shipped argon cross sections against measured swarm behaviour.

Townsend ionization: the empirical fit alpha/p = A exp(-B p/E) with A = 12 cm^-1 Torr^-1,
B = 180 V cm^-1 Torr^-1, valid for E/p = 100-600 V cm^-1 Torr^-1 (Raizer 1991, Gas
Discharge Physics, Springer, Table 4.1; values from memory). p is referred to 0 C, so
N = 133.322 Pa / (k 273.15 K) per Torr. The fit summarises steady-state Townsend
(current-growth) measurements, so it is compared with the solver's ``growth="spatial"``
coefficient, not with the temporal-growth ratio k_ion/W (11-16 % higher here). No fit or
table below E/p = 100 (283 Td) could be recalled with its range of validity, so alpha is
not checked below 283 Td.

Drift velocity: no stored copy of a measured table for argon (Dutton 1975, J. Phys. Chem.
Ref. Data 4, 577, or later) could be found. The reference values below are recollections,
from memory, of the measured argon curve (Pack & Phelps 1961, Phys. Rev. 121, 798; Nakamura
& Kurachi 1988, J. Phys. D 21, 718; Kucukarpaci & Lucas 1981, J. Phys. D 14, 2001), good
to about a third and not attributable to one table; the tolerance is therefore 40 %. Such
a check still catches a unit slip or a factor-two error in the momentum transfer.

Flux and bulk drift velocity: the two-term solver gives the flux velocity; time-of-flight
experiments give the bulk (centroid) velocity, which exceeds it where ionization matters
(Robson 1991, Aust. J. Phys. 44, 685). At 1 and 10 Td ionization is negligible (checked in
the test: alpha D / W, the order of the relative difference, below 1e-4), and the solver's
flux velocity is compared directly. At 100 Td the bulk velocity is taken from the
independent Monte Carlo of ``tests/reference/montecarlo.py`` run on the same cross sections
(measured bulk/flux = 1.13 there; 1.24 at 300 Td, 1.30 at 500 Td), and the Monte Carlo flux
is required to agree with the solver's within 3 %.
"""

import math

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section
from reference import montecarlo as mc

N_PER_TORR = 133.322 / (1.380649e-23 * 273.15)
T_GAS_K = 300.0
#: E/p of the Townsend-form check, V cm^-1 Torr^-1 (283, 354, 424, 495 and 849 Td)
FIT_E_P = np.array([100.0, 125.0, 150.0, 175.0, 300.0])


@pytest.fixture(scope="module")
def argon():
    return load_cross_sections(shipped_cross_section("ar"))


@pytest.fixture(scope="module")
def mixture(argon):
    return build_mixture([(argon, 1.0)])


@pytest.fixture(scope="module")
def townsend(mixture):
    """Steady-state Townsend (spatial growth) table at the E/p of the fit."""
    en_Td = FIT_E_P * 1e2 / N_PER_TORR / 1e-21
    return solve_swarm(mixture, en_Td, T_GAS_K, growth="spatial")


@pytest.fixture(scope="module")
def drift(mixture):
    """Temporal growth (time-of-flight conditions): flux drift velocity at 1-30 Td."""
    return solve_swarm(mixture, np.array([1.0, 3.0, 10.0, 30.0]), T_GAS_K)


@pytest.mark.parametrize("index", range(FIT_E_P.size))
def test_townsend_ionization_against_the_empirical_fit(townsend, index):
    """Within 25 %: the fit represents the measurements to about 20 % (Raizer 1991, from
    memory) and A, B are recalled. Measured here: +8, -1, -4, -4, +6 % at 283-849 Td."""
    e_over_p = FIT_E_P[index]
    fit = 12.0 * math.exp(-180.0 / e_over_p) * 1e2 / N_PER_TORR    # m2
    assert townsend.townsend_ionization_m2[index] == pytest.approx(fit, rel=0.25)


@pytest.mark.parametrize(
    "E_N_Td, W_ref_m_s",
    [
        # about 2.5e3 m/s at 1 Td, the flat part of the curve above the Ramsauer-minimum
        # rise: from memory of Pack & Phelps 1961 and Nakamura & Kurachi 1988 (module
        # docstring); tolerance 40 %
        (1.0, 2.5e3),
        # about 1e4 m/s at 10 Td, where W becomes nearly proportional to E/N: from memory
        # of Nakamura & Kurachi 1988 and Kucukarpaci & Lucas 1981; tolerance 40 %
        (10.0, 1.0e4),
    ],
)
def test_drift_velocity_against_measurements(drift, E_N_Td, W_ref_m_s):
    i = int(np.argmin(np.abs(drift.E_N_Td - E_N_Td)))
    W = drift.drift_velocity_m_s[i]
    # bulk = flux here: alpha D / W is the order of their relative difference
    assert drift.townsend_ionization_m2[i] * drift.reduced_diffusion_1_ms[i] / W < 1e-4
    assert W == pytest.approx(W_ref_m_s, rel=0.40)


def test_bulk_drift_velocity_at_100_td(argon, mixture):
    """About 1e5 m/s at 100 Td (bulk, time of flight; from memory of Kucukarpaci & Lucas
    1981; tolerance 40 %), compared with the Monte Carlo bulk velocity of the shipped set
    (measured: 9.1e4 m/s, flux 8.1e4 m/s)."""
    gas = mc.gas_from_cross_sections(argon, 1000.0, 50001)
    r = mc.run_swarm(gas, 100.0, 0.0, n_electrons=500, relax_collisions=3000.0,
                     sample_collisions=6000.0, n_batches=10, init_energy_eV=5.0, seed=17)
    flux = solve_swarm(mixture, [100.0], T_GAS_K).drift_velocity_m_s[0]
    assert flux == pytest.approx(r.flux_drift_m_s, rel=0.03)
    assert r.bulk_drift_m_s > r.flux_drift_m_s + 4.0 * (r.bulk_drift_err_m_s + r.flux_drift_err_m_s)
    assert r.bulk_drift_m_s == pytest.approx(1.0e5, rel=0.40)


def test_drift_velocity_rises_with_field(drift):
    # common practice, no source: argon has no negative differential conductivity
    assert np.all(np.diff(drift.drift_velocity_m_s) > 0.0)


def test_no_attachment_and_a_few_eV_mean_energy(townsend):
    # argon does not attach electrons (common practice, no source); mean energies in the
    # glow-discharge range of E/N are several eV (common practice, no source)
    t = townsend
    assert np.all(t.townsend_attachment_m2 == 0.0)
    assert np.all((t.mean_energy_eV[:4] > 5.0) & (t.mean_energy_eV[:4] < 20.0))
    assert math.isclose(float(t.power_balance_residual.max()), 0.0, abs_tol=1e-6)
