"""The ``plasmazero swarm`` command: output formats, HDF5 file, and one-line input errors.

The cross-section files written here are invented model gases (numerics only, no data).
"""

import json
import subprocess
import sys

import h5py
import numpy as np
import pytest

from plasmazero.data.shipped import shipped_cross_section
from plasmazero.interfaces import cli, swarm_output

MODEL_A = """\
gas: MA
mass_amu: 20.0
source: "invented model gas for the CLI tests"
provenance: invented
processes:
  - id: ma_m
    kind: momentum_transfer
    data: [[0.0, 5e-20], [10.0, 1.5e-19], [1e4, 5e-21]]
  - id: ma_e
    kind: excitation
    threshold_eV: 8.0
    data: [[8.0, 0.0], [12.0, 5e-21], [30.0, 1e-20], [1e4, 1e-21]]
  - id: ma_i
    kind: ionization
    threshold_eV: 14.0
    data: [[14.0, 0.0], [20.0, 5e-21], [80.0, 3e-20], [1e4, 3e-21]]
"""
MODEL_B = """\
gas: MB
mass_amu: 40.0
source: "invented model gas for the CLI tests"
provenance: invented
processes:
  - id: mb_m
    kind: total_momentum_transfer
    data: [[0.0, 2e-20], [10.0, 1e-19], [1e4, 1e-20]]
  - id: mb_a
    kind: attachment
    data: [[0.0, 0.0], [2.0, 0.0], [4.0, 5e-22], [6.0, 0.0]]
"""
POINT_KEYS = {"E_N_Td", "mean_energy_eV", "drift_velocity_m_s", "reduced_mobility_1_mVs",
              "reduced_diffusion_1_ms", "characteristic_energy_eV", "townsend_ionization_m2",
              "townsend_attachment_m2", "rate_coefficients_m3_s", "power_fractions",
              "power_balance_residual"}


@pytest.fixture
def gases(tmp_path):
    a = tmp_path / "ma.yaml"
    b = tmp_path / "mb.yaml"
    a.write_text(MODEL_A)
    b.write_text(MODEL_B)
    return a, b


def _run(capsys, argv):
    """Run the CLI in process; returns (status, stdout, stderr)."""
    try:
        status = cli.main(["swarm", *argv])
    except SystemExit as exc:  # argparse errors
        status = exc.code
    out = capsys.readouterr()
    return status, out.out, out.err


def _one_error_line(err):
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("plasmazero: error:")
    assert "Traceback" not in err


def test_table_has_units_in_the_headers(capsys, gases):
    status, out, err = _run(capsys, [str(gases[0]), "--en", "10,100"])
    assert status == 0 and not err
    assert "E/N (Td)" in out and "mean energy (eV)" in out and "drift velocity (m/s)" in out
    assert "k ma_e (m3/s)" in out and "alpha/N (m2)" in out
    rows = [line for line in out.splitlines() if line.strip().startswith("1.0000e+0")]
    assert len(rows) >= 2


def test_json_is_one_document_with_the_documented_keys(capsys, gases):
    a, b = gases
    status, out, err = _run(capsys, [f"{a}=0.6", f"{b}=0.4", "--en-range", "10:1000:3", "--json",
                                     "--tgas", "400", "--cells", "300", "--growth", "spatial"])
    assert status == 0 and not err
    doc = json.loads(out)  # the whole stdout is exactly one JSON document
    assert set(doc) == {"inputs", "points"}
    assert doc["inputs"]["fractions"] == [0.6, 0.4]
    assert doc["inputs"]["T_gas_K"] == 400.0 and doc["inputs"]["cells"] == 300
    assert doc["inputs"]["files"] == [str(a), str(b)]
    assert len(doc["points"]) == 3
    assert np.allclose([p["E_N_Td"] for p in doc["points"]], [10.0, 100.0, 1000.0], atol=0)  # log-spaced
    for p in doc["points"]:
        assert set(p) == POINT_KEYS
        assert set(p["rate_coefficients_m3_s"]) == {"ma_e", "ma_i", "mb_a"}
        assert {"elastic", "growth", "ma_e", "ma_i", "mb_a"} <= set(p["power_fractions"])
        assert p["power_balance_residual"] < 1e-6


def test_default_is_the_shipped_argon(capsys):
    if not shipped_cross_section("ar").is_file():
        pytest.skip("shipped argon cross sections not present")
    status, out, err = _run(capsys, ["--json"])
    assert status == 0, err
    doc = json.loads(out)
    assert doc["inputs"]["gases"] == ["Ar"]
    # default E/N: 1 to 1000 Td, 13 log-spaced points
    assert np.allclose([p["E_N_Td"] for p in doc["points"]], np.geomspace(1.0, 1000.0, 13), atol=0)


