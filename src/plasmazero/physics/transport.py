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
