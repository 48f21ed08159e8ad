"""Scenario file validation: every problem is one line naming file, key path and line."""

import textwrap

import pytest

from plasmazero.data.errors import InputError
from plasmazero.data.scenario import load_scenario

BASE = """\
description: invented test scenario
mechanism: co2_h2
feed:
  mole_fractions: {CO2: 0.25, H2: 0.75}
  flow_sccm: 100
  pressure_bar: 1
reactor:
  geometry: coaxial
  gap_m: 1e-3
  length_m: 0.1
  inner_diameter_m: 0.02
  dielectric: {thickness_m: 1.5e-3, relative_permittivity: 4.5}
power: {absorbed_W: 20}
discharge: {mode: filaments, E_N_Td: 150, pulses: 40}
"""


def _write(tmp_path, text):
    p = tmp_path / "scenario.yaml"
    p.write_text(textwrap.dedent(text))
    return p


def test_valid_scenario_is_normalised_to_si(tmp_path):
    sc = load_scenario(_write(tmp_path, BASE))
    # sccm -> standard m3/s: 100e-6 m3 / 60 s (definition of the unit, common practice)
    assert sc["feed"]["flow_std_m3_s"] == pytest.approx(100e-6 / 60)
    assert sc["feed"]["pressure_Pa"] == pytest.approx(1e5)
    assert sc["gas_temperature"] == {"mode": "fixed", "temperature_K": 300.0}
    assert sc["discharge"]["pulse_shape"] == "gaussian"


@pytest.mark.parametrize("old,new,expect", [
    ("flow_sccm: 100", "flow_sccm: -100", "feed.flow_sccm: must be positive"),
    ("flow_sccm: 100", "flow_sccm: 100\n  flow_slm: 0.1", "exactly one of flow_sccm or flow_slm"),
    ("flow_sccm: 100", "flow_sccm: 100\n  colour: red", "feed.colour: unknown key"),
    ("{CO2: 0.25, H2: 0.75}", "{CO2: 0.25, H2: 0.70}", "sum to 0.95"),
    ("{CO2: 0.25, H2: 0.75}", "{CO2: -0.25, H2: 1.25}", "feed.mole_fractions.CO2: must be a non-negative"),
    ("geometry: coaxial", "geometry: spherical", "reactor.geometry: expected coaxial | planar | volume"),
    ("  inner_diameter_m: 0.02\n", "", "reactor.inner_diameter_m: required for geometry coaxial"),
    ("power: {absorbed_W: 20}", "power: {absorbed_W: 20, sei_kJ_L: 1}", "exactly one of absorbed_W"),
    ("power: {absorbed_W: 20}", "power: {applied: {amplitude_V: 8000}}", "power.applied.frequency_Hz: required"),
    ("E_N_Td: 150", "E_N_Td: fast", "discharge.E_N_Td: expected a number or self_sustaining"),
    ("pulses: 40", "pulses: 0", "discharge.pulses: must be at least 1"),
    ("pulses: 40", "pulses: 4.5", "discharge.pulses: expected a whole number"),
    ("mode: filaments, E_N_Td: 150, pulses: 40", "mode: uniform, pulses: 40", "applies to mode filaments only"),
    ("mechanism: co2_h2", "mechanism: ./missing.yaml", "mechanism file './missing.yaml' not found"),
    ("gap_m: 1e-3", "gap_m: 0", "reactor.gap_m: must be positive"),
])
def test_each_problem_is_reported_with_file_and_key(tmp_path, old, new, expect):
    assert old in BASE
    path = _write(tmp_path, BASE.replace(old, new))
    with pytest.raises(InputError) as err:
        load_scenario(path)
    msg = str(err.value)
    assert expect in msg
    assert str(path) in msg.splitlines()[0]
    assert all(line.startswith(str(path)) for line in msg.splitlines())


def test_all_problems_reported_together_with_lines(tmp_path):
    text = BASE.replace("flow_sccm: 100", "flow_sccm: -1").replace("gap_m: 1e-3", "gap_m: -1")
    path = _write(tmp_path, text)
    with pytest.raises(InputError) as err:
        load_scenario(path)
    assert len(err.value.problems) == 2
    assert f"{path}:5:" in str(err.value)  # line of flow_sccm


def test_packed_bed_losses_validated(tmp_path):
    text = BASE.replace("power: {absorbed_W: 20}", "  packed_bed: {porosity: 1.4, pellet_diameter_m: 2e-3, "
                        "surface_losses: [{species: H, sticking: 2}]}\npower: {absorbed_W: 20}")
    with pytest.raises(InputError) as err:
        load_scenario(_write(tmp_path, text))
    msg = str(err.value)
    assert "porosity: required, between 0 and 1" in msg
    assert "surface_losses[0].sticking: must be in (0, 1]" in msg


def test_missing_sections(tmp_path):
    with pytest.raises(InputError) as err:
        load_scenario(_write(tmp_path, "description: nothing\n"))
    for section in ("mechanism", "feed", "reactor", "power", "discharge"):
        assert f"{section}: missing required section" in str(err.value)
