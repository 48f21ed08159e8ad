"""Independent reference: the reduced mobility of electrons in thermal equilibrium with the gas.

N mu = gamma/(3 kT) int u F(u)/sigma_m(u) du over a Maxwellian F at the gas temperature
(Huxley & Crompton 1974, The Diffusion and Drift of Electrons in Gases, ch. 3), with
sigma_m the elastic momentum transfer plus every inelastic cross section and the
detailed-balance reverses (Reid 1979, Aust. J. Phys. 32, 231, eq. 4; Klein & Rosseland 1921),
weighted by Boltzmann populations of the levels that have a weight ratio:
p_k = w_k exp(-u_k/kT)/Z, Z = 1 + sum_k w_k exp(-u_k/kT), forward processes on the ground
fraction 1 - sum_k p_k, reverse factor p_k/w_k. Plain numpy quadrature, test-only code.
"""

import math

import numpy as np

K_B = 1.380649e-23
E_CHARGE = 1.602176634e-19
M_E = 9.1093837015e-31


def thermal_reduced_mobility(processes, T_gas_K, n_points=40001):
    """N mu, 1/(m V s), of a single gas's processes (CrossSectionSet.processes) at T_gas_K."""
    kT = K_B * T_gas_K / E_CHARGE
    boltz = {p.id: p.weight_ratio * math.exp(-p.threshold_eV / kT)
             for p in processes if p.weight_ratio is not None}
    z = 1.0 + sum(boltz.values())
    ground = 1.0 - sum(boltz.values()) / z
    u = np.linspace(1e-6, 40 * kT, n_points)
    sig = np.zeros_like(u)
    for p in processes:
        if p.kind == "momentum_transfer":
            sig += p.sigma_m2(u)
        else:
            sig += ground * p.sigma_m2(u)
            if p.id in boltz:
                rev = boltz[p.id] / z / p.weight_ratio
                sig += rev * (u + p.threshold_eV) / u * p.sigma_m2(u + p.threshold_eV)
    F = 2.0 / math.sqrt(math.pi) * kT ** -1.5 * np.exp(-u / kT)
    gamma = math.sqrt(2.0 * E_CHARGE / M_E)
    return gamma / (3.0 * kT) * np.trapezoid(u * F / sig, u)