def test_hdf5_holds_the_full_table(capsys, gases, tmp_path):
    out_file = tmp_path / "table.h5"
    status, out, err = _run(capsys, [str(gases[0]), "--en", "5,50", "--out", str(out_file)])
    assert status == 0 and not err
    with h5py.File(out_file, "r") as h5:
        assert h5.attrs["growth"] == "temporal" and h5.attrs["cells"] == 500
        assert list(h5.attrs["gases"]) == ["MA"]
        eedf, energy = h5["eedf_eV_m3_2"][...], h5["energy_eV"][...]
        assert eedf.shape == energy.shape == (2, 500)
        assert h5["eedf_eV_m3_2"].attrs["units"] == "eV^-3/2"
        assert h5["mean_energy_eV"].attrs["units"] == "eV"
        du = energy[:, 1] - energy[:, 0]
        assert np.allclose(np.sum(np.sqrt(energy) * eedf, axis=1) * du, 1.0, atol=0)
        rates = h5["rate_coefficients_m3_s"]
        assert list(rates.attrs["columns"]) == ["ma_e", "ma_i"] and rates.shape == (2, 2)
        assert h5["power_fractions"].shape[0] == 2
    assert [p.name for p in tmp_path.iterdir() if p.suffix == ".tmp"] == []


def test_hdf5_write_is_atomic(capsys, gases, tmp_path, monkeypatch):
    out_file = tmp_path / "table.h5"
    out_file.write_bytes(b"previous content")

    def broken(*args, **kwargs):
        raise OSError("disk full (simulated)")

    monkeypatch.setattr(h5py.Group, "create_dataset", broken)
    with pytest.raises(OSError):
        swarm_output.write_hdf5(out_file, _small_table(gases[0]), _inputs(gases[0]))
    assert out_file.read_bytes() == b"previous content"  # the old file is untouched
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ma.yaml", "mb.yaml", "table.h5"]


def _small_table(path):
    from plasmazero.boltzmann import build_mixture, solve_swarm
    from plasmazero.data.cross_sections import load_cross_sections
    return solve_swarm(build_mixture([(load_cross_sections(path), 1.0)]), [10.0], n_cells=50)


def _inputs(path):
    return {"files": [str(path)], "gases": ["MA"], "fractions": [1.0], "T_gas_K": 300.0,
            "cells": 50, "growth": "temporal", "sharing": "equal"}


@pytest.mark.parametrize("argv_fn, needle", [
    (lambda a, b, t: [str(t / "missing.yaml")], "file not found"),
    (lambda a, b, t: [str(a), "--en", "-5"], "negative"),
    (lambda a, b, t: [str(a), "--en", "ten"], "not a number"),
    (lambda a, b, t: [str(a), "--en", "1,,2"], "--en"),
    (lambda a, b, t: [str(a), "--en-range", "0:10:3"], "--en-range"),
    (lambda a, b, t: [str(a), "--en-range", "1:10"], "START:STOP:COUNT"),
    (lambda a, b, t: [f"{a}=0.5", f"{b}=0.4"], "add up to"),
    (lambda a, b, t: [f"{a}=0.5", str(b)], "fraction"),
    (lambda a, b, t: [f"{a}=half"], "not a number"),
    (lambda a, b, t: [str(a), "--tgas", "-3"], "--tgas"),
    (lambda a, b, t: [str(a), "--cells", "many"], "--cells"),
    (lambda a, b, t: [str(a), "--growth", "sideways"], "invalid choice"),
    (lambda a, b, t: [str(a), "--frobnicate"], "unrecognized arguments"),
    (lambda a, b, t: [str(a), "--out", str(t / "nofolder" / "x.h5")], "does not exist"),
])
def test_bad_input_gives_one_line_and_status_2(capsys, gases, tmp_path, argv_fn, needle):
    status, out, err = _run(capsys, argv_fn(*gases, tmp_path))
    assert status == 2
    _one_error_line(err)
    assert needle in err


def test_malformed_yaml_names_the_file_and_line(capsys, tmp_path):
    bad = tmp_path / "bad.yaml"
    bad.write_text("gas: X\nmass_amu: 4\nprocesses: [\n  - id: a\n")
    status, out, err = _run(capsys, [str(bad)])
    assert status == 2
    _one_error_line(err)
    assert "bad.yaml" in err and "YAML syntax" in err


def test_console_script_prints_no_traceback(gases):
    # the real process: exit status and stderr as a user sees them
    proc = subprocess.run([sys.executable, "-m", "plasmazero.interfaces.cli", "swarm", str(gases[0]),
                           "--en", "abc"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    _one_error_line(proc.stderr)
    assert proc.stdout == ""
