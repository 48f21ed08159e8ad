"""The two-term Boltzmann solver against the independent Monte Carlo swarm.

References used here:

* the null-collision Monte Carlo of ``tests/reference/montecarlo.py`` (its own checks
  against exact results are in ``test_montecarlo_reference.py``), run live by these tests
  with fixed seeds; it includes the full anisotropy of the distribution, which the
  two-term approximation truncates;
* the model gases of Reid (1979, Aust. J. Phys. 32, 231) and Lucas & Saelee (1975,
  J. Phys. D 8, 640), definitions recalled from memory of those papers
  (``tests/reference/model_gases.py``).

No published table value is used: I could not recall the swarm values tabulated by
Reid (1979) or Lucas & Saelee (1975) reliably enough to cite them, so every reference
number is the Monte Carlo's. Tolerances are the two-term error expected for each gas
(stated per test, with the differences measured when the tests were written) plus four
standard errors of the Monte Carlo.

All Monte Carlo runs: temporal growth (unbounded swarm, time-of-flight conditions), gas at
rest, so the solver is run with ``growth="temporal"`` and ``T_gas_K=0``; its drift
velocity is the flux drift, compared with the Monte Carlo flux drift ``<v_z>``.
"""

from __future__ import annotations

import numpy as np
import pytest

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.shipped import shipped_cross_section
from reference import model_gases, montecarlo as mc


def within(solver, mc_value, mc_err, rel):
    """|solver - MC| <= rel * |MC| + 4 sigma_MC."""
    return abs(solver - mc_value) <= rel * abs(mc_value) + 4.0 * mc_err


def relative(a, b):
    return (a - b) / b


# --- Reid ramp ---------------------------------------------------------------------

REID_FIELDS_TD = np.array([1.0, 4.0, 12.0, 24.0])


@pytest.fixture(scope="module")
def reid(tmp_path_factory):
    xs = model_gases.reid_ramp(tmp_path_factory.mktemp("reid"))
    table = solve_swarm(build_mixture([(xs, 1.0)]), REID_FIELDS_TD, 0.0, growth="temporal")
    return xs, table


# Tolerances (relative) for mean energy, drift velocity and inelastic rate coefficient.
# At 1 Td the ramp is barely reached, the anisotropy is small and the two-term result
# should be nearly exact. Above, Reid (1979) built this gas to show that the two-term
# approximation errs by several per cent when the inelastic cross section rises steeply
# to exceed the elastic one. Measured with these seeds (two-term minus MC, relative; MC
# 500 electrons, 4.0e6 real and 0.9-1.1e6 null collisions per field; MC one-sigma errors
# in brackets):
#   E/N  1 Td: energy +0.23 % (0.22), drift +0.46 % (0.47), rate +0.56 % (0.50)
#   E/N  4 Td: energy +0.71 % (0.07), drift +1.39 % (0.17), rate +1.42 % (0.17)
#   E/N 12 Td: energy +1.77 % (0.07), drift +2.96 % (0.13), rate +3.02 % (0.13)
#   E/N 24 Td: energy +2.06 % (0.07), drift +2.87 % (0.10), rate +2.95 % (0.10)
REID_TOL = {1.0: (0.005, 0.01, 0.01), 4.0: (0.03, 0.045, 0.045),
            12.0: (0.03, 0.045, 0.045), 24.0: (0.03, 0.045, 0.045)}


_REID_MC = {}


def reid_mc(xs, en):
    """MC of the Reid gas at ``en`` Td, computed once per test session."""
    if en not in _REID_MC:
        gas = mc.gas_from_cross_sections(xs, 10.0, 20001)
        _REID_MC[en] = mc.run_swarm(gas, en, 0.0, n_electrons=500, relax_collisions=1000.0,
                                    sample_collisions=8000.0, n_batches=10, init_energy_eV=0.3,
                                    seed=11)
    return _REID_MC[en]


@pytest.mark.parametrize("index", range(REID_FIELDS_TD.size))
def test_reid_ramp(reid, index):
    xs, table = reid
    en = REID_FIELDS_TD[index]
    r = reid_mc(xs, en)
    tol_e, tol_w, tol_k = REID_TOL[en]
    assert r.mean_energy_err_eV < 0.003 * r.mean_energy_eV
    assert within(table.mean_energy_eV[index], r.mean_energy_eV, r.mean_energy_err_eV, tol_e)
    assert within(table.drift_velocity_m_s[index], r.flux_drift_m_s, r.flux_drift_err_m_s, tol_w)
    k_mc, k_err = r.rate_coefficients_m3_s["ramp_inelastic"], r.rate_errors_m3_s["ramp_inelastic"]
    assert within(table.rate_coefficients_m3_s["ramp_inelastic"][index], k_mc, k_err, tol_k)


