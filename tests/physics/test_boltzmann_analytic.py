"""The two-term Boltzmann solver against closed-form solutions.

Every model gas here is analytic (constant collision frequency, constant cross section,
step cross sections): no physical data, so no provenance beyond the formulas cited.
"""

import math

import numpy as np
import pytest
from scipy.special import gamma as gamma_function

from plasmazero.boltzmann import build_mixture, rate_coefficient, solve_swarm
from plasmazero.data.cross_sections import Process, make_cross_section_set
from plasmazero.physics.boltzmann.constants import (
    AMU_KG,
    BOLTZMANN_EV_K,
    ELECTRON_MASS_KG,
    ELEMENTARY_CHARGE_C,
    GAMMA_M_S_EV,
)


_gas = make_cross_section_set


def _maxwell_gas(k_m_m3_s, mass_amu):
    """Maxwell model: sigma_m = (nu/N) / (gamma sqrt(u)), a constant collision frequency.

    Tabulated on a fine geometric grid (linear interpolation between points); the value at
    u = 0 is that of 1e-6 eV, which touches the lowest half cell only.
    """
    e = np.concatenate(([0.0], np.geomspace(1e-6, 1e5, 4000)))
    s = k_m_m3_s / (GAMMA_M_S_EV * np.sqrt(np.maximum(e, 1e-6)))
    return _gas("MX", mass_amu, [("mx_m", "momentum_transfer", e, s, 0.0, None)])


@pytest.mark.parametrize("T_gas_K", [300.0, 0.0])
def test_maxwell_model_drift_velocity_and_mean_energy(T_gas_K):
    # Wannier (1953), Bell Syst. Tech. J. 32, 170: for a constant collision frequency nu,
    # W = e E/(m nu) and <u> = 3/2 k T_gas + 1/2 M W^2, exactly in the two-term approximation
    k_m, mass = 1e-13, 4.0
    mix = build_mixture([(_maxwell_gas(k_m, mass), 1.0)])
    en_Td = np.array([1.0, 10.0, 100.0])
    tab = solve_swarm(mix, en_Td, T_gas_K)
    W_ref = ELEMENTARY_CHARGE_C * en_Td * 1e-21 / (ELECTRON_MASS_KG * k_m)  # Wannier 1953
    mean_ref = 1.5 * BOLTZMANN_EV_K * T_gas_K + 0.5 * mass * AMU_KG * W_ref**2 / ELEMENTARY_CHARGE_C  # Wannier 1953
    assert np.allclose(tab.drift_velocity_m_s, W_ref, rtol=5e-3, atol=0)
    assert np.allclose(tab.mean_energy_eV, mean_ref, rtol=5e-3, atol=0)
    # mobility of the Maxwell model: mu N = e/(m nu/N) (same source)
    assert np.allclose(tab.reduced_mobility_1_mVs, ELEMENTARY_CHARGE_C / (ELECTRON_MASS_KG * k_m), rtol=5e-3, atol=0)


def test_zero_field_gives_the_gas_maxwellian():
    # Without field the elastic term relaxes the EEDF to the Maxwellian at T_gas: mean energy
    # 3/2 k T_gas and Einstein relation D/mu = k T_gas/e (common practice, no source)
    T = 300.0
    mix = build_mixture([(_maxwell_gas(1e-13, 4.0), 1.0)])
    tab = solve_swarm(mix, [0.0], T)
    kT = BOLTZMANN_EV_K * T
    assert float(tab.mean_energy_eV[0]) == pytest.approx(1.5 * kT, rel=2e-3, abs=0)
    assert float(tab.characteristic_energy_eV[0]) == pytest.approx(kT, rel=1e-9, abs=0)
    u, F = tab.energy_eV[0], tab.eedf_eV_m3_2[0]
    # the exponential scheme is exact for the Boltzmann factor: F_(i+1)/F_i = exp(-du/kT)
    ratio = F[1:] / F[:-1]
    assert np.allclose(ratio, math.exp(-(u[1] - u[0]) / kT), rtol=1e-9, atol=0)


