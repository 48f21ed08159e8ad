"""Neutral transport to surfaces: diffusion coefficients and wall-loss frequencies.

SI units: densities m^-3, lengths m, diffusion coefficients m^2/s, frequencies 1/s.
"""

from __future__ import annotations

import math

from .constants import ATOMIC_MASS_KG, BOLTZMANN_J_K

#: First zero of the Bessel function J0, for the diffusion length of a long cylinder.
BESSEL_J0_ZERO = 2.404825557695773


def mean_speed_m_s(T_K, mass_amu):
    """Mean thermal speed of a Maxwellian gas, v = sqrt(8 k T / (pi m))."""
    return math.sqrt(8.0 * BOLTZMANN_J_K * T_K / (math.pi * mass_amu * ATOMIC_MASS_KG))


def impingement_flux_m2_s(density_m3, T_K, mass_amu):
    """Flux of molecules striking a surface from a Maxwellian gas, n v_mean / 4 (kinetic theory)."""
    return 0.25 * density_m3 * mean_speed_m_s(T_K, mass_amu)


def hard_sphere_diffusion_m2_s(T_K, gas_density_m3, mass1_amu, mass2_amu, diameter1_m, diameter2_m):
    """Binary diffusion coefficient of hard spheres, first Chapman-Enskog approximation.

    D12 = 3 / (8 n sigma12^2) sqrt(k T / (2 pi mu12)),  sigma12 = (d1 + d2) / 2.

    References
    ----------
    Hirschfelder, J. O., Curtiss, C. F. & Bird, R. B. (1954), Molecular Theory of Gases and
    Liquids, Wiley, eq. (8.2-44) with the rigid-sphere collision integral.
    """
    mu = mass1_amu * mass2_amu / (mass1_amu + mass2_amu) * ATOMIC_MASS_KG
    sigma = 0.5 * (diameter1_m + diameter2_m)
    return 3.0 / (8.0 * gas_density_m3 * sigma**2) * math.sqrt(BOLTZMANN_J_K * T_K / (2.0 * math.pi * mu))


def wall_loss_frequency_s(diffusion_m2_s, diffusion_length_m, volume_to_surface_m, sticking, mean_speed):
    """Loss frequency of a species to walls with sticking probability ``sticking``.

    1 / nu = Lambda^2 / D + (V / A) 2 (2 - gamma) / (v_mean gamma)

    the diffusion time to the wall in series with the surface reaction time, valid from
    the diffusion-limited (gamma -> 1) to the reaction-limited (gamma -> 0) regime.

    References
    ----------
    Chantry, P. J. (1987), A simple formula for diffusion calculations involving wall
    reflection and low density, J. Appl. Phys. 62, 1141-1148.
    """
    if sticking <= 0.0:
        return 0.0
    if sticking > 1.0:
        raise ValueError("sticking probability must be in (0, 1]")
    t_diff = diffusion_length_m**2 / diffusion_m2_s
    t_surf = volume_to_surface_m * 2.0 * (2.0 - sticking) / (mean_speed * sticking)
    return 1.0 / (t_diff + t_surf)


def packed_bed_void_geometry(porosity, pellet_diameter_m):
    """Diffusion length and volume-to-surface ratio of the voids of a packed bed of spheres.

    The voids are taken as cylindrical channels of the bed's hydraulic diameter
    d_h = (2/3) eps / (1 - eps) d_p (Carman-Kozeny), so that V/A = d_h / 4 and the
    fundamental diffusion length is Lambda = (d_h / 2) / 2.405.

    Returns
    -------
    (diffusion_length_m, volume_to_surface_m)

    References
    ----------
    Carman, P. C. (1937), Fluid flow through granular beds, Trans. Inst. Chem. Eng. 15, 150.
    Chantry (1987), J. Appl. Phys. 62, 1141, for the use of Lambda with the wall loss.
    """
    if not 0.0 < porosity < 1.0:
        raise ValueError("porosity must be between 0 and 1")
    if pellet_diameter_m <= 0.0:
        raise ValueError("pellet_diameter_m must be positive")
    d_h = 2.0 / 3.0 * porosity / (1.0 - porosity) * pellet_diameter_m
    return 0.5 * d_h / BESSEL_J0_ZERO, 0.25 * d_h


def lennard_jones_omega22(T_star):
    """Reduced collision integral Omega(2,2)* of the Lennard-Jones (12-6) potential.

    Fit of Neufeld, Janzen & Aziz (1972), J. Chem. Phys. 57, 1100 (constants recalled from
    the publication; stated accuracy 0.1 % for 0.3 <= T* <= 100), T* = k T / epsilon.
    """
    return (1.16145 * T_star ** -0.14874 + 0.52487 * math.exp(-0.77320 * T_star)
            + 2.16178 * math.exp(-2.43787 * T_star))


def eucken_thermal_conductivity_W_m_K(T_K, mass_amu, diameter_m, cp_J_K, omega22=1.0):
    """Thermal conductivity of a dilute gas: Chapman-Enskog viscosity with Eucken's factor.

    eta = (5/16) sqrt(pi m k T) / (pi d^2 Omega(2,2)*)   (first Chapman-Enskog
    approximation; Omega(2,2)* = 1 for rigid spheres, :func:`lennard_jones_omega22` for a
    Lennard-Jones gas), lambda = (eta / m) (c_v + 9/4 k) with c_v = c_p - k per molecule
    (Eucken's correction for internal degrees of freedom; for a monatomic gas it is the
    exact first approximation lambda = 15/4 k eta / m). An estimate, not a
    transport-property model: Eucken's factor is known to err by 10-20 % for polyatomic
    molecules.

    Parameters
    ----------
    T_K : float
        Gas temperature, K.
    mass_amu : float
        Molecular mass, amu.
    diameter_m : float
        Collision diameter, m.
    cp_J_K : float
        Heat capacity at constant pressure per molecule, J/K.

    References
    ----------
    Chapman, S. & Cowling, T. G. (1970), The Mathematical Theory of Non-uniform Gases,
    3rd ed., Cambridge, section 10.21 (rigid spheres); Hirschfelder, Curtiss & Bird (1954),
    Molecular Theory of Gases and Liquids, Wiley, eq. (8.2-18); Eucken, A. (1913), Phys. Z.
    14, 324.
    """
    m = mass_amu * ATOMIC_MASS_KG
    eta = 5.0 / 16.0 * math.sqrt(math.pi * m * BOLTZMANN_J_K * T_K) / (math.pi * diameter_m**2 * omega22)
    return eta / m * (cp_J_K - BOLTZMANN_J_K + 2.25 * BOLTZMANN_J_K)


def conduction_heat_loss_W_m3_K(thermal_conductivity_W_m_K, diffusion_length_m):
    """Heat-transfer coefficient of conduction to walls at a fixed temperature, W m^-3 K^-1.

    G = lambda / Lambda^2: the decay rate of the fundamental mode of the heat equation in a
    region of diffusion length Lambda (Lambda = gap / pi between two plates), times the
    heat capacity per volume, so that n c_p dT/dt = -G (T - T_wall) for the mean
    temperature excess (the same diffusion-length argument as for particle losses;
    e.g. Carslaw & Jaeger 1959, Conduction of Heat in Solids, Oxford, section 3.3).
    """
    if diffusion_length_m <= 0.0:
        raise ValueError("diffusion_length_m must be positive")
    return thermal_conductivity_W_m_K / diffusion_length_m**2
