"""Sensitivity coefficients and Monte Carlo uncertainty against closed-form kinetics.

The point function integrates a small mechanism (written below, rate numbers invented for
the tests, not physical data) with the project's stiff integrator
(plasmazero.numerics.integrate), which multiplies every rate coefficient by
``context["rate_multipliers"]`` (its ``rate_multipliers`` option).
"""

import functools
import math
from pathlib import Path
from statistics import NormalDist

import numpy as np
import pytest

from plasmazero.physics.compiled import load_compiled_mechanism
from plasmazero.data.errors import InputError
from plasmazero.workflows.scan import read_scan
from plasmazero.workflows.scanfile import read_hdf5
from plasmazero.workflows.sensitivity import (rank_sensitivities, run_sensitivity, sensitivities_from_scan,
                                              sensitivity_plan)
from plasmazero.workflows.uncertainty import (lognormal_sigma, rank_drivers, run_uncertainty,
                                              sample_multipliers)

# A -> B -> C -> D, first order; constants invented for the test (s^-1)
CHAIN = """
name: chain
elements: [X]
species:
  - {name: A, composition: {X: 1}}
  - {name: B, composition: {X: 1}}
  - {name: C, composition: {X: 1}}
  - {name: D, composition: {X: 1}}
reactions:
  - {equation: A => B, rate: {arrhenius: {A: 1.0}}, source: "invented for the test, not physical data"}
  - {equation: B => C, rate: {arrhenius: {A: 0.2}}, source: "invented for the test, not physical data"}
  - {equation: C => D, rate: {arrhenius: {A: 0.5}}, source: "invented for the test, not physical data"}
"""
K1, K2 = 1.0, 0.2

# a constant source of A (given in the doc) against A + A -> E (m3/s); E -> 2 B and B -> C do
# not act on A. Constants and uncertainty factors invented for the test.
RECOMBINATION = """
name: recombination
elements: [X]
species:
  - {name: A, composition: {X: 1}}
  - {name: E, composition: {X: 2}}
  - {name: B, composition: {X: 1}}
  - {name: C, composition: {X: 1}}
reactions:
  - {equation: A + A => E, rate: {arrhenius: {A: 1.0e-20}}, uncertainty_factor: 3,
     source: "invented for the test, not physical data"}
  - {equation: E => B + B, rate: {arrhenius: {A: 0.1}}, uncertainty_factor: 3,
     source: "invented for the test, not physical data"}
  - {equation: B => C, rate: {arrhenius: {A: 0.05}}, source: "invented for the test, not physical data"}
"""
SOURCE_M3_S = 1.0e20
K_REC = 1.0e-20


@functools.lru_cache(maxsize=None)
def _mechanism(path):
    return load_compiled_mechanism(path)


def kinetics_point(doc, context):
    """Point function: densities at the doc's output times, rate coefficients times the multipliers."""
    from plasmazero.numerics import integrate

    mech = _mechanism(str(Path(context["folder"]) / doc["mechanism"]))
    y0 = np.array([doc["initial_m3"].get(s, 0.0) for s in mech.species])
    src = np.array([doc.get("source_m3_s", {}).get(s, 0.0) for s in mech.species])
    times = np.array(doc["output_times_s"], dtype=float)
    res = integrate(mech, y0, (0.0, times[-1]), T_gas_K=300.0, source_m3_s=src, t_eval_s=times,
                    rtol=doc.get("rtol", 1e-10), integrate_rates=False,
                    rate_multipliers=context["rate_multipliers"])
    return {f"{s}_at_{t:g}s_m3": float(res.densities_m3[j, i])
            for j, t in enumerate(times) for i, s in enumerate(mech.species)}


def _bateman_b(k1, k2, t, a0=1.0):
    # Bateman (1910), Proc. Camb. Phil. Soc. 15, 423: [B](t) of A -> B -> C from [A](0) = a0
    return a0 * k1 / (k2 - k1) * (math.exp(-k1 * t) - math.exp(-k2 * t))


def _bateman_sensitivities(k1, k2, t):
    # [B](t) = A0 k1/(k2 - k1) (exp(-k1 t) - exp(-k2 t)) (Bateman 1910, Proc. Camb. Phil. Soc.
    # 15, 423); its logarithmic derivatives in k1 and k2, worked out by hand
    e1, e2 = math.exp(-k1 * t), math.exp(-k2 * t)
    s1 = 1.0 + k1 / (k2 - k1) - k1 * t * e1 / (e1 - e2)
    s2 = k2 * (-1.0 / (k2 - k1) + t * e2 / (e1 - e2))
    return s1, s2


