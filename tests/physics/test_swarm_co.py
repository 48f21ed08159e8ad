"""Swarm parameters of the shipped CO cross sections.

The shipped set (``mechanisms/cross_sections/co.yaml``) was written down from memory of
the publications it cites; nothing in it was adjusted to swarm data. Measured drift
velocities and mean energies of electrons in CO (e.g. Haddad and Milloy 1983, Aust. J.
Phys. 36, 473; the scanning-drift-tube data of the Budapest group) could not be recalled
reliably enough to serve as reference values, so this file does NOT compare the set with
measured drift velocities or mean energies. It checks what can be traced:

* the fraction of the electron power going into CO vibration at 10-50 Td (Nighan 1970),
* the vibrational barrier of the 2Pi resonance near 2 eV, which keeps the electrons cool
  up to several tens of Td, and the exponential onset of ionization (common practice),
* the thermal limit: at vanishing field the electrons share the gas temperature, so the
  computed mobility equals the Maxwellian average of the momentum-transfer cross section
  (an independent quadrature),
* completeness and documentation of the set.

Superelastic collisions use Boltzmann populations of the vibrational levels at 300 K.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section

T_GAS_K = 300.0
VIBRATIONAL = ("co_v1", "co_v2", "co_v3", "co_v4", "co_v5", "co_v6")
E_N_TD = np.array([10.0, 20.0, 50.0, 150.0, 200.0, 300.0])
K_B_EV = 8.617333262e-5            # eV/K (CODATA 2018)
GAMMA = (2 * 1.602176634e-19 / 9.1093837015e-31) ** 0.5  # sqrt(2e/m_e), m/s per sqrt(eV) (CODATA 2018)


@pytest.fixture(scope="module")
def co():
    return load_cross_sections(shipped_cross_section("co"))


@pytest.fixture(scope="module")
def table(co):
    return solve_swarm(build_mixture([(co, 1.0)]), E_N_TD, T_gas_K=T_GAS_K,
                       excited_fractions="boltzmann")


def _at(tab, E_N_Td):
    i = int(np.argmin(np.abs(tab.E_N_Td - E_N_Td)))
    assert abs(tab.E_N_Td[i] - E_N_Td) < 1e-9
    return i


def test_set_is_complete_and_documented(co):
    kinds = {p.kind for p in co.processes}
    assert kinds == {"momentum_transfer", "excitation", "attachment", "ionization"}
    for p in co.processes:
        assert p.source and p.provenance == "recalled", p.id
        assert p.id.startswith("co_")
        if p.kind in ("momentum_transfer", "ionization"):
            assert p.energy_eV[-1] >= 1000.0, p.id
    assert co.process("co_attachment").products == "C + O-"
    assert co.process("co_dissociation").products == "C + O"
    assert co.process("co_ionization").products == "CO+ + e"
    # thresholds: ionization energy of CO 14.01 eV (NIST Chemistry WebBook, value from
    # memory); vibrational quantum 2143 cm-1 = 0.266 eV and D0 = 11.09 eV (Huber and
    # Herzberg 1979, Constants of Diatomic Molecules, values from memory); dissociative
    # attachment onset near 9.6 eV (Rapp and Briglia 1965, J. Chem. Phys. 43, 1480, from memory)
    assert co.process("co_ionization").threshold_eV == pytest.approx(14.01, abs=0.01)
    assert co.process("co_v1").threshold_eV == pytest.approx(0.266, abs=0.001)
    assert co.process("co_dissociation").threshold_eV == pytest.approx(11.09, abs=0.01)
    assert co.process("co_attachment").threshold_eV == pytest.approx(9.6, abs=0.1)


@pytest.mark.parametrize("E_N_Td", [10.0, 20.0, 50.0])
def test_vibrational_power_fraction_dominates(table, E_N_Td):
    """More than 80 % of the electron power into CO vibration at 10-50 Td.

    Nighan 1970, Phys. Rev. A 2, 1989 (computed power transfer in N2, CO and CO2; from
    memory: in CO about 90 % or more of the power goes into vibration at mean energies near
    1 eV, the basis of the efficient CO laser).
    """
    pf = table.power_fractions
    i = _at(table, E_N_Td)
    f = sum(pf[k][i] + pf.get(k + ":reverse", np.zeros_like(pf[k]))[i] for k in VIBRATIONAL)
    assert f > 0.80


def test_vibrational_barrier_keeps_electrons_cool(table):
    # below the 2Pi resonance the mean energy stays near or below 1 eV up to 50 Td, and it
    # rises to a few eV only at a few hundred Td (common practice, no source)
    mean = table.mean_energy_eV
    assert np.all(np.diff(mean) > 0.0)
    assert mean[_at(table, 50.0)] < 1.2
    assert 1.0 < mean[_at(table, 150.0)] < 6.0
    assert 2.0 < mean[_at(table, 300.0)] < 8.0


def test_ionization_onset(table):
    # negligible ionization at 50 Td, growing by more than an order of magnitude from 150
    # to 300 Td (common practice, no source: the onset is exponential in the field)
    a = table.townsend_ionization_m2
    assert a[_at(table, 50.0)] < 1e-26
    assert a[_at(table, 300.0)] > 10.0 * a[_at(table, 150.0)] > 0.0
    assert np.all(np.diff(table.drift_velocity_m_s) > 0.0)


def test_thermal_limit_mobility_equals_maxwellian_average(co):
    """At 1e-3 Td the EEDF is a Maxwellian at the gas temperature, so

    mu N = gamma/(3 kT) * int u / sigma_m(u) F(u) du,  F = 2/sqrt(pi) (kT)^-3/2 exp(-u/kT)

    (two-term mobility, Hagelaar and Pitchford 2005, Plasma Sources Sci. Technol. 14, 722,
    eq. 55 with dF/du = -F/kT). sigma_m here is the momentum transfer the solver uses for
    CO: elastic plus the inelastic cross sections. Independent quadrature; tolerance 3 %
    (the finite-volume grid and the tiny residual field).
    """
    kT = K_B_EV * T_GAS_K

    def sigma_m(u):
        return sum(float(p.sigma_m2(u)) for p in co.processes)

    def integrand(u):
        return u / sigma_m(u) * 2.0 / np.sqrt(np.pi) * kT**-1.5 * np.exp(-u / kT)

    breaks = [0.001, 0.01, 0.266]
    mu_ref = GAMMA / (3.0 * kT) * quad(integrand, 0.0, 40.0 * kT, points=breaks, limit=400)[0]
    tab = solve_swarm(build_mixture([(co, 1.0)]), [1e-3], T_gas_K=T_GAS_K,
                      excited_fractions="boltzmann")
    assert tab.mean_energy_eV[0] == pytest.approx(1.5 * kT, rel=0.03)
    assert tab.reduced_mobility_1_mVs[0] == pytest.approx(mu_ref, rel=0.03)