def test_reid_ramp_two_term_error_grows_with_field(reid):
    """The solver's deviation from the MC is small at 1 Td and of order per cent at 24 Td.

    A check that the comparison above can detect the two-term error it tolerates: the
    MC drift at 24 Td is below the solver's by 1-4.5 % (measured 2.87 %, sigma 0.10 %).
    """
    xs, table = reid
    r = reid_mc(xs, 24.0)
    dev = relative(table.drift_velocity_m_s[-1], r.flux_drift_m_s)
    assert 0.01 < abs(dev) < 0.045


# --- Lucas-Saelee ------------------------------------------------------------------

LS_FIELDS_TD = np.array([20.0, 40.0])


@pytest.fixture(scope="module")
def lucas_saelee(tmp_path_factory):
    folder = tmp_path_factory.mktemp("ls")
    out = {}
    for F in (0.0, 0.5, 1.0):
        xs = model_gases.lucas_saelee(folder, F)
        mix = build_mixture([(xs, 1.0)])
        for sharing in ("equal", "one_takes_all"):
            out[F, sharing] = xs, solve_swarm(mix, LS_FIELDS_TD, 0.0, growth="temporal",
                                              sharing=sharing)
    return out


# Measured with these seeds (two-term minus MC, relative; MC 500 electrons, 3.0e6 real and
# 0.07-0.19e6 null collisions per case; MC one-sigma errors in brackets):
#   F=0   equal 20 Td: energy -0.32 % (0.19), drift -0.16 % (0.46)
#   F=0   equal 40 Td: energy +0.60 % (0.09), drift +1.53 % (0.19)
#   F=0.5 equal 40 Td: energy +1.14 % (0.08), drift +1.14 % (0.24), k_ion -8.0 % (0.66)
#   F=0.5 one-takes-all 40 Td: energy +1.25 % (0.11), drift +1.23 % (0.25), k_ion -6.7 % (0.45)
#   F=1   equal 20 Td: energy -0.50 % (0.19), drift -0.59 % (0.37), k_ion -0.46 % (0.37)
#   F=1   equal 40 Td: energy +0.69 % (0.07), drift +1.07 % (0.17), k_ion +0.77 % (0.21)
#   F=1   one-takes-all 40 Td: energy +0.99 % (0.11), drift +0.64 % (0.25), k_ion +0.37 % (0.26)
# For F=0.5 the ionization comes from the far tail beyond the 8.5 eV excitation (k_ion/k_exc
# about 1e-2 at 40 Td), where the anisotropy that the two-term expansion drops is largest;
# the rate is the least accurate two-term output here (and at 20 Td the MC sees too few
# ionizations for a precise rate, so F=0.5 is compared at 40 Td only).
# Tolerances: 2.5 % energy and drift; k_ion 3 % for F=1 and 12 % for F=0.5; the Townsend
# coefficient k_ion/W 1 % more.
LS_CASES = [
    (0.0, "equal", 0), (0.0, "equal", 1),
    (0.5, "equal", 1), (0.5, "one_takes_all", 1),
    (1.0, "equal", 0), (1.0, "equal", 1), (1.0, "one_takes_all", 1),
]


_LS_MC = {}


def ls_mc(xs, F, sharing, en):
    """MC of the Lucas-Saelee gas, computed once per test session."""
    key = (F, sharing, en)
    if key not in _LS_MC:
        gas = mc.gas_from_cross_sections(xs, 300.0, 30001)
        _LS_MC[key] = mc.run_swarm(gas, en, 0.0, sharing=sharing, n_electrons=500,
                                   relax_collisions=1000.0, sample_collisions=6000.0,
                                   n_batches=10, init_energy_eV=5.0, seed=3)
    return _LS_MC[key]


