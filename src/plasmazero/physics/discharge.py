"""Electrical relations of a dielectric-barrier discharge (DBD).

All quantities SI: capacitances in F, voltages in V (amplitudes), frequencies in Hz,
powers in W, lengths in m.
"""

from __future__ import annotations

import math

from .constants import VACUUM_PERMITTIVITY_F_M


def planar_capacitance_F(area_m2, thickness_m, relative_permittivity=1.0):
    """Capacitance of a planar layer, C = eps0 eps_r A / d."""
    _positive(area_m2=area_m2, thickness_m=thickness_m, relative_permittivity=relative_permittivity)
    return VACUUM_PERMITTIVITY_F_M * relative_permittivity * area_m2 / thickness_m


def coaxial_capacitance_F(length_m, inner_radius_m, outer_radius_m, relative_permittivity=1.0):
    """Capacitance of a coaxial layer between two radii, C = 2 pi eps0 eps_r L / ln(r_out/r_in)."""
    _positive(length_m=length_m, inner_radius_m=inner_radius_m, relative_permittivity=relative_permittivity)
    if outer_radius_m <= inner_radius_m:
        raise ValueError("outer_radius_m must exceed inner_radius_m")
    return 2.0 * math.pi * VACUUM_PERMITTIVITY_F_M * relative_permittivity * length_m / math.log(
        outer_radius_m / inner_radius_m)


def manley_minimum_voltage_V(burning_voltage_V, dielectric_capacitance_F, gap_capacitance_F):
    """Applied amplitude below which a DBD does not ignite: U_min = U_b (C_d + C_g) / C_d.

    References
    ----------
    Manley, T. C. (1943), The electric characteristics of the ozonator discharge,
    Trans. Electrochem. Soc. 84, 83-96.
    """
    _positive(burning_voltage_V=burning_voltage_V, dielectric_capacitance_F=dielectric_capacitance_F,
              gap_capacitance_F=gap_capacitance_F)
    return burning_voltage_V * (dielectric_capacitance_F + gap_capacitance_F) / dielectric_capacitance_F


def manley_power_W(amplitude_V, frequency_Hz, burning_voltage_V, dielectric_capacitance_F, gap_capacitance_F):
    """Mean discharge power of a sinusoidally driven DBD from Manley's equation.

    P = 4 f C_d U_b [U_0 - U_b (C_d + C_g) / C_d]   for U_0 > U_min, else 0,

    with U_0 the applied voltage amplitude, U_b the burning (gap) voltage, C_d the
    dielectric and C_g the gas-gap capacitance. The relation follows from the
    parallelogram charge-voltage (Lissajous) figure of an ideal DBD.

    References
    ----------
    Manley, T. C. (1943), Trans. Electrochem. Soc. 84, 83-96.
    Kogelschatz, U. (2003), Dielectric-barrier discharges: their history, discharge
    physics, and industrial applications, Plasma Chem. Plasma Process. 23, 1-46, eq. (3).
    """
    _positive(amplitude_V=amplitude_V, frequency_Hz=frequency_Hz)
    u_min = manley_minimum_voltage_V(burning_voltage_V, dielectric_capacitance_F, gap_capacitance_F)
    if amplitude_V <= u_min:
        return 0.0
    return 4.0 * frequency_Hz * dielectric_capacitance_F * burning_voltage_V * (amplitude_V - u_min)


def burning_voltage_V(breakdown_E_N_Td, gas_density_m3, gap_m):
    """Gap voltage during discharge, U_b = (E/N)_b N d (uniform-field approximation)."""
    _positive(breakdown_E_N_Td=breakdown_E_N_Td, gas_density_m3=gas_density_m3, gap_m=gap_m)
    return breakdown_E_N_Td * 1e-21 * gas_density_m3 * gap_m


def _positive(**values):
    for name, value in values.items():
        if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
            raise ValueError(f"{name} must be a positive finite number, got {value!r}")
