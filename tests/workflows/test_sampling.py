"""Variations, sample designs and key-path edits of a scenario mapping (workflows.sampling)."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from plasmazero.data.errors import InputError
from plasmazero.data.scenario import validate_scenario
from plasmazero.data.yamlio import parse_yaml
from plasmazero.workflows.sampling import (apply_values, grid_points, latin_points, parse_design,
                                           parse_variation, parse_variations,
                                           renormalised_fractions, split_path)

# an invented scenario (the same form as tests/data/test_scenario.py), not a real reactor
BASE_TEXT = """\
description: invented test scenario
mechanism: co2_h2
feed:
  mole_fractions: {CO2: 0.2, H2: 0.6, Ar: 0.2}
  flow_sccm: 100
  pressure_bar: 1
reactor:
  geometry: coaxial
  gap_m: 1e-3
  length_m: 0.1
  inner_diameter_m: 0.02
  dielectric: {thickness_m: 1.5e-3, relative_permittivity: 4.5}
  packed_bed:
    porosity: 0.4
    pellet_diameter_m: 2.0e-3
    surface_losses:
      - {species: H, sticking: 1.0e-3, products: {H2: 0.5}}
power: {absorbed_W: 20}
discharge: {mode: filaments, E_N_Td: 150, pulses: 40}
"""


@pytest.fixture()
def base():
    return parse_yaml(BASE_TEXT, file="scenario.yaml")


def test_linear_and_log_ranges_and_lists():
    v = parse_variation("power.absorbed_W=10:50:5")
    assert v.path == "power.absorbed_W" and v.kind == "range"
    assert v.values == (10.0, 20.0, 30.0, 40.0, 50.0)
    # log spacing: 10^0, 10^0.5, ..., 10^2 (geometric progression, common practice)
    lg = parse_variation("power.absorbed_W=log:1:100:5")
    assert lg.log and np.allclose(lg.values, 10.0 ** np.linspace(0, 2, 5), rtol=1e-14)
    assert lg.values[0] == 1.0 and lg.values[-1] == 100.0       # ends exact
    li = parse_variation("feed.mole_fractions.H2=0.5,0.67,0.75")
    assert li.kind == "list" and li.values == (0.5, 0.67, 0.75) and (li.low, li.high) == (0.5, 0.75)
    words = parse_variation("discharge.mode=filaments,uniform")
    assert words.values == ("filaments", "uniform") and math.isnan(words.low)
    assert parse_variation("a.b=6e-20").values == (6e-20,)


@pytest.mark.parametrize("text,expect", [
    ("power.absorbed_W", "expected key.path=values"),
    ("=1,2", "empty key path"),
    ("power..absorbed_W=1", "empty key path"),
    ("power.absorbed_W=", "no values"),
    ("power.absorbed_W=10:50", "start:stop:count"),
    ("power.absorbed_W=10:fifty:5", "finite numbers"),
    ("power.absorbed_W=10:50:2.5", "whole number"),
    ("power.absorbed_W=10:50:0", "at least 1"),
    ("power.absorbed_W=10:50:1", "count 1 needs start == stop"),
    ("power.absorbed_W=log:0:50:3", "positive start and stop"),
    ("power.absorbed_W=log:1,2", "ranges start:stop:count only"),
    ("power.absorbed_W=1,,2", "empty item"),
    ("power.absorbed_W=1,two", "mixes numbers and words"),
    ("power.absorbed_W=nan", "finite"),
])
def test_bad_variation_is_one_line_naming_it(text, expect):
    with pytest.raises(InputError) as info:
        parse_variation(text)
    assert len(info.value.problems) == 1
    line = info.value.problems[0]
    assert text in line and expect in line and "\n" not in line


def test_variations_collect_all_problems_and_reject_repeated_paths():
    with pytest.raises(InputError) as info:
        parse_variations(["a=1", "b=1:2", "a=3"])
    assert len(info.value.problems) == 2
    assert "varied twice" in info.value.problems[1]


def test_design_parsing():
    assert parse_design("grid") == ("grid", None)
    assert parse_design("latin:16") == ("latin", 16)
    for bad in ("latin:0", "latin:x", "sobol:8"):
        with pytest.raises(InputError):
            parse_design(bad)


def test_grid_is_the_cartesian_product_last_fastest():
    vs = parse_variations(["a=1,2", "b=10:30:3"])
    pts = grid_points(vs)
    assert pts == [(1.0, 10.0), (1.0, 20.0), (1.0, 30.0), (2.0, 10.0), (2.0, 20.0), (2.0, 30.0)]


def test_latin_hypercube_is_stratified_within_bounds_and_seeded():
    vs = parse_variations(["a=10:50:2", "b=log:1:1000:2", "c=0.5,0.2,0.9"])
    n = 20
    pts = np.array(latin_points(vs, n, seed=7))
    assert pts.shape == (n, 3)
    # Latin hypercube property (McKay, Beckman & Conover 1979): one sample in each of the
    # n equal strata of every dimension (for the log range: strata equal in ln b)
    unit = np.column_stack([(pts[:, 0] - 10) / 40, np.log(pts[:, 1]) / np.log(1000), (pts[:, 2] - 0.2) / 0.7])
    assert np.all((unit >= 0) & (unit <= 1))
    for c in range(3):
        assert sorted(np.floor(unit[:, c] * n).astype(int)) == list(range(n))
    assert np.array_equal(pts, np.array(latin_points(vs, n, seed=7)))
    assert not np.array_equal(pts, np.array(latin_points(vs, n, seed=8)))
    with pytest.raises(InputError, match="cannot be sampled"):
        latin_points(parse_variations(["discharge.mode=filaments,uniform"]), 4, 0)


def test_apply_values_edits_a_copy_and_keeps_whole_numbers(base):
    doc = apply_values(base, {"power.absorbed_W": 35.0, "discharge.pulses": 20.0,
                              "reactor.packed_bed.surface_losses[0].sticking": 1e-4})
    assert doc["power"]["absorbed_W"] == 35.0
    assert doc["discharge"]["pulses"] == 20 and isinstance(doc["discharge"]["pulses"], int)
    assert doc["reactor"]["packed_bed"]["surface_losses"][0]["sticking"] == 1e-4
    assert base["power"]["absorbed_W"] == 20 and base["discharge"]["pulses"] == 40      # untouched
    validate_scenario(doc)
    with pytest.raises(InputError, match="whole number"):
        apply_values(base, {"discharge.pulses": 20.5})
    # a key that takes any number stays free where the base file writes a whole one
    # (absorbed_W: 20 in the base): the schema, not the base value, decides
    assert apply_values(base, {"power.absorbed_W": 12.7})["power"]["absorbed_W"] == 12.7
    assert split_path("a.b[2][0].c") == ["a", "b", 2, 0, "c"]


@pytest.mark.parametrize("path,where", [
    ("power.absorbd_W", "power.absorbd_W"),
    ("powr.absorbed_W", "powr"),
    ("power.absorbed_W.x", "power.absorbed_W"),
    ("reactor.packed_bed.surface_losses[3].sticking", "surface_losses[3]"),
])
def test_unknown_key_path_is_an_input_error_naming_it(base, path, where):
    with pytest.raises(InputError) as info:
        apply_values(base, {path: 1.0}, file="scenario.yaml")
    (line,) = info.value.problems
    assert line.startswith("scenario.yaml: ") and path in line and where in line and "unknown key path" in line


def test_varied_mole_fraction_renormalises_the_others(base):
    doc = apply_values(base, {"feed.mole_fractions.H2": 0.8})
    x = doc["feed"]["mole_fractions"]
    # the others (CO2 0.2, Ar 0.2) keep their 1:1 ratio and share 1 - 0.8 (the documented rule)
    assert x["H2"] == 0.8 and x["CO2"] == pytest.approx(0.1, rel=1e-14) and x["Ar"] == pytest.approx(0.1, rel=1e-14)
    validate_scenario(doc)                               # the sum is 1: the scenario is valid
    added = apply_values(base, {"feed.mole_fractions.N2": 0.5})["feed"]["mole_fractions"]
    assert added["N2"] == 0.5 and added["H2"] == pytest.approx(0.3) and sum(added.values()) == pytest.approx(1.0)
    two = apply_values(base, {"feed.mole_fractions.H2": 0.5, "feed.mole_fractions.CO2": 0.4})
    assert two["feed"]["mole_fractions"]["Ar"] == pytest.approx(0.1)


@pytest.mark.parametrize("values,expect", [
    ({"feed.mole_fractions.H2": 1.2}, "in [0, 1]"),
    ({"feed.mole_fractions.H2": 0.7, "feed.mole_fractions.CO2": 0.5}, "add up to 1.2 > 1"),
])
def test_impossible_mole_fractions_are_errors(base, values, expect):
    with pytest.raises(InputError, match=expect.replace("[", r"\[").replace("]", r"\]")):
        apply_values(base, values)


def test_others_all_zero_is_an_error():
    with pytest.raises(InputError, match="other species are all zero"):
        renormalised_fractions({"H2": 1.0, "CO2": 0.0}, {"H2": 0.5})
    assert renormalised_fractions({"H2": 1.0, "CO2": 0.0}, {"H2": 1.0}) == {"H2": 1.0, "CO2": 0.0}


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(0.01, 1.0), min_size=2, max_size=5), st.floats(0.0, 1.0))
def test_renormalisation_sums_to_one_and_keeps_ratios(raw, x):
    total = sum(raw)
    fr = {f"S{i}": v / total for i, v in enumerate(raw)}
    out = renormalised_fractions(fr, {"S0": x})
    assert sum(out.values()) == pytest.approx(1.0, abs=1e-12)
    assert out["S0"] == x
    for k in list(fr)[2:]:                      # ratios kept (cross-multiplied: x = 1 zeroes them)
        assert out[k] * fr["S1"] == pytest.approx(fr[k] * out["S1"], rel=1e-12, abs=1e-300)