def test_bateman_sensitivities_and_ranking(tmp_path):
    (tmp_path / "chain.yaml").write_text(CHAIN)
    doc = {"mechanism": "chain.yaml", "initial_m3": {"A": 1e20}, "output_times_s": [1.0, 4.0]}
    res = run_sensitivity(kinetics_point, doc, ["A_at_1s_m3", "B_at_1s_m3", "B_at_4s_m3"],
                          ["A => B", "B => C", "C => D"], context={"folder": str(tmp_path)},
                          scan_file=tmp_path / "sens.h5", workers=2, progress=False)
    assert len(res.scan) == 7 and all(s == "ok" for s in res.scan.status)
    S = dict(zip(res.targets, res.coefficients))
    h = math.log(res.factor)
    # [A](t) = A0 exp(-k1 t): d ln A / d ln k1 = -k1 t = -1 at t = 1 s, no dependence on k2, k3.
    # The central difference of -k1 t e^x over x = +-ln f is exactly -sinh(h)/h (the
    # truncation error (ln f)^2/6 = 4e-4 of this linear-in-k1 response)
    assert S["A_at_1s_m3"] == pytest.approx([-math.sinh(h) / h, 0.0, 0.0], abs=1e-7)
    assert S["A_at_1s_m3"][0] == pytest.approx(-1.0, abs=5e-4)
    for t in (1.0, 4.0):
        s1, s2 = _bateman_sensitivities(K1, K2, t)
        # the same central difference applied to the closed-form Bateman solution (an
        # independent computation of what the engine estimates) ...
        diff = [(math.log(_bateman_b(K1 * math.exp(h * (j == 0)), K2 * math.exp(h * (j == 1)), t))
                 - math.log(_bateman_b(K1 * math.exp(-h * (j == 0)), K2 * math.exp(-h * (j == 1)), t))) / (2 * h)
                for j in (0, 1)]
        assert S[f"B_at_{t:g}s_m3"] == pytest.approx(diff + [0.0], abs=1e-7)
        # ... and the exact derivatives, within the truncation error of f = 1.05
        assert S[f"B_at_{t:g}s_m3"] == pytest.approx([s1, s2, 0.0], abs=2e-3)
    assert res.nominal["B_at_1s_m3"] == pytest.approx(1e20 * K1 / (K2 - K1) * (math.exp(-K1) - math.exp(-K2)),
                                                      rel=1e-7)
    # ranking: at 1 s the first step dominates [B] (0.566 vs -0.113), at 4 s the second (-0.584 vs -0.080)
    assert [r[0] for r in rank_sensitivities(res, "B_at_1s_m3")] == [0, 1, 2]
    assert [r[0] for r in rank_sensitivities(res, "B_at_4s_m3")] == [1, 0, 2]
    assert rank_sensitivities(res, "B_at_4s_m3", top=1)[0][1] == "B => C"
    header, plan, _ = read_hdf5(tmp_path / "sens.h5")
    assert header["kind"] == "sensitivity" and plan.rate_multipliers.shape == (7, 3)
    again = sensitivities_from_scan(read_scan(tmp_path / "sens.h5"), ["B_at_4s_m3"])     # from the file alone
    assert np.array_equal(again.coefficients[0], S["B_at_4s_m3"])
    with pytest.raises(InputError, match="'B_m3' is not a figure"):
        sensitivities_from_scan(res.scan, ["B_m3"])
    # one-sided differences agree to O(ln f) ~ 2.4 % of the curvature
    fwd = run_sensitivity(kinetics_point, doc, ["B_at_1s_m3"], ["A => B", "B => C", "C => D"], method="forward",
                          context={"folder": str(tmp_path)}, workers=0, progress=False)
    assert len(fwd.scan) == 4
    assert fwd.coefficients[0] == pytest.approx(S["B_at_1s_m3"], abs=0.02)

    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import plot_tornado

    ax = plot_tornado(res, "B_at_4s_m3").axes[0]
    bars = sorted(ax.patches, key=lambda p: -p.get_y())              # top of the chart first
    assert [p.get_width() for p in bars] == pytest.approx([S["B_at_4s_m3"][j] for j in (1, 0, 2)])
    labels = {round(y): t.get_text() for y, t in zip(ax.get_yticks(), ax.get_yticklabels())}
    assert [labels[round(p.get_y() + p.get_height() / 2)] for p in bars] == ["B => C", "A => B", "C => D"]


def test_reverse_rows_are_tied_to_their_forward_row():
    mech = load_compiled_mechanism(Path(__file__).resolve().parents[2] / "mechanisms" / "examples" / "every_law.yaml")
    tie = mech.reverse_of
    assert np.any(tie >= 0)
    plan = sensitivity_plan(mech.reactions, tie_to=tie)
    rows = np.nonzero(tie >= 0)[0]
    assert set(plan.meta["perturbed"]) == set(range(mech.n_reactions)) - set(rows)
    m = plan.rate_multipliers
    assert np.array_equal(m[:, rows], m[:, tie[rows]])            # a reverse row moves with its forward row
    assert m.shape == (1 + 2 * (mech.n_reactions - rows.size), mech.n_reactions)
    with pytest.raises(ValueError, match="cannot be perturbed on its own"):
        sensitivity_plan(mech.reactions, tie_to=tie, rows=[int(rows[0])])
    mult, sigma = sample_multipliers(mech.uncertainty_factor, 50, 1, tie_to=tie)
    assert np.array_equal(mult[:, rows], mult[:, tie[rows]])
    # NaN factors take the default F = 2 (sigma = ln 2); the factor 3 of the file gives ln 3
    j3 = mech.reactions.index("e + Ar2+ => Ar(4s) + Ar")
    assert sigma[j3] == pytest.approx(math.log(3.0)) and np.nanmin(sigma) == pytest.approx(math.log(2.0))


