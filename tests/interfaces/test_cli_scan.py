"""The scan command of the CLI end to end: scan file, summary table, plots, progress, errors.

The scans run the shipped (invented) ozone-generator example with 2 filaments per point
(about a second a point), so each test takes a few seconds. Outside references: the PNG
file signature and IHDR chunk of the PNG specification (ISO/IEC 15948:2004, also
RFC 2083; section numbers below from memory of that edition), read back with matplotlib's
PNG reader; the definition of the specific energy input SEI = P / Q (common practice, no
source); h5py and Python's csv module as readers.
"""

import contextlib
import csv
import io
import re
import struct
import subprocess
import sys

import h5py
import numpy as np
import pytest

from plasmazero.interfaces.cli import main
from plasmazero.workflows.examples import example_path

AMPLITUDES = "power.applied.amplitude_V=5000,6000,7000"     # whole numbers, as in the base file
FLOWS = "feed.flow_slm=0.5,1.0"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"                           # PNG specification, section 5.2


def _scenario(folder, pulses=2):
    text = example_path("ozone_generator").read_text(encoding="utf-8")
    assert "pulses: 40" in text
    path = folder / "ozone.yaml"
    path.write_text(text.replace("pulses: 40", f"pulses: {pulses}"), encoding="utf-8")
    return path


def _png_size(path):
    """(width, height) from the IHDR chunk, which the PNG specification puts first (section 11.2.2)."""
    data = path.read_bytes()
    assert data[:8] == PNG_SIGNATURE, path.name
    length, kind = struct.unpack(">I4s", data[8:16])
    assert kind == b"IHDR" and length == 13, path.name
    return struct.unpack(">II", data[16:24])


def _check_pngs(folder, stems):
    pytest.importorskip("matplotlib")
    from matplotlib.image import imread

    assert sorted(p.stem for p in folder.glob("*.png")) == sorted(stems)
    assert not list(folder.glob(".*tmp"))              # written under a temporary name, then renamed
    for stem in stems:
        path = folder / f"{stem}.png"
        width, height = _png_size(path)
        assert width >= 400 and height >= 300
        pixels = imread(path)                          # a real decoder reads the whole image
        assert pixels.shape[:2] == (height, width)
        assert np.ptp(pixels[..., :3]) > 0.5           # not a blank canvas


@pytest.fixture(scope="module")
def grid_scan(tmp_path_factory):
    pytest.importorskip("matplotlib")
    tmp = tmp_path_factory.mktemp("scan")
    scen = _scenario(tmp)
    out, table, plots = tmp / "grid.h5", tmp / "grid.csv", tmp / "plots"
    stdout, stderr = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
        status = main(["scan", str(scen), "--vary", AMPLITUDES, "--vary", FLOWS, "-o", str(out),
                       "--csv", str(table), "--plots", str(plots), "--workers", "2"])
    return {"status": status, "out": out, "csv": table, "plots": plots, "folder": tmp, "scenario": scen,
            "stdout": stdout.getvalue(), "stderr": stderr.getvalue()}


def _read_csv(path):
    rows = list(csv.reader(path.open(newline="", encoding="utf-8")))
    return rows[0], [dict(zip(rows[0], r)) for r in rows[1:]]


def test_grid_scan_writes_the_scan_file_the_table_and_heat_maps(grid_scan):
    assert grid_scan["status"] == 0
    assert "6 points in" in grid_scan["stdout"] and "(0 failed)" in grid_scan["stdout"]
    with h5py.File(grid_scan["out"], "r") as f:
        assert f.attrs["format"] == "plasmazero-scan" and f.attrs["n_points"] == 6
        assert list(f["points/status"].asstr()[...]) == ["ok"] * 6
    header, rows = _read_csv(grid_scan["csv"])
    # units are in the column names: the varied keys, the figures and the timing
    for name in ("power.applied.amplitude_V", "feed.flow_slm", "power_W", "sei_kJ_L", "sei_eV_per_molecule",
                 "conversion_O2", "energy_efficiency", "bed_mole_fraction_O3", "wall_time_s"):
        assert name in header, name
    assert header[:4] == ["index", "status", "power.applied.amplitude_V", "feed.flow_slm"]
    assert len(rows) == 6
    for row in rows:
        # SEI = P / Q (common practice, no source): W * 60 s/min / (L/min) = J/L, / 1000 -> kJ/L
        p_W, q_slm = float(row["power_W"]), float(row["feed.flow_slm"])
        assert float(row["sei_kJ_L"]) == pytest.approx(p_W * 60.0 / q_slm / 1000.0, rel=1e-9)
        assert 0.0 < float(row["conversion_O2"]) < 1.0 and 0.0 < float(row["bed_mole_fraction_O3"]) < 1.0
    # the grid's last key changes fastest
    assert [row["feed.flow_slm"] for row in rows] == ["0.5", "1.0"] * 3
    # a heat map per main figure of merit: conversion, efficiency, leading bed-feed products
    # (the only product above 1e-6 is O3: O atoms, ions and excited states stay far below)
    _check_pngs(grid_scan["plots"], ["conversion_O2", "energy_efficiency", "bed_mole_fraction_O3"])
    assert "wrote 3 figures" in grid_scan["stdout"]


def test_progress_shows_count_rate_and_time_left(grid_scan):
    err = grid_scan["stderr"]
    # tqdm's meter: "6/6 [elapsed<left, rate]"; the rate in s/point or point/s
    assert re.search(r"\b[1-5]/6 \[\d\d:\d\d<\d\d:\d\d, +\d+(\.\d+)?(s/point|point/s)\]", err), err
    assert re.search(r"\b6/6 \[\d\d:\d\d<00:00, +\d+(\.\d+)?(s/point|point/s)\]", err), err


