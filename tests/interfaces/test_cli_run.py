"""The discharge commands of the CLI: run, demo, examples, init, report, export, plot."""

import csv
import json
import re
import subprocess
import sys

import h5py
import numpy as np
import pytest
import yaml

from plasmazero.interfaces.cli import main
from plasmazero.workflows.examples import example_path


def _small(tmp_path, name="co2_splitting", pulses=3):
    text = example_path(name).read_text().replace("pulses: 40", f"pulses: {pulses}")
    p = tmp_path / f"{name}.yaml"
    p.write_text(text)
    return p


@pytest.fixture(scope="module")
def result_file(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("run")
    scen = _small(tmp)
    out = tmp / "r.h5"
    assert main(["run", str(scen), "-o", str(out), "--no-progress"]) == 0
    return out


def test_run_writes_documented_hdf5(result_file):
    with h5py.File(result_file, "r") as f:
        assert f.attrs["format"] == "plasmazero-discharge/1"
        n_t = f["time_s"].shape[0]
        n_s = f["species"].shape[0]
        assert f["densities_m3"].shape == (n_t, n_s)
        for name in ("E_N_Td", "electron_density_m3", "mean_electron_energy_eV", "expansion_factor",
                     "integrated_rates/discharge_m3", "inputs/scenario_yaml", "inputs/mechanism_yaml",
                     "eedf/0/energy_eV", "summary_json", "bed_feed_json"):
            assert name in f
        summary = json.loads(f["summary_json"][()])
    assert summary["invented_scenario"] is True
    assert 0 < summary["conversion"]["CO2"] < 1


def test_run_json_has_the_documented_keys(tmp_path, capsys):
    assert main(["run", str(_small(tmp_path)), "--json", "--no-progress"]) == 0
    doc = json.loads(capsys.readouterr().out)
    for key in ("conversion", "selectivity", "sei_kJ_L", "sei_eV_per_molecule", "energy_efficiency",
                "element_balance_error", "bed_feed"):
        assert key in doc
    row = doc["bed_feed"][0]
    assert set(row) == {"species", "mole_fraction", "partial_pressure_Pa", "density_m3", "flux_m2_s"}


def test_report_and_export(result_file, tmp_path, capsys):
    assert main(["report", str(result_file), "--species", "CO,O"]) == 0
    text = capsys.readouterr().out
    assert "pathways of CO" in text and "bed feed" in text
    # first law: the deposited energy is either stored chemical enthalpy (the energy
    # efficiency) or heat, and the two shares add up to 100 % (common practice, no source)
    line = next(t for t in text.splitlines() if t.startswith("deposited energy ended as"))
    stored, heat = (float(v) for v in re.findall(r"([-0-9.]+) %", line))
    eff = float(re.search(r"energy efficiency: +([-0-9.]+) %", text).group(1))
    assert stored == pytest.approx(eff, abs=0.01) and stored + heat == pytest.approx(100.0, abs=0.02)
    for ext in ("csv", "json", "yaml"):
        out = tmp_path / f"bed.{ext}"
        assert main(["export", str(result_file), "--bed-feed", str(out)]) == 0
        if ext == "json":
            doc = json.loads(out.read_text())
            assert doc["metadata"]["mechanism"] == "co2" and doc["species"][0]["mole_fraction"] > 0
        elif ext == "yaml":
            doc = yaml.safe_load(out.read_text())
            assert "partial_pressure_Pa" in doc["species"][0]
        else:
            lines = [l for l in out.read_text().splitlines() if not l.startswith("#")]
            rows = list(csv.DictReader(lines))
            assert "flux_m2_s" in rows[0] and float(rows[0]["mole_fraction"]) > 0.5


def test_plot_writes_figures(result_file, tmp_path):
    pytest.importorskip("matplotlib")
    assert main(["plot", str(result_file), "-o", str(tmp_path / "fig")]) == 0
    names = {p.name for p in (tmp_path / "fig").iterdir()}
    assert {"densities.png", "electrons.png", "eedf.png", "bed_feed.png", "pathways_CO.png"} <= names
    assert "gas_temperature.png" not in names          # fixed temperature: nothing to show


def test_gas_temperature_figure_with_the_energy_equation():
    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.result_plots import gas_temperature
    t = np.linspace(0.0, 1.0, 50)
    data = {"time_s": t, "gas_temperature_K": 300.0 + 50.0 * np.exp(-((t - 0.5) / 0.05) ** 2)}
    fig = gas_temperature(data)
    line = fig.axes[0].lines[0]
    np.testing.assert_allclose(line.get_ydata(), data["gas_temperature_K"])
    assert "K" in fig.axes[0].get_ylabel()
    assert gas_temperature({"time_s": t, "gas_temperature_K": np.full(50, 300.0)}) is None


def test_examples_and_init(tmp_path, capsys):
    assert main(["examples"]) == 0
    listing = capsys.readouterr().out
    for name in ("co2_h2_packed_bed_demo", "co2_splitting", "ozone_generator"):
        assert name in listing
    assert main(["init", str(tmp_path / "work"), "--example", "ozone_generator"]) == 0
    written = tmp_path / "work" / "ozone_generator.yaml"
    assert written.is_file()
    # a second init refuses to overwrite
    assert main(["init", str(tmp_path / "work"), "--example", "ozone_generator"]) == 2


@pytest.mark.parametrize("argv,expect", [
    (["run", "missing.yaml"], "missing.yaml: file not found"),
    (["report", "missing.h5"], "missing.h5: file not found"),
    (["init", "x", "--example", "nope"], "no shipped example 'nope'"),
])
def test_errors_are_one_line_without_traceback(argv, expect, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert expect in err and "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_bad_scenario_leaves_no_result_file(tmp_path):
    scen = tmp_path / "bad.yaml"
    scen.write_text(example_path("co2_splitting").read_text().replace("flow_sccm: 50", "flow_sccm: -5"))
    out = tmp_path / "r.h5"
    proc = subprocess.run([sys.executable, "-m", "plasmazero.interfaces.cli", "run", str(scen), "-o", str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == 2
    assert "feed.flow_sccm: must be positive" in proc.stderr and "Traceback" not in proc.stderr
    assert not out.exists() and not list(tmp_path.glob(".r.h5*"))


def test_sensitivity_and_uncertainty_commands(tmp_path, capsys):
    # wiring of the commands on a tiny case (the methods are tested against closed forms in
    # tests/workflows/test_sensitivity_uncertainty.py)
    scen = _small(tmp_path, pulses=2)
    assert main(["sensitivity", str(scen), "--target", "conversion_CO2", "--rows", "0,2",
                 "-o", str(tmp_path / "s.h5"), "--workers", "0", "--no-progress"]) == 0
    out = capsys.readouterr().out
    assert "sensitivity of conversion_CO2" in out and "[co2_v010]" in out
    assert main(["uncertainty", str(scen), "--target", "conversion_CO2", "--samples", "3",
                 "-o", str(tmp_path / "u.h5"), "--workers", "0", "--no-progress"]) == 0
    assert "5 %:" in capsys.readouterr().out
    assert main(["sensitivity", str(scen), "--target", "conversion_CO2", "--rows", "99999",
                 "-o", str(tmp_path / "x.h5"), "--workers", "0"]) == 2