@pytest.mark.parametrize("F, sharing, index", LS_CASES)
def test_lucas_saelee(lucas_saelee, F, sharing, index):
    xs, table = lucas_saelee[F, sharing]
    en = LS_FIELDS_TD[index]
    r = ls_mc(xs, F, sharing, en)
    assert within(table.mean_energy_eV[index], r.mean_energy_eV, r.mean_energy_err_eV, 0.025)
    assert within(table.drift_velocity_m_s[index], r.flux_drift_m_s, r.flux_drift_err_m_s, 0.025)
    if F == 0.0:
        assert "ls_ionization" not in table.rate_coefficients_m3_s
        assert np.all(table.townsend_ionization_m2 == 0.0)
        return
    k_mc, k_err = r.rate_coefficients_m3_s["ls_ionization"], r.rate_errors_m3_s["ls_ionization"]
    k_solver = table.rate_coefficients_m3_s["ls_ionization"][index]
    assert within(k_solver, k_mc, k_err, 0.03 if F == 1.0 else 0.12)
    # Townsend coefficient as the solver defines it for temporal growth: k_ion / W_flux
    alpha_mc = k_mc / r.flux_drift_m_s
    alpha_err = alpha_mc * np.hypot(k_err / k_mc, r.flux_drift_err_m_s / r.flux_drift_m_s)
    assert within(table.townsend_ionization_m2[index], alpha_mc, alpha_err,
                  0.04 if F == 1.0 else 0.13)


def test_lucas_saelee_sharing_matters_as_in_the_mc(lucas_saelee):
    """Equal sharing gives a higher mean energy than one-takes-all at F=1, 40 Td, in both.

    The MC difference (measured +2.53 %, sigma 0.13 %) sets the reference; the solver's
    difference (+2.23 % when written) must have the same sign and be within a factor two.
    """
    xs, eq = lucas_saelee[1.0, "equal"]
    _, ota = lucas_saelee[1.0, "one_takes_all"]
    runs = [ls_mc(xs, 1.0, s, 40.0) for s in ("equal", "one_takes_all")]
    d_mc = relative(runs[0].mean_energy_eV, runs[1].mean_energy_eV)
    d_solver = relative(eq.mean_energy_eV[1], ota.mean_energy_eV[1])
    assert d_mc > 4.0 * np.hypot(runs[0].mean_energy_err_eV, runs[1].mean_energy_err_eV) / runs[1].mean_energy_eV
    assert 0.5 * d_mc < d_solver < 2.0 * d_mc


# --- the shipped argon set ---------------------------------------------------------

AR_FIELDS_TD = np.array([100.0, 1000.0])


@pytest.fixture(scope="module")
def argon():
    xs = load_cross_sections(shipped_cross_section("ar"))
    return xs, solve_swarm(build_mixture([(xs, 1.0)]), AR_FIELDS_TD, 0.0, growth="temporal")


# Argon is heavy (m/M = 1.4e-5) and its swarm is dominated by the inelastic losses at
# these fields, so the two-term error is small. Measured with these seeds (two-term minus
# MC; MC 500 electrons, 2.9-3.0e6 real collisions; one-sigma errors in brackets):
#   100 Td: energy +0.04 % (0.12), drift +0.56 % (0.62), k_ion +2.8 % (1.3), k_exc -0.42 % (0.81)
#  1000 Td: energy +0.10 % (0.16), drift +0.53 % (0.18), k_ion +0.05 % (0.24), k_exc +2.2 % (0.34)
# Tolerances: 2 % energy and drift, 4 % rate coefficients.
@pytest.mark.parametrize("index", range(AR_FIELDS_TD.size))
def test_shipped_argon(argon, index):
    xs, table = argon
    gas = mc.gas_from_cross_sections(xs, 1000.0, 50001)
    r = mc.run_swarm(gas, AR_FIELDS_TD[index], 0.0, n_electrons=500, relax_collisions=3000.0,
                     sample_collisions=6000.0, n_batches=10, init_energy_eV=5.0, seed=17)
    assert within(table.mean_energy_eV[index], r.mean_energy_eV, r.mean_energy_err_eV, 0.02)
    assert within(table.drift_velocity_m_s[index], r.flux_drift_m_s, r.flux_drift_err_m_s, 0.02)
    for pid in ("ar_ionization", "ar_excitation"):
        assert within(table.rate_coefficients_m3_s[pid][index], r.rate_coefficients_m3_s[pid],
                      r.rate_errors_m3_s[pid], 0.04)
