"""Discharge electrics and neutral transport against hand computations and limits."""

import math

import numpy as np
import pytest

from plasmazero.physics import discharge, transport
from plasmazero.physics.constants import BOLTZMANN_J_K


def test_manley_worked_example_by_hand():
    # Worked by hand from Manley's formula (Manley 1943, Trans. Electrochem. Soc. 84, 83):
    # C_d = 100 pF, C_g = 20 pF, U_b = 3 kV, U_0 = 10 kV, f = 10 kHz
    # U_min = 3000 * 120/100 = 3600 V; P = 4 * 1e4 * 1e-10 * 3000 * (10000 - 3600) = 76.8 W
    p = discharge.manley_power_W(10e3, 10e3, 3e3, 100e-12, 20e-12)
    assert p == pytest.approx(76.8, rel=1e-12)
    assert discharge.manley_minimum_voltage_V(3e3, 100e-12, 20e-12) == pytest.approx(3600.0, rel=1e-12)
    assert discharge.manley_power_W(3.5e3, 10e3, 3e3, 100e-12, 20e-12) == 0.0


def _lissajous_power(u0, f, ub, cd, cg, n=200_000):
    """Independent check: step the ideal DBD equivalent circuit through two periods.

    The gap is a capacitor C_g in series with the dielectric C_d until the gap voltage
    reaches +-U_b; then it holds U_b and the charge flows through the dielectric alone
    (the ideal parallelogram Q-V figure). Power = f * closed integral of U dQ.
    """
    t = np.linspace(0.0, 2.0 / f, n)
    u = u0 * np.sin(2 * math.pi * f * t)
    q = 0.0
    ug = 0.0
    qs = np.empty(n)
    for i in range(n):
        du = u[i] - (u[i - 1] if i else 0.0)
        # trial: no discharge, the series capacitance carries the change
        dq = du * cd * cg / (cd + cg)
        ug_trial = ug + dq / cg
        if abs(ug_trial) > ub:
            ug_new = math.copysign(ub, ug_trial)
            # charge so that the dielectric voltage follows: U = U_d + U_g, Q = C_d U_d
            dq = cd * (u[i] - ug_new) - q
            ug = ug_new
        else:
            ug = ug_trial
        q += dq
        qs[i] = q
    half = n // 2
    uu, qq = u[half:], qs[half:]
    return f * abs(np.sum(0.5 * (uu[1:] + uu[:-1]) * np.diff(qq)))


def test_manley_matches_equivalent_circuit_simulation():
    # independent computation (circuit stepping written for this test) vs Manley 1943
    args = (8e3, 5e3, 2.5e3, 150e-12, 40e-12)
    assert discharge.manley_power_W(*args) == pytest.approx(_lissajous_power(*args), rel=2e-3)


def test_capacitances_closed_forms():
    # parallel plate and coaxial capacitor formulas (any electrostatics textbook; common practice)
    assert discharge.planar_capacitance_F(1e-2, 1e-3, 4.0) == pytest.approx(8.8541878128e-12 * 40.0)
    c = discharge.coaxial_capacitance_F(0.1, 0.01, 0.011, 4.0)
    # thin shell: ln(1.1) ~ 0.1/1.05 -> close to the planar value with the mean radius
    c_planar = discharge.planar_capacitance_F(2 * math.pi * 0.0105 * 0.1, 0.001, 4.0)
    assert c == pytest.approx(c_planar, rel=2e-3)


def test_wall_loss_limits():
    # Chantry 1987, J. Appl. Phys. 62, 1141: reaction-limited loss -> gamma v A / (4 V)
    v = transport.mean_speed_m_s(300.0, 16.0)
    lam, v_over_a = 1e-3, 2e-3
    nu = transport.wall_loss_frequency_s(1e3, lam, v_over_a, 1e-6, v)
    assert nu == pytest.approx(1e-6 * v / (4 * v_over_a), rel=1e-5)
    # diffusion-limited (gamma = 1, slow diffusion): -> D / Lambda^2
    nu = transport.wall_loss_frequency_s(1e-9, lam, v_over_a, 1.0, v)
    assert nu == pytest.approx(1e-9 / lam**2, rel=1e-6)
    assert transport.wall_loss_frequency_s(1e-5, lam, v_over_a, 0.0, v) == 0.0


