"""Public facade of the electron Boltzmann solver: re-exports :mod:`plasmazero.physics.boltzmann`."""

from plasmazero.physics.boltzmann import (  # noqa: F401
    DEFAULT_CELLS,
    KIND_CODES,
    ConvergenceError,
    EnergyGrid,
    GridOperator,
    Mixture,
    SwarmTable,
    build_mixture,
    build_operator,
    cumulative_u_sigma,
    ladder_energy,
    level_populations,
    rate_coefficient,
    solve_swarm,
    uniform_grid,
)

__all__ = [
    "DEFAULT_CELLS", "KIND_CODES", "ConvergenceError", "EnergyGrid", "GridOperator", "Mixture",
    "SwarmTable", "build_mixture", "build_operator", "cumulative_u_sigma", "ladder_energy",
    "level_populations", "rate_coefficient", "solve_swarm", "uniform_grid",
]
