"""Physical constants used by the electron Boltzmann solver (SI, energies in eV).

All values come from ``scipy.constants``, which holds the CODATA 2018 recommended values
(E. Tiesinga, P. J. Mohr, D. B. Newell and B. N. Taylor, Rev. Mod. Phys. 93, 025010, 2021).

References
----------
E. Tiesinga et al., "CODATA recommended values of the fundamental physical constants:
2018", Rev. Mod. Phys. 93, 025010 (2021).
"""

from __future__ import annotations

import math

from scipy import constants as _c

#: elementary charge, C
ELEMENTARY_CHARGE_C = _c.e
#: electron mass, kg
ELECTRON_MASS_KG = _c.m_e
#: atomic mass constant, kg
AMU_KG = _c.atomic_mass
#: vacuum permittivity, F/m
EPSILON_0_F_M = _c.epsilon_0
#: Boltzmann constant in eV/K
BOLTZMANN_EV_K = _c.k / _c.e
#: gamma = (2 e / m_e)^(1/2): electron speed is gamma * sqrt(energy_eV), in m s^-1 eV^-1/2
GAMMA_M_S_EV = math.sqrt(2.0 * _c.e / _c.m_e)
#: one townsend in V m2
TOWNSEND_V_M2 = 1.0e-21