def _two_level_gas(threshold_eV, weight_ratio):
    """Constant elastic cross section plus one excitation with a superelastic reverse."""
    e_exc = [threshold_eV, threshold_eV + 0.1, threshold_eV + 1.0, 100.0]
    s_exc = [0.0, 2e-20, 1e-20, 1e-21]
    return _gas("TL", 28.0, [
        ("tl_m", "momentum_transfer", [0.0, 1e4], [1e-19, 1e-19], 0.0, None),
        ("tl_x", "excitation", e_exc, s_exc, threshold_eV, weight_ratio),
    ])


@pytest.mark.parametrize("T_gas_K", [300.0, 1000.0])
def test_superelastic_detailed_balance_at_zero_field(T_gas_K):
    # Klein and Rosseland (1921), Z. Phys. 4, 46: with the upper level populated by its
    # Boltzmann factor, excitation and de-excitation balance in every energy interval, so at
    # zero field the EEDF stays the Maxwellian at T_gas and the net inelastic power is zero
    mix = build_mixture([(_two_level_gas(0.1, 3.0), 1.0)])
    tab = solve_swarm(mix, [0.0], T_gas_K, excited_fractions="boltzmann")
    kT = BOLTZMANN_EV_K * T_gas_K
    assert float(tab.mean_energy_eV[0]) == pytest.approx(1.5 * kT, rel=5e-3, abs=0)
    forward = tab.power_fractions["tl_x"][0]
    reverse = tab.power_fractions["tl_x:reverse"][0]
    assert reverse < 0.0 < forward
    assert abs(forward + reverse) < 1e-4 * forward  # net power of the pair ~ 0
    # rates obey detailed balance: k_rev x_upper = k_fwd x_lower (Klein and Rosseland 1921)
    p_up = 3.0 * math.exp(-0.1 / kT) / (1.0 + 3.0 * math.exp(-0.1 / kT))
    fwd = tab.rate_coefficients_m3_s["tl_x"][0] * (1.0 - p_up)
    rev = tab.rate_coefficients_m3_s["tl_x:reverse"][0] * p_up
    assert float(rev) == pytest.approx(float(fwd), rel=2e-3, abs=0)


@pytest.mark.parametrize("en_Td", [10.0, 100.0])
def test_druyvesteyn_mean_energy(en_Td):
    # Druyvesteyn (1930), Physica 10, 61: constant cross section sigma (mean free path
    # lambda = 1/(N sigma)), elastic only, cold gas. Zero flux gives
    # F0 ~ exp(-(u/u_D)^2) with u_D = (M/(3m))^(1/2) e E lambda; then
    # <u> = u_D Gamma(5/4)/Gamma(3/4) = 0.7397 u_D (integrals of u^a exp(-u^2/u_D^2)).
    sigma, mass = 1e-19, 4.0
    mix = build_mixture([(_gas("DR", mass, [("dr_m", "momentum_transfer", [0.0, 1e5], [sigma, sigma], 0.0, None)]), 1.0)])
    tab = solve_swarm(mix, [en_Td], 0.0)
    u_D = math.sqrt(mass * AMU_KG / (3.0 * ELECTRON_MASS_KG)) * en_Td * 1e-21 / sigma
    ratio = gamma_function(1.25) / gamma_function(0.75)
    assert float(ratio) == pytest.approx(0.7397, abs=1e-4)  # the number quoted for the Druyvesteyn EEDF
    assert float(tab.mean_energy_eV[0]) == pytest.approx(ratio * u_D, rel=5e-3, abs=0)
    # and the shape: log F linear in u^2 with slope -1/u_D^2 (same derivation)
    u, F = tab.energy_eV[0], tab.eedf_eV_m3_2[0]
    sel = F > 1e-8 * F.max()
    slope = np.polyfit(u[sel] ** 2, np.log(F[sel]), 1)[0]
    assert float(slope) == pytest.approx(-1.0 / u_D**2, rel=5e-3, abs=0)


