"""Swarm parameters from a converged EEDF: transport, rates, Townsend coefficients, power balance.

All quantities are the *flux* coefficients of Hagelaar and Pitchford (2005, transport
coefficients), evaluated on the same faces and with the same exponential-scheme
face values as the discrete equations, so that the identities below hold to rounding:

* reduced mobility  mu N = -(gamma/3) int u/sigma~ dF0/du du             (1/(m V s))
* reduced diffusion D N  = (gamma/3) int u/sigma~ F0 du                  (1/(m s))
* flux drift velocity W = (E/N) mu N - (alpha/N) D N                     (m/s)
  (alpha = 0 for temporal growth and no growth; sigma~ includes the temporal growth
  frequency, sigma~ = sigma_m otherwise)
* rate coefficient k = gamma int u sigma F0 du                           (m3/s)
* Townsend coefficients alpha/N = sum_k x_k k_ion,k / W, eta/N = sum_k x_k k_att,k / W
  (m2); with spatial growth their difference is the self-consistent net Townsend
  coefficient of the solution.
* power per electron and per N (eV m3/s): field (E/N) W = elastic + sum of inelastic
  (u_k x_k k_k; attachment: the energy of the electrons removed; superelastic:
  -u_k x_k* k_rev) + electron-electron (zero up to discretisation) + growth
  (temporal: (nu/N) <u>; spatial: (alpha/N) times the energy flux).

References
----------
G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
(growth models; transport and rate coefficients; power balance).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .constants import GAMMA_M_S_EV
from .grid import cumulative_u_sigma


@dataclass(frozen=True)
class SwarmTable:
    """Swarm parameters versus E/N (arrays over the E/N points, in the order given).

    Attributes
    ----------
    E_N_Td : ndarray
        Reduced field, Td.
    T_gas_K : float
        Gas temperature, K.
    growth, sharing : str
        Growth model and ionization energy sharing used.
    energy_eV, eedf_eV_m3_2 : ndarray (n_points, n_cells)
        Cell centres and EEDF (eV^-3/2, sum(sqrt(u) f du) = 1).
    max_energy_eV : ndarray
        Upper bound of the grid of each point, eV.
    tail_decades : ndarray
        log10(max f / f at the top cell) of each point.
    mean_energy_eV, drift_velocity_m_s, reduced_mobility_1_mVs, reduced_diffusion_1_ms,
    characteristic_energy_eV, townsend_ionization_m2, townsend_attachment_m2 : ndarray
        See the module docstring (characteristic energy D/mu in eV).
    net_production_m3_s : ndarray
        (nu_ion - nu_att)/N of the solution, m3/s.
    field_power_eV_m3_s : ndarray
        Power gained from the field per electron and per N, eV m3/s.
    rate_coefficients_m3_s : dict of ndarray
        Per process id (superelastic ones as "<id>:reverse"), m3/s per target molecule.
    power_fractions : dict of ndarray
        "elastic", every inelastic process id, "<id>:reverse" (negative: a gain),
        "electron_electron" (with e-e collisions), "growth": each divided by the field
        power (by the sum of the absolute values of all terms at zero field).
    power_balance_residual : ndarray
        |field - sum of all the others| / (same normaliser).
    process_ids : tuple of str
        Keys of ``rate_coefficients_m3_s``.
    iterations : ndarray of int
        Linear solves used per point (all grids tried).
    """

    E_N_Td: np.ndarray
    T_gas_K: float
    growth: str
    sharing: str
    energy_eV: np.ndarray
    eedf_eV_m3_2: np.ndarray
    max_energy_eV: np.ndarray
    tail_decades: np.ndarray
    mean_energy_eV: np.ndarray
    drift_velocity_m_s: np.ndarray
    reduced_mobility_1_mVs: np.ndarray
    reduced_diffusion_1_ms: np.ndarray
    characteristic_energy_eV: np.ndarray
    townsend_ionization_m2: np.ndarray
    townsend_attachment_m2: np.ndarray
    net_production_m3_s: np.ndarray
    field_power_eV_m3_s: np.ndarray
    rate_coefficients_m3_s: dict
    power_fractions: dict
    power_balance_residual: np.ndarray
    process_ids: tuple
    iterations: np.ndarray
    ionization_degree: float = 0.0
    inputs: dict = field(default_factory=dict)

    def __len__(self):
        return self.E_N_Td.size

    def point(self, i):
        """The scalar results of point ``i`` as a plain dict (no EEDF), for JSON output."""
        return {
            "E_N_Td": float(self.E_N_Td[i]),
            "mean_energy_eV": float(self.mean_energy_eV[i]),
            "drift_velocity_m_s": float(self.drift_velocity_m_s[i]),
            "reduced_mobility_1_mVs": float(self.reduced_mobility_1_mVs[i]),
            "reduced_diffusion_1_ms": float(self.reduced_diffusion_1_ms[i]),
            "characteristic_energy_eV": float(self.characteristic_energy_eV[i]),
            "townsend_ionization_m2": float(self.townsend_ionization_m2[i]),
            "townsend_attachment_m2": float(self.townsend_attachment_m2[i]),
            "rate_coefficients_m3_s": {k: float(v[i]) for k, v in self.rate_coefficients_m3_s.items()},
            "power_fractions": {k: float(v[i]) for k, v in self.power_fractions.items()},
            "power_balance_residual": float(self.power_balance_residual[i]),
        }


def point_results(op, F, faces, en, alpha, nu, growth):
    """All swarm parameters of one converged solution.

    Parameters
    ----------
    op : GridOperator
    F : ndarray
        EEDF at the cell centres, eV^-3/2 (normalised).
    faces : dict
        Face arrays of the final solve (see ``solver._face_terms``): ``c`` = (gamma/3)
        u/sigma~, ``W_el``, ``D_th``, ``W_ee``, ``D_ee``, ``wl``, ``wr``.
    en : float
        E/N, V m2.
    alpha, nu : float
        alpha/N (m2, spatial growth) and nu/N (m3/s, temporal growth) of the solution.
    growth : str

    Returns
    -------
    dict
        The scalar results (keys as the SwarmTable fields), "rates", "fractions", "residual".

    References
    ----------
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
    (flux transport coefficients, rate coefficients, Townsend coefficients, power balance).
    """
    grid = op.grid
    u_c, u_f, h = grid.centres_eV, grid.faces_eV, grid.du_eV
    m = np.sqrt(u_c) * h
    mean = float(np.sum(u_c * m * F))
    sl = slice(1, u_f.size - 1)  # interior faces
    delta = F[1:] - F[:-1]
    fhat = faces["wl"][sl] * F[:-1] + faces["wr"][sl] * F[1:]
    c = faces["c"][sl]
    j = -c * (en * delta / h + alpha * fhat)
    W = float(np.sum(j) * h)
    muN = float(-np.sum(c * delta))
    DN = float(np.sum(c * fhat) * h)
    p_field = en * W
    p_el = -float(np.sum(faces["W_el"][sl] * fhat - faces["D_th"][sl] * delta / h) * h)
    p_ee = -float(np.sum(faces["W_ee"][sl] * fhat - faces["D_ee"][sl] * delta / h) * h)
    rates = op.rate_rows @ F
    powers = op.channel_population * (op.energy_rows @ F)
    if growth == "temporal":
        p_growth = nu * mean
    elif growth == "spatial":
        p_growth = alpha * float(np.sum(j * u_f[sl]) * h)
    else:
        p_growth = 0.0
    terms = {"elastic": p_el}
    for cid, p in zip(op.channel_ids, powers):
        terms[cid] = float(p)
    terms["electron_electron"] = p_ee
    terms["growth"] = p_growth
    total_loss = sum(terms.values())
    norm = p_field if p_field > 0.0 else (abs(p_field) + sum(abs(v) for v in terms.values()))
    norm = norm if norm > 0.0 else 1.0
    ion = float(op.ionization_row @ F)
    att = float(op.attachment_row @ F)
    with np.errstate(divide="ignore", invalid="ignore"):
        alpha_ion = ion / W if W != 0.0 else (0.0 if ion == 0.0 else np.nan)
        eta_att = att / W if W != 0.0 else (0.0 if att == 0.0 else np.nan)
        char = DN / muN if muN != 0.0 else np.nan
    return {
        "mean_energy_eV": mean,
        "drift_velocity_m_s": W,
        "reduced_mobility_1_mVs": muN,
        "reduced_diffusion_1_ms": DN,
        "characteristic_energy_eV": char,
        "townsend_ionization_m2": alpha_ion,
        "townsend_attachment_m2": eta_att,
        "net_production_m3_s": float(op.production_row @ F) if growth != "none" else ion - att,
        "field_power_eV_m3_s": p_field,
        "rates": dict(zip(op.channel_ids, (float(r) for r in rates))),
        "fractions": {k: v / norm for k, v in terms.items()},
        "residual": abs(p_field - total_loss) / norm,
    }


def rate_coefficient(process, energy_eV, eedf_eV_m3_2):
    """Rate coefficient k = gamma int u sigma F0 du of one process for a given EEDF (m3/s).

    The EEDF is taken constant over each uniform cell of centre ``energy_eV`` and the
    cross section is integrated exactly over the cells: the same quadrature as the rate
    coefficients of the solver, so it reproduces them for the solver's own EEDF and can be
    applied to EEDFs from elsewhere (e.g. a Maxwellian).

    Parameters
    ----------
    process : plasmazero.data.cross_sections.Process
    energy_eV : ndarray
        Uniform cell centres, eV (the first centre is half a cell above 0).
    eedf_eV_m3_2 : ndarray
        EEDF at the centres, eV^-3/2, normalised as sum(sqrt(u) F du) = 1.

    Returns
    -------
    float

    References
    ----------
    G. J. M. Hagelaar and L. C. Pitchford, Plasma Sources Sci. Technol. 14, 722 (2005)
    (rate coefficients).
    """
    u = np.asarray(energy_eV, dtype=float)
    du = u[1] - u[0]
    faces = np.concatenate(([u[0] - 0.5 * du], u + 0.5 * du))
    c = np.diff(cumulative_u_sigma(process, np.maximum(faces, 0.0)))
    return float(GAMMA_M_S_EV * np.sum(c * np.asarray(eedf_eV_m3_2, dtype=float)))
