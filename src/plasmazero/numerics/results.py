"""The record an integration returns, its cost counters, status codes and failure exception."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: status codes of an integration (``KineticsResult.status``)
SUCCESS = 0
MAX_STEPS = 1
STEP_TOO_SMALL = 2
NON_FINITE_STATE = 3
#: internal: the compiled loop returns to the driver, which continues
TABLE_STALE = 10
BUFFER_FULL = 11

#: why the last step attempt was rejected (for the failure message)
CAUSE_NONE = 0
CAUSE_ERROR = 1
CAUSE_NEGATIVE = 2
CAUSE_SINGULAR = 3
CAUSE_NON_FINITE = 4
CAUSE_NEWTON = 5

STATUS_TEXT = {
    SUCCESS: "success",
    MAX_STEPS: "maximum number of steps reached",
    STEP_TOO_SMALL: "step size became too small",
    NON_FINITE_STATE: "right-hand side or Jacobian not finite at an accepted state",
}
CAUSE_TEXT = {
    CAUSE_NONE: "",
    CAUSE_ERROR: "error estimate above tolerance",
    CAUSE_NEGATIVE: "significant negative density",
    CAUSE_SINGULAR: "singular iteration matrix",
    CAUSE_NON_FINITE: "non-finite values in a stage",
    CAUSE_NEWTON: "Newton iteration did not converge with a fresh Jacobian",
}


@dataclass(frozen=True)
class Counters:
    """Cost of an integration.

    Attributes
    ----------
    n_steps : int
        Step attempts (accepted + rejected).
    n_accepted, n_rejected : int
        Accepted and rejected attempts.
    n_rejected_negative : int
        Rejections because a density fell below -atol (included in ``n_rejected``).
    n_rhs : int
        Right-hand-side evaluations (stages, finite-difference time derivatives and
        starting-step estimates; the Jacobian call's own evaluation of f included).
    n_jac : int
        Analytic Jacobian evaluations.
    n_lu : int
        LU factorisations.
    n_rate_quadrature : int
        Rate evaluations at quadrature nodes for the integrated reaction rates.
    n_table_rebuilds : int
        Calls of ``rebuild_table``.
    n_lu_sparse : int
        Factorisations done by the sparse LU (included in ``n_lu``).
    n_lu_dense_fallback : int
        Steps whose sparse factorisation was refused (tiny pivot, growth, Sherman-Morrison
        denominator) and redone densely (included in ``n_lu``).
    """

    n_steps: int = 0
    n_accepted: int = 0
    n_rejected: int = 0
    n_rejected_negative: int = 0
    n_rhs: int = 0
    n_jac: int = 0
    n_lu: int = 0
    n_rate_quadrature: int = 0
    n_table_rebuilds: int = 0
    n_lu_sparse: int = 0
    n_lu_dense_fallback: int = 0


@dataclass(frozen=True)
class KineticsResult:
    """Densities and diagnostics of one integration (SI units).

    Attributes
    ----------
    species : tuple of str
        Column order of ``densities_m3`` (the mechanism's species).
    reactions : tuple of str
        Column order of ``integrated_rates_m3``.
    times_s : ndarray (n_t,)
        Output times, s (``t_eval_s``, or every accepted step when none was given).
    densities_m3 : ndarray (n_t, n_s)
        Number densities, m^-3 (dense output between steps, clipped at 0).
    T_gas_K : ndarray (n_t,)
        Gas temperature, K (fixed input for now).
    E_N_Td : ndarray (n_t,)
        Reduced field, Td (the left limit at a jump of the profile).
    mean_energy_eV : ndarray (n_t,)
        Mean electron energy from the table, eV (NaN without an electron table).
    electron_drift_velocity_m_s : ndarray (n_t,)
        Drift velocity from the table, m/s.
    electron_density_m3 : ndarray (n_t,)
        Density of the electron species, m^-3 (zeros if the mechanism has none).
    integrated_rates_m3 : ndarray (n_t, n_r)
        Cumulative integral of each reaction rate from the first time, m^-3:
        row k is the integral of r_j over [times_s[0], times_s[k]].
    integrated_linear_m3 : ndarray (n_t, n_s)
        Cumulative integral of the linear terms (losses, loss products, source) of each
        species, m^-3, same layout.
    clipped_m3 : ndarray (n_s,)
        Total density added by clipping small negative values to zero, m^-3.
    quasi_neutrality : float
        Maximum over the accepted steps of |sum q_i n_i| / max(positive, negative charge
        density) (0 when no charged species are above their absolute tolerance).
    counters : Counters
    status : int
        ``SUCCESS`` (0) or a failure code of this module.
    message : str
        One line: "success" or what failed, at which time, with which step size and
        which species had the largest error.
    table_rebuild_times_s : tuple of float
        Times at which the electron table was rebuilt for a new composition.
    failure_time_s, failure_step_s : float
        Time reached and last step size tried (NaN on success).
    failure_species : str
        Species with the largest scaled error in the last rejected attempt ("" on success).
    expansion_factor : ndarray (n_t,)
        phi(t) = V(t) / V(t0) of the gas parcel with ``constant_total_density``
        (exp of the integral of S/N dt); ones otherwise.
    integrated_electron_density_s_m3 : ndarray (n_t,)
        Cumulative integral of the electron density, s m^-3 (zeros without electrons).
    integrated_rates_parcel_m3 : ndarray (n_t, n_r)
        Cumulative integral of r_j phi dt: reactions per initial volume, m^-3 (molar
        bookkeeping of an expanding parcel); equal to ``integrated_rates_m3`` when
        ``constant_total_density`` is off.
    linear_solver : str
        "dense" or "sparse": the linear algebra the stepper used.
    energy_equation : str
        "" (fixed gas temperature), "isobaric" or "isochoric".
    electron_energy_J_m3 : ndarray (n_t,)
        With an energy equation: cumulative integral of the electron power e n_e w E times
        phi, J per initial volume (zeros otherwise).
    heat_loss_J_m3 : ndarray (n_t,)
        With an energy equation: cumulative integral of the wall heat loss times phi, J per
        initial volume (zeros otherwise).
    electron_energy : str
        "local_field" or "local_mean_energy".
    effective_E_N_Td : ndarray (n_t,)
        The field at which the table gives the electrons' mean energy, Td: E/N itself with
        the local field approximation, (E/N)_eff with the local mean energy one.
    """

    species: tuple
    reactions: tuple
    times_s: np.ndarray
    densities_m3: np.ndarray
    T_gas_K: np.ndarray
    E_N_Td: np.ndarray
    mean_energy_eV: np.ndarray
    electron_drift_velocity_m_s: np.ndarray
    electron_density_m3: np.ndarray
    integrated_rates_m3: np.ndarray
    integrated_linear_m3: np.ndarray
    clipped_m3: np.ndarray
    quasi_neutrality: float
    counters: Counters
    status: int
    message: str
    table_rebuild_times_s: tuple = ()
    failure_time_s: float = float("nan")
    failure_step_s: float = float("nan")
    failure_species: str = ""
    expansion_factor: np.ndarray = None
    integrated_electron_density_s_m3: np.ndarray = None
    integrated_rates_parcel_m3: np.ndarray = None
    linear_solver: str = ""
    energy_equation: str = ""
    electron_energy_J_m3: np.ndarray = None
    heat_loss_J_m3: np.ndarray = None
    electron_energy: str = "local_field"
    effective_E_N_Td: np.ndarray = None

    @property
    def success(self):
        """True when the integration reached the end time."""
        return self.status == SUCCESS

    def density(self, name):
        """Density of species ``name`` at the output times, m^-3."""
        return self.densities_m3[:, self.species.index(name)]

    def rates_per_interval_m3(self):
        """Integral of each rate over each output interval, m^-3, shape (n_t - 1, n_r)."""
        return np.diff(self.integrated_rates_m3, axis=0)


class IntegrationError(RuntimeError):
    """The integration failed; ``result`` holds everything computed up to the failure.

    Attributes
    ----------
    result : KineticsResult
    status : int
    time_s, step_s : float
    species : str
    """

    def __init__(self, result):
        self.result = result
        self.status = result.status
        self.time_s = result.failure_time_s
        self.step_s = result.failure_step_s
        self.species = result.failure_species
        super().__init__(result.message)
