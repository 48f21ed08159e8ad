"""Two-term electron Boltzmann solver (Hagelaar and Pitchford 2005, Plasma Sources Sci. Technol. 14, 722).

Re-exports only; see :mod:`.solver` for the method and :mod:`.swarm` for the outputs.
"""

from .grid import EnergyGrid, cumulative_u_sigma, ladder_energy, uniform_grid
from .mixture import KIND_CODES, Mixture, build_mixture, level_populations
from .operator import GridOperator, build_operator
from .solver import DEFAULT_CELLS, ConvergenceError, solve_swarm
from .swarm import SwarmTable, rate_coefficient

__all__ = [
    "DEFAULT_CELLS", "KIND_CODES", "ConvergenceError", "EnergyGrid", "GridOperator", "Mixture",
    "SwarmTable", "build_mixture", "build_operator", "cumulative_u_sigma", "ladder_energy",
    "level_populations", "rate_coefficient", "solve_swarm", "uniform_grid",
]
