"""The Monte Carlo reference swarm (tests/reference/montecarlo.py) against exact results.

Statistical errors are one-sigma standard errors of batch means; the batches are made
longer than the energy-relaxation time (about M / (2 m) collisions), so that they are
nearly independent. Seeds are fixed, so the runs are reproducible; the tolerances are
four of those sigmas (plus a stated model bias where the reference is itself approximate).
"""

from __future__ import annotations

import dataclasses
from math import gamma, sqrt

import numpy as np
import pytest

from plasmazero.data.cross_sections import load_cross_sections
from reference import model_gases, montecarlo as mc

QE = mc.ELEMENTARY_CHARGE_C
ME = mc.ELECTRON_MASS_KG
KB = mc.BOLTZMANN_J_K
K_MAXWELL_M3_S = 1e-13     # collision frequency / N of the Maxwell-model tests (arbitrary)


def wannier_maxwell(k_m3_s, mass_amu, E_N_Td, T_gas_K):
    """Exact drift velocity (m/s) and mean energy (eV) of the Maxwell model.

    ``W = e E / (mu nu)`` and ``<eps> = 3/2 k T + 1/2 (m + M) W**2``, with ``mu`` the
    reduced mass and ``nu = N k`` the (speed-independent) momentum-transfer frequency.

    References
    ----------
    G. H. Wannier, "Motion of gaseous ions in strong electric fields", Bell Syst. Tech. J.
    32, 170 (1953); the mean energy with the m W**2 term included is his eq. for general
    mass ratio.
    """
    M = mass_amu * mc.AMU_KG
    mu = ME * M / (ME + M)
    W = QE * E_N_Td * mc.TD_V_M2 / (mu * k_m3_s)
    energy_J = 1.5 * KB * T_gas_K + 0.5 * (ME + M) * W ** 2
    return W, energy_J / QE


def druyvesteyn(E_N_Td, sigma_m2, mass_amu):
    """Two-term mean energy (eV) and drift velocity (m/s) for a constant cross section.

    Cold gas, elastic collisions only: ``f0(eps) ~ exp(-(eps/a)**2)`` with
    ``a = e E lambda sqrt(M / (3 m))``, ``lambda = 1/(N sigma)``; then
    ``<eps> = a Gamma(5/4)/Gamma(3/4)`` and ``W = (2 e E lambda / (3 m)) <1/v>`` with
    ``<1/v> = Gamma(1/2) / (Gamma(3/4) sqrt(2 a / m))``.

    References
    ----------
    M. J. Druyvesteyn, Physica 10, 61 (1930); L. G. H. Huxley and R. W. Crompton, *The
    Diffusion and Drift of Electrons in Gases* (Wiley, 1974), ch. 3 (drift velocity from
    the two-term distribution). Moments evaluated here in closed form.
    """
    eEl = QE * E_N_Td * mc.TD_V_M2 / sigma_m2          # e E lambda, J
    a = eEl * sqrt(mass_amu * mc.AMU_KG / (3.0 * ME))
    mean = a * gamma(1.25) / gamma(0.75) / QE
    inv_v = gamma(0.5) / (gamma(0.75) * sqrt(2.0 * a / ME))
    return mean, 2.0 * eEl / (3.0 * ME) * inv_v


def close(value, reference, sigma, bias=0.0):
    """|value - reference| within 4 sigma plus a relative model bias."""
    return abs(value - reference) <= 4.0 * sigma + bias * abs(reference)


@pytest.mark.parametrize(
    "mass_amu, E_N_Td, T_gas_K, n_el, relax, sample",
    [
        # m/M = 0.055: the exact centre-of-mass recoil matters at the 5 % level here
        (0.01, 5.0, 0.0, 1000, 1000.0, 4000.0),
        # thermal target velocities; drift and thermal energies comparable
        (0.01, 10.0, 300.0, 1000, 1000.0, 4000.0),
        # a heavier gas: energy relaxation about 460 collisions, batches of 2000
        (0.5, 2.0, 300.0, 300, 4000.0, 20000.0),
    ],
)
def test_maxwell_model_matches_wannier(mass_amu, E_N_Td, T_gas_K, n_el, relax, sample):
    gas = mc.maxwell_model_gas(K_MAXWELL_M3_S, mass_amu)
    W, energy = wannier_maxwell(K_MAXWELL_M3_S, mass_amu, E_N_Td, T_gas_K)
    r = mc.run_swarm(gas, E_N_Td, T_gas_K, n_electrons=n_el, relax_collisions=relax,
                     sample_collisions=sample, n_batches=10, seed=2024)
    # the statistics must be good enough for the comparison to mean something
    assert r.mean_energy_err_eV < 0.01 * energy
    assert r.flux_drift_err_m_s < 0.02 * W
    assert close(r.mean_energy_eV, energy, r.mean_energy_err_eV)
    assert close(r.flux_drift_m_s, W, r.flux_drift_err_m_s)
    assert close(r.bulk_drift_m_s, W, r.bulk_drift_err_m_s)   # no growth: bulk = flux
    assert r.rate_coefficients_m3_s["maxwell_elastic"] == pytest.approx(K_MAXWELL_M3_S, rel=1e-2)