def test_heat_map_cells_hold_the_scan_values(grid_scan):
    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import scan_figures
    from plasmazero.workflows.scan import read_scan

    _, rows = _read_csv(grid_scan["csv"])
    figs = scan_figures(read_scan(grid_scan["out"]))
    ax = figs["conversion_O2"].axes[0]
    z = np.asarray(ax.collections[0].get_array()).reshape(2, 3)   # rows: flow, columns: amplitude
    for row in rows:
        r = [0.5, 1.0].index(float(row["feed.flow_slm"]))
        c = [5000, 6000, 7000].index(int(float(row["power.applied.amplitude_V"])))
        assert z[r, c] == float(row["conversion_O2"])
    assert ax.get_xlabel() == "power.applied.amplitude_V (V)" and ax.get_ylabel() == "feed.flow_slm (slm)"
    assert figs["conversion_O2"].axes[1].get_ylabel() == "conversion of O2 (-)"


def test_plot_command_recognises_a_scan_file(grid_scan, capsys):
    again = grid_scan["folder"] / "again"
    assert main(["plot", str(grid_scan["out"]), "-o", str(again), "--species", "O3,O"]) == 0
    assert "wrote 4 figures" in capsys.readouterr().out
    _check_pngs(again, ["conversion_O2", "energy_efficiency", "bed_mole_fraction_O3", "bed_mole_fraction_O"])
    assert main(["plot", str(grid_scan["out"]), "-o", str(again), "--species", "XY"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "'XY' is not a bed-feed species" in err[0]


def test_one_parameter_scan_plots_lines_and_a_latin_scan_scatter(tmp_path):
    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import scan_figures
    from plasmazero.workflows.scan import read_scan

    scen = _scenario(tmp_path)
    out = tmp_path / "line.h5"
    assert main(["scan", str(scen), "--vary", "power.applied.amplitude_V=5000,7000", "-o", str(out),
                 "--workers", "0", "--no-progress"]) == 0
    assert main(["plot", str(out), "-o", str(tmp_path / "line")]) == 0
    _check_pngs(tmp_path / "line", ["conversion", "energy_efficiency", "bed_feed"])
    res = read_scan(out)
    line = scan_figures(res)["conversion"].axes[0].lines[0]
    assert list(line.get_xdata()) == [5000.0, 7000.0]
    assert list(line.get_ydata()) == list(res.figures["conversion_O2"])
    # Latin hypercube of two parameters: scatter coloured by the figure (the base amplitude
    # written as a float, so that sampled amplitudes need not be whole numbers)
    scen.write_text(scen.read_text().replace("amplitude_V: 6000,", "amplitude_V: 6000.0,"))
    lhs = tmp_path / "lhs.h5"
    assert main(["scan", str(scen), "--vary", "power.applied.amplitude_V=5000:7000:2", "--vary", FLOWS,
                 "--sample", "latin:3", "--seed", "2", "-o", str(lhs), "--workers", "0", "--no-progress",
                 "--plots", str(tmp_path / "lhs")]) == 0
    _check_pngs(tmp_path / "lhs", ["conversion_O2", "energy_efficiency", "bed_mole_fraction_O3"])
    res = read_scan(lhs)
    dots = scan_figures(res)["conversion_O2"].axes[0].collections[0]
    assert np.array_equal(np.asarray(dots.get_array()), res.figures["conversion_O2"])
    assert np.array_equal(dots.get_offsets()[:, 0], res.parameter("power.applied.amplitude_V"))


@pytest.mark.parametrize("vary, message", [
    ("power.applied.amplitud_V=5000,6000", "power.applied.amplitud_V: unknown key path"),
    ("power.applied.amplitude_V=5000:6000", "a range is start:stop:count"),
    ("feed.mole_fractions.O2=1.0,1.5", "a mole fraction must be in [0, 1], got 1.5 (point 1: "),
])
def test_a_bad_variation_is_one_line_exit_2_and_no_file(tmp_path, capsys, vary, message):
    scen = _scenario(tmp_path)
    out = tmp_path / "bad.h5"
    assert main(["scan", str(scen), "--vary", vary, "-o", str(out), "--csv", str(tmp_path / "t.csv"),
                 "--plots", str(tmp_path / "p"), "--no-progress"]) == 2
    captured = capsys.readouterr()
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("plasmazero: error: ") and message in lines[0], lines
    assert "Traceback" not in captured.err and captured.out == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ozone.yaml"]   # no scan, lock, table or plots


_NO_MATPLOTLIB = ("import sys; sys.modules['matplotlib'] = None; "   # as if it were not installed
                  "from plasmazero.interfaces.cli import main; sys.exit(main(sys.argv[1:]))")


def test_plots_without_matplotlib_say_how_to_install_it(tmp_path, grid_scan):
    scen = _scenario(tmp_path)
    out = tmp_path / "s.h5"
    run = subprocess.run([sys.executable, "-c", _NO_MATPLOTLIB, "scan", str(scen), "--vary", AMPLITUDES,
                          "-o", str(out), "--plots", str(tmp_path / "p")], capture_output=True, text=True,
                         timeout=120)
    assert run.returncode == 2
    lines = run.stderr.strip().splitlines()
    assert len(lines) == 1 and "pip install 'plasmazero[plot]'" in lines[0], run.stderr
    assert not out.exists() and not (tmp_path / "p").exists()   # refused before the scan started
    run = subprocess.run([sys.executable, "-c", _NO_MATPLOTLIB, "plot", str(grid_scan["out"]), "-o",
                          str(tmp_path / "p")], capture_output=True, text=True, timeout=120)
    assert run.returncode == 2 and len(run.stderr.strip().splitlines()) == 1
    assert "pip install 'plasmazero[plot]'" in run.stderr