def test_lognormal_width_conventions():
    # F as a geometric standard deviation: sigma = ln F; as a 2-sigma bound: ln F / 2
    assert lognormal_sigma([3.0, np.nan, 1.0]) == pytest.approx([math.log(3), math.log(2), 0.0])
    assert lognormal_sigma([3.0], coverage_sigmas=2.0) == pytest.approx([math.log(3) / 2])
    mult, _ = sample_multipliers([3.0, 1.0], 20000, seed=5)
    # a fraction erf(1/sqrt 2) = 0.6827 of a normal lies within one standard deviation
    inside = np.mean((mult[:, 0] >= 1 / 3) & (mult[:, 0] <= 3))
    assert inside == pytest.approx(0.6827, abs=0.01)            # 3 binomial standard errors (0.0033)
    assert np.all(mult[:, 1] == 1.0)
    with pytest.raises(ValueError):
        lognormal_sigma([0.5])


def test_monte_carlo_percentiles_match_the_log_normal_closed_form(tmp_path):
    (tmp_path / "rec.yaml").write_text(RECOMBINATION)
    doc = {"mechanism": "rec.yaml", "initial_m3": {}, "source_m3_s": {"A": SOURCE_M3_S}, "output_times_s": [60.0],
           "rtol": 1e-8}
    mech = _mechanism(str(tmp_path / "rec.yaml"))
    n = 300
    res = run_uncertainty(kinetics_point, doc, ["A_at_60s_m3", "C_at_60s_m3"], mech.uncertainty_factor,
                          mech.reactions, n_samples=n, seed=11, context={"folder": str(tmp_path)},
                          scan_file=tmp_path / "mc.h5", workers=2, progress=False)
    assert res.n_failed == 0 and len(res.scan) == n + 1
    # steady state of d[A]/dt = S - 2 k [A]^2: [A] = sqrt(S / (2 k)) (closed form; at 60 s the
    # tanh approach to it is complete to 1e-7 even for k 4 sigma below nominal)
    a_nom = math.sqrt(SOURCE_M3_S / (2.0 * K_REC))
    assert res.nominal["A_at_60s_m3"] == pytest.approx(a_nom, rel=1e-8)
    m1 = res.scan.plan.rate_multipliers[1:, 0]
    assert res.samples["A_at_60s_m3"] == pytest.approx(a_nom / np.sqrt(m1), rel=1e-6)   # sample by sample
    # ln[A] = ln a_nom - ln(m1)/2 is normal with sd sigma/2, sigma = ln 3 (F = 3 read as one
    # geometric standard deviation): percentile q at a_nom exp(sigma/2 z_q)
    sd = math.log(3.0) / 2.0
    for q, got in zip(res.levels, res.percentiles["A_at_60s_m3"]):
        z = NormalDist().inv_cdf(q / 100.0)
        expect = a_nom * math.exp(sd * z)
        # standard error of a sample quantile: sqrt(q (1 - q) / n) / phi(z) (in ln A, times sd)
        se = math.sqrt(q / 100 * (1 - q / 100) / n) / NormalDist().pdf(z) * sd
        assert abs(math.log(got / expect)) < 4.0 * se
    drivers = rank_drivers(res, "A_at_60s_m3")
    assert drivers[0][0] == 0 and drivers[0][2] == pytest.approx(-1.0, abs=1e-6)
    # independent factors: sample correlations scatter with a standard error of about
    # 1/sqrt(n) (common practice, no source); 4 of them bound the noise
    assert all(abs(r) < 4.0 / math.sqrt(n) for _, _, r in drivers[1:])
    # B -> C has no factor in the file: it is sampled with the default F = 2 (sigma = ln 2)
    assert res.sigma[2] == pytest.approx(math.log(2.0)) and len(rank_drivers(res, "C_at_60s_m3")) == 3
    header, plan, _ = read_hdf5(tmp_path / "mc.h5")
    assert header["kind"] == "uncertainty" and header["seed"] == 11 and plan.rate_multipliers.shape == (n + 1, 3)

    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import plot_uncertainty

    ax = plot_uncertainty(res, "A_at_60s_m3").axes[0]
    assert sum(p.get_height() for p in ax.patches) == n