def test_strong_electron_electron_collisions_give_a_maxwellian():
    # Constant cross section, cold gas, e-e collisions dominant: the EEDF becomes the
    # Maxwellian with k T_e = (2/3)<u>, and the energy balance (E/N) W = elastic loss with
    # mu N = (2 gamma/(3 sqrt(pi) sigma)) T_e^(-1/2) and loss gamma (2m/M) sigma
    # (4/sqrt(pi)) T_e^(3/2) gives T_e = (E/N)/sigma (M/(12 m))^(1/2) = u_D/2, so
    # <u> = 0.75 u_D (derived here from the Maxwellian moments; common practice, no source)
    sigma, mass, en_Td = 1e-19, 4.0, 10.0
    mix = build_mixture([(_gas("DR", mass, [("dr_m", "momentum_transfer", [0.0, 1e5], [sigma, sigma], 0.0, None)]), 1.0)])
    tab = solve_swarm(mix, [en_Td], 0.0, ionization_degree=0.1, electron_density_m3=1e20)
    u_D = math.sqrt(mass * AMU_KG / (3.0 * ELECTRON_MASS_KG)) * en_Td * 1e-21 / sigma
    assert float(tab.mean_energy_eV[0]) == pytest.approx(0.75 * u_D, rel=2e-3, abs=0)
    u, F = tab.energy_eV[0], tab.eedf_eV_m3_2[0]
    Te = 2.0 / 3.0 * tab.mean_energy_eV[0]
    sel = F > 1e-8 * F.max()
    maxwellian = 2.0 / math.sqrt(math.pi) * Te**-1.5 * np.exp(-u[sel] / Te)
    assert np.abs(np.log(F[sel] / maxwellian)).max() < 0.05
    # e-e collisions exchange no net energy (Rosenbluth et al. 1957: the operator conserves energy)
    assert abs(tab.power_fractions["electron_electron"][0]) < 1e-9
    assert tab.power_balance_residual[0] < 1e-6


def _step_rate_maxwellian(sigma0, u0, kT):
    """Rate coefficient of a step cross section for a Maxwellian EEDF (closed form).

    k = gamma int_u0^inf u sigma0 F du with F = (2/sqrt(pi)) kT^(-3/2) exp(-u/kT):
    int_u0^inf u exp(-u/kT) du = kT (u0 + kT) exp(-u0/kT), hence
    k = sigma0 vbar (1 + u0/kT) exp(-u0/kT) with vbar = gamma (2/sqrt(pi)) kT^(1/2)
    = (8 k T/(pi m))^(1/2), the mean speed (common textbook result, no source).
    """
    vbar = math.sqrt(8.0 * kT * ELEMENTARY_CHARGE_C / (math.pi * ELECTRON_MASS_KG))
    return sigma0 * vbar * (1.0 + u0 / kT) * math.exp(-u0 / kT)


def test_step_cross_section_rate_for_a_given_maxwellian():
    sigma0, u0, kT = 2e-20, 0.5, 0.2
    step = Process(id="s", kind="excitation", gas="S", energy_eV=np.array([u0, 1e4]),
                   cross_section_m2=np.array([sigma0, sigma0]), threshold_eV=u0)
    n = 2000
    du = 8.0 / n
    u = (np.arange(n) + 0.5) * du
    F = 2.0 / math.sqrt(math.pi) * kT**-1.5 * np.exp(-u / kT)
    F /= np.sum(np.sqrt(u) * F * du)
    assert float(rate_coefficient(step, u, F)) == pytest.approx(_step_rate_maxwellian(sigma0, u0, kT), rel=1e-3, abs=0)


def test_step_cross_section_rate_from_the_solver():
    # zero field: a trace gas (mole fraction 1e-7) with the step excitation in the Maxwell
    # model gas leaves the EEDF the gas Maxwellian (test above; its inelastic loss is
    # ~1e-4 of the elastic coupling), so the solver's own rate must be the closed form
    T = 2000.0
    kT = BOLTZMANN_EV_K * T
    sigma0, u0 = 2e-20, 0.5
    trace = _gas("TR", 28.0, [
        ("tr_m", "momentum_transfer", [0.0, 1e4], [1e-19, 1e-19], 0.0, None),
        ("tr_x", "excitation", [u0, 1e4], [sigma0, sigma0], u0, None),
    ])
    mix = build_mixture([(_maxwell_gas(1e-13, 4.0), 1.0 - 1e-7), (trace, 1e-7)])
    tab = solve_swarm(mix, [0.0], T)
    assert float(tab.mean_energy_eV[0]) == pytest.approx(1.5 * kT, rel=2e-3, abs=0)
    k = float(tab.rate_coefficients_m3_s["tr_x"][0])
    assert k == pytest.approx(_step_rate_maxwellian(sigma0, u0, kT), rel=5e-3, abs=0)
