"""The local mean energy approximation (``electron_energy="local_mean_energy"``).

Reference: the Maxwell model gas (constant momentum-transfer collision frequency
nu = N k_m, elastic collisions only) has exact moment equations for any distribution
(Wannier 1953, Phys. Rev. 90, 817; e.g. Robson, Fundamentals of Charged Particle
Transport in Gases and Condensed Matter, 2006, chapter 5):

    W = e E / (m nu)                                    (momentum balance)
    d<eps>/dt = e E W - (2 m / M) nu (<eps> - 3/2 k T)  (energy balance)

so that the steady mean energy is 3/2 k T + M W^2 / 2 and, after a step in the field,
<eps> relaxes exponentially with the rate (2 m / M) nu. The local mean energy equation
of the integrator reduces to exactly this balance for a Maxwell-model table, so the
integrator must reproduce the exponential to the accuracy of the table interpolation.
Every gas number below is invented for the test (a Maxwell model gas, not a real gas).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from plasmazero.numerics import ElectronTable, FieldProfile, integrate

import systems

E_C = 1.602176634e-19       # C (CODATA 2018, exact)
M_E = 9.1093837015e-31      # kg (CODATA 2018)
K_B = 1.380649e-23          # J/K (CODATA 2018, exact)
AMU = 1.66053906660e-27     # kg (CODATA 2018)

K_M = 1e-13                 # m^3/s, momentum-transfer rate coefficient (invented)
M_GAS = 4.0 * AMU           # a light gas makes the relaxation quick (invented)
T_GAS = 300.0
N_GAS = 1e5 / (K_B * T_GAS)


def _maxwell_table():
    E = np.r_[0.0, np.geomspace(0.01, 100.0, 600)]                  # Td
    W = E_C * (E * 1e-21) / (M_E * K_M)                            # m/s
    mean = 1.5 * K_B * T_GAS / E_C + 0.5 * M_GAS * W**2 / E_C      # eV
    return ElectronTable(E_N_Td=E, k_m3_s=np.zeros((E.size, 1)), mean_energy_eV=mean,
                         drift_velocity_m_s=W, processes=("col",), mole_fractions={})


@pytest.fixture(scope="module")
def case():
    mech = systems.build(("e", "A", "B"), [("e + A => e + B", ("electron", 0, 1.0))],
                         charge={"e": -1}, composition={"e": {}, "A": {"A": 1}, "B": {"A": 1}},
                         electron_processes=("col",))
    y0 = np.array([1e15, N_GAS, 0.0])
    return mech, y0, _maxwell_table()


@pytest.mark.parametrize("method", ["rodas4", "bdf"])
def test_relaxation_after_a_field_step_is_the_exact_exponential(case, method):
    mech, y0, table = case
    E1 = 20.0                                                       # Td
    field = FieldProfile(np.array([0.0, 1.0]), np.array([E1, E1]))
    nu = N_GAS * K_M
    rate = 2.0 * M_E / M_GAS * nu                                   # 1/s
    t = np.linspace(0.0, 4.0 / rate, 9)
    eps0 = 1.5 * K_B * T_GAS / E_C                                  # thermal start
    res = integrate(mech, y0, (0.0, t[-1]), T_gas_K=T_GAS, field=field, electron_table=table,
                    t_eval_s=t, rtol=1e-9, electron_energy="local_mean_energy",
                    mean_energy0_eV=eps0, method=method)
    W = E_C * E1 * 1e-21 / (M_E * K_M)
    eps_ss = eps0 + 0.5 * M_GAS * W**2 / E_C
    ref = eps_ss + (eps0 - eps_ss) * np.exp(-rate * t)
    # the only approximation is the table's interpolation (linear in ln E/N on 600 points)
    np.testing.assert_allclose(res.mean_energy_eV, ref, rtol=2e-4)
    # the drift follows the exact W = e E / (m nu) at every mean energy ...
    np.testing.assert_allclose(res.electron_drift_velocity_m_s[1:] / res.effective_E_N_Td[1:],
                               E_C * 1e-21 / (M_E * K_M), rtol=2e-4)
    # ... and the effective field approaches the applied one
    assert res.effective_E_N_Td[-1] == pytest.approx(E1, rel=0.05)
    assert res.effective_E_N_Td[1] < 0.9 * E1


def test_steady_state_equals_the_local_field(case):
    mech, y0, table = case
    E1 = 50.0
    field = FieldProfile(np.array([0.0, 1.0]), np.array([E1, E1]))
    rate = 2.0 * M_E / M_GAS * N_GAS * K_M
    t_end = 30.0 / rate
    lmea = integrate(mech, y0, (0.0, t_end), T_gas_K=T_GAS, field=field, electron_table=table,
                     t_eval_s=np.array([t_end]), electron_energy="local_mean_energy")
    lfa = integrate(mech, y0, (0.0, t_end), T_gas_K=T_GAS, field=field, electron_table=table,
                    t_eval_s=np.array([t_end]))
    assert lmea.mean_energy_eV[-1] == pytest.approx(lfa.mean_energy_eV[-1], rel=1e-6)
    assert lmea.effective_E_N_Td[-1] == pytest.approx(E1, rel=1e-5)


def test_a_table_whose_mean_energy_does_not_rise_is_refused(case):
    mech, y0, table = case
    bad = ElectronTable(E_N_Td=table.E_N_Td, k_m3_s=table.k_m3_s,
                        mean_energy_eV=np.full(table.E_N_Td.size, 1.0),
                        drift_velocity_m_s=table.drift_velocity_m_s, processes=("col",),
                        mole_fractions={})
    with pytest.raises(ValueError, match="does not rise strictly"):
        integrate(mech, y0, (0.0, 1e-9), T_gas_K=T_GAS, field=10.0, electron_table=bad,
                  electron_energy="local_mean_energy")


def test_lmea_on_a_shipped_mechanism_runs_dense_and_relaxes_in_the_afterglow():
    # CO2 (30 species, sparse by default): the extra entry forces the dense solver; after
    # the field is switched off the mean energy decays over picoseconds instead of
    # dropping at once (the point of the approximation; common practice, no source)
    from plasmazero.data.shipped import shipped_root
    from plasmazero.workflows import dbd, electron_tables as et
    loaded, mech = dbd.load_mechanism_pair(shipped_root() / "co2" / "mechanism.yaml")
    pmap = et.partner_map(loaded, mech)
    idx = {s: i for i, s in enumerate(mech.species)}
    y0 = np.zeros(len(mech.species))
    y0[idx["CO2"]] = N_GAS
    y0[idx["e"]] = y0[idx["CO2+"]] = 1e16
    x, exc, _ = et.partner_fractions(pmap, y0)
    table, _ = et.build_table(pmap, mech, x, exc, T_GAS, extra_E_N_Td=(120.0,))
    field = FieldProfile(np.array([0.0, 10e-9, 10e-9, 1e-6]), np.array([120.0, 120.0, 0.0, 0.0]))
    t = np.array([0.0, 10e-9, 10.002e-9, 1e-6])
    res = integrate(mech, y0, (0.0, 1e-6), T_gas_K=T_GAS, field=field, electron_table=table,
                    t_eval_s=t, electron_energy="local_mean_energy")
    lfa_mean = table.at(120.0)[1]
    assert res.linear_solver == "dense"
    assert res.mean_energy_eV[1] == pytest.approx(lfa_mean, rel=0.02)     # steady in the pulse
    # at 1 bar CO2 takes the energy in picoseconds (N w E ~ 6e11 eV/s at 5 eV): 2 ps after
    # the field is off the electrons are still warm
    assert 0.1 * lfa_mean < res.mean_energy_eV[2] < lfa_mean
    assert res.mean_energy_eV[3] < 0.2                                     # thermalised later