def test_mean_speed_and_flux():
    # kinetic theory: v = sqrt(8kT/(pi m)); N2 at 300 K is about 476 m/s (common practice, no source)
    assert transport.mean_speed_m_s(300.0, 28.0134) == pytest.approx(476.2, rel=2e-3)
    n = 1e20
    assert transport.impingement_flux_m2_s(n, 300.0, 28.0134) == pytest.approx(
        n * math.sqrt(8 * BOLTZMANN_J_K * 300 / (math.pi * 28.0134 * 1.66053906660e-27)) / 4)


def test_hard_sphere_self_diffusion_of_argon():
    # measured self-diffusion of Ar at 273.15 K, 1 atm: about 1.57e-5 m2/s (value from memory of
    # Hirschfelder, Curtiss & Bird 1954, table of self-diffusion); hard-sphere diameter 3.64e-10 m
    # from viscosity (from memory of the same book). The rigid-sphere model is known to be off by
    # some 10 %, hence the tolerance.
    n = 101325.0 / (BOLTZMANN_J_K * 273.15)
    d = transport.hard_sphere_diffusion_m2_s(273.15, n, 39.948, 39.948, 3.64e-10, 3.64e-10)
    assert d == pytest.approx(1.57e-5, rel=0.15)


def test_packed_bed_geometry():
    # Carman (1937) hydraulic diameter: eps = 0.4, d_p = 3 mm -> d_h = 2/3 * 0.4/0.6 * 3 mm = 1.333 mm
    lam, v_over_a = transport.packed_bed_void_geometry(0.4, 3e-3)
    assert v_over_a == pytest.approx(1.3333e-3 / 4, rel=1e-4)
    assert lam == pytest.approx(0.5 * 1.3333e-3 / 2.404825557695773, rel=1e-4)
    with pytest.raises(ValueError):
        transport.packed_bed_void_geometry(1.2, 3e-3)


@pytest.mark.parametrize("T_star", [0.5, 1.0, 1.5, 3.0, 10.0, 50.0])
def test_lennard_jones_collision_integral_against_chemicals(T_star):
    # the chemicals library's implementation of the same Neufeld, Janzen & Aziz (1972) fit:
    # our constants are recalled, so agreement to 0.2 % checks them
    from chemicals.lennard_jones import collision_integral_Neufeld_Janzen_Aziz
    ref = collision_integral_Neufeld_Janzen_Aziz(T_star, 2, 2)
    assert transport.lennard_jones_omega22(T_star) == pytest.approx(ref, rel=2e-3)


@pytest.mark.parametrize("cas, mass_amu, sigma_m, eps_K, cp_R", [
    ("7440-37-1", 39.948, 3.542e-10, 93.3, 2.5),        # argon
    ("124-38-9", 44.01, 3.941e-10, 195.2, 4.466),       # CO2 (cp/R at 300 K, NIST-JANAF, from memory)
    ("7782-44-7", 31.999, 3.467e-10, 106.7, 3.534),     # O2
])
def test_eucken_conductivity_against_perrys_table(cas, mass_amu, sigma_m, eps_K, cp_R):
    # Perry's Chemical Engineers' Handbook, 8th ed., Table 2-314 (the copy in the chemicals
    # library, DIPPR equation 102) at 300 K; Eucken's estimate within 15 %
    from chemicals import thermal_conductivity as tc
    from chemicals.dippr import EQ102
    tc._load_k_data()
    c = tc.k_data_Perrys_8E_2_314.loc[cas]
    ref = float(EQ102(300.0, *[float(c[k]) for k in ("C1", "C2", "C3", "C4")]))
    lam = transport.eucken_thermal_conductivity_W_m_K(
        300.0, mass_amu, sigma_m, cp_R * 1.380649e-23, transport.lennard_jones_omega22(300.0 / eps_K))
    assert lam == pytest.approx(ref, rel=0.15)