def test_constant_attachment_leaves_the_maxwell_swarm_unchanged():
    """An attachment frequency independent of speed removes electrons without selecting any.

    The ensemble is refilled by cloning; the distribution, and hence Wannier's W and mean
    energy, must stay those of the elastic Maxwell model, the measured attachment rate
    coefficient must equal the input, and bulk and flux drift must agree (exact results,
    common practice, no source beyond Wannier 1953).
    """
    base = mc.maxwell_model_gas(K_MAXWELL_M3_S, 0.01)
    k_att = 0.2 * K_MAXWELL_M3_S
    gas = dataclasses.replace(
        base, ids=("maxwell_elastic", "flat_attachment"), kinds=np.array([0, 3], dtype=np.int64),
        threshold_eV=np.zeros(2),
        rate_m3_s=np.vstack([base.rate_m3_s, np.full(base.rate_m3_s.shape[1], k_att)]))
    E_N_Td = 5.0
    W, energy = wannier_maxwell(K_MAXWELL_M3_S, 0.01, E_N_Td, 0.0)
    r = mc.run_swarm(gas, E_N_Td, 0.0, n_electrons=1000, relax_collisions=1000.0,
                     sample_collisions=4000.0, n_batches=10, seed=99)
    ka, ka_err = r.rate_of_kind(gas, "attachment")
    assert ka_err < 0.01 * k_att
    assert close(ka, k_att, ka_err)
    assert close(r.mean_energy_eV, energy, r.mean_energy_err_eV)
    assert close(r.flux_drift_m_s, W, r.flux_drift_err_m_s)
    assert close(r.bulk_drift_m_s, W, r.bulk_drift_err_m_s)


def test_constant_cross_section_matches_druyvesteyn(tmp_path):
    """Energy-dependent collision frequency (exercises the energy-dependent majorant).

    The two-term Druyvesteyn result is exact up to corrections of order m/M = 1.1e-3 for
    this 0.5 amu gas; the allowed model bias is 0.3 %.
    """
    sigma, mass = 1e-19, 0.5
    xs = load_cross_sections(model_gases.constant_mean_free_path_yaml(tmp_path, sigma, mass))
    E_N_Td = 10.0
    energy, W = druyvesteyn(E_N_Td, sigma, mass)
    gas = mc.gas_from_cross_sections(xs, 40.0 * energy)
    r = mc.run_swarm(gas, E_N_Td, 0.0, n_electrons=600, relax_collisions=4000.0,
                     sample_collisions=20000.0, n_batches=10, init_energy_eV=energy, seed=7)
    assert r.mean_energy_err_eV < 0.006 * energy
    assert close(r.mean_energy_eV, energy, r.mean_energy_err_eV, bias=0.003)
    assert close(r.flux_drift_m_s, W, r.flux_drift_err_m_s, bias=0.003)
    # null collisions: the energy-dependent majorant keeps them a minority
    assert r.n_null_collisions < 0.5 * r.n_real_collisions


@pytest.mark.parametrize("sharing", ["equal", "one_takes_all"])
def test_energy_balance_with_ionization(tmp_path, sharing):
    """Power from the field = inelastic losses + elastic recoil + energy of new electrons.

    For a swarm growing at the net ionization frequency ``N k_i`` with a stationary
    normalised distribution, ``(E/N) W_flux = sum_j k_j eps_j + k_i <eps> +
    k_el (2 m M / (m + M)**2) <eps>``, the last term exact for a Maxwell-model elastic
    cross section as in the Lucas-Saelee gas (energy balance, common practice; elastic
    loss of the Maxwell model as in Wannier 1953). Tolerance 0.5 %: the inelastic
    recoil (order m/M of the inelastic terms) is neglected.
    """
    xs = model_gases.lucas_saelee(tmp_path, 0.5)
    gas = mc.gas_from_cross_sections(xs, 300.0, 30001)
    E_N_Td = 40.0
    r = mc.run_swarm(gas, E_N_Td, 0.0, sharing=sharing, n_electrons=1000, relax_collisions=1000.0,
                     sample_collisions=4000.0, n_batches=10, init_energy_eV=5.0, seed=5)
    k = r.rate_coefficients_m3_s
    M = xs.mass_amu * mc.AMU_KG
    gain = E_N_Td * mc.TD_V_M2 * r.flux_drift_m_s
    inelastic = k["ls_excitation"] * 8.5 + k["ls_ionization"] * 15.6
    growth = k["ls_ionization"] * r.mean_energy_eV
    elastic = k["ls_elastic"] * 2.0 * ME * M / (ME + M) ** 2 * r.mean_energy_eV
    assert growth > 0.03 * gain            # the growth term matters at this field
    assert (inelastic + growth + elastic) == pytest.approx(gain, rel=5e-3)
    # creation of electrons where the swarm is energetic (the front) moves the centroid
    assert r.bulk_drift_m_s > r.flux_drift_m_s + 4.0 * (r.bulk_drift_err_m_s + r.flux_drift_err_m_s)
