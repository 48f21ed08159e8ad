"""A scan driver killed with SIGKILL loses no finished point and leaves a readable file.

The driver runs in a subprocess with a pool of two workers; it is killed once some points
are in the scan file. The file must open, hold only complete points, and a resumed run must
finish the scan with every point exactly once and the results of an uninterrupted scan.
The point function is Manley's equation (plasmazero.physics.discharge.manley_power_W),
paced by a short sleep so that the kill lands in the middle of the scan.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import h5py
import numpy as np
import pytest

from plasmazero.physics.discharge import manley_power_W
from plasmazero.workflows.scan import read_scan, run_scan
from plasmazero.workflows.scanfile import journal_path, read_hdf5

# invented DBD operating point (orders of magnitude of a lab reactor, not a measured one)
BASE = {"power": {"applied": {"amplitude_V": 8000.0, "frequency_Hz": 20000.0, "burning_voltage_V": 2500.0}},
        "reactor": {"dielectric": {"capacitance_F": 1.0e-10}, "gap_capacitance_F": 2.0e-11}}
VARIATIONS = ["power.applied.amplitude_V=4000:12000:10", "power.applied.frequency_Hz=1e4,2e4,3e4,4e4"]
N_POINTS = 40
CONTEXT = {"delay_s": 0.08}
POINT = f"{__name__}:paced_manley_point"
# the folder to put on sys.path so that the module imports by its name in a fresh interpreter
IMPORT_ROOT = str(Path(__file__).resolve().parents[len(__name__.split(".")) - 1])

DRIVER = """
import sys
sys.path.insert(0, sys.argv[1])
from plasmazero.workflows.scan import run_scan
mod = __import__(sys.argv[2].partition(":")[0], fromlist=["x"])
run_scan(sys.argv[2], mod.BASE, mod.VARIATIONS, context=mod.CONTEXT, scan_file=sys.argv[3], workers=2,
         progress=False, fold_interval_s=0.2)
"""


def paced_manley_point(doc, context):
    """Manley power of the doc's DBD; sleeps ``context['delay_s']`` first (pacing only)."""
    time.sleep(context.get("delay_s", 0.0))
    a = doc["power"]["applied"]
    r = doc["reactor"]
    return {"power_W": manley_power_W(a["amplitude_V"], a["frequency_Hz"], a["burning_voltage_V"],
                                      r["dielectric"]["capacitance_F"], r["gap_capacitance_F"]),
            "pid": float(os.getpid())}


def _running(pid):
    """Whether process ``pid`` exists and is not a zombie (Linux /proc)."""
    try:
        state = Path(f"/proc/{int(pid)}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except (FileNotFoundError, ProcessLookupError, IndexError):
        return False
    return state != "Z"


def _finished(path):
    try:
        return sum(s != "pending" for s in read_scan(path).status)
    except Exception:  # noqa: BLE001 - the file may not exist yet
        return 0


@pytest.mark.skipif(sys.platform != "linux", reason="SIGKILL and /proc: Linux")
def test_sigkilled_driver_loses_nothing_and_resumes_exactly(tmp_path):
    path = tmp_path / "scan.h5"
    proc = subprocess.Popen([sys.executable, "-c", DRIVER, IMPORT_ROOT, POINT, str(path)],
                            start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 60
        while _finished(path) < 8:
            assert proc.poll() is None, proc.stderr.read().decode()
            assert time.monotonic() < deadline, "the driver made no progress"
            time.sleep(0.05)
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=10)
        assert proc.returncode == -signal.SIGKILL

        # the HDF5 file opens; with the journal it holds only complete points
        read_hdf5(path)
        with h5py.File(path, "r") as f:
            assert f.attrs["format"] == "plasmazero-scan"
        killed = read_scan(path)
        done = [i for i, s in enumerate(killed.status) if s != "pending"]
        assert 8 <= len(done) < N_POINTS
        u0 = killed.parameter("power.applied.amplitude_V")
        fr = killed.parameter("power.applied.frequency_Hz")
        for i in done:
            assert killed.status[i] == "ok"
            assert killed.figures["power_W"][i] == manley_power_W(u0[i], fr[i], 2500.0, 1e-10, 2e-11)

        # the orphaned workers notice that the driver is gone and exit
        worker_pids = {int(p) for p in killed.figures["pid"][done] if int(p) != proc.pid}
        assert worker_pids
        deadline = time.monotonic() + 10
        while any(_running(p) for p in worker_pids) and time.monotonic() < deadline:
            time.sleep(0.1)
        assert not any(_running(p) for p in worker_pids)
    finally:
        try:
            os.killpg(proc.pid, signal.SIGKILL)       # the session started above, if anything is left
        except ProcessLookupError:
            pass

    resumed = run_scan(POINT, BASE, VARIATIONS, context=CONTEXT, scan_file=path, workers=2, progress=False)
    assert resumed.n_evaluated == N_POINTS - len(done)          # finished points were not redone
    assert all(s == "ok" for s in resumed.status)
    for i in done:                                               # and not changed
        assert resumed.figures["pid"][i] == killed.figures["pid"][i]
    with h5py.File(path, "r") as f:
        assert list(f["points/index"][...]) == list(range(N_POINTS))     # every point exactly once
    assert not journal_path(path).exists()

    # identical to an uninterrupted scan (in this process, no pacing)
    straight = run_scan(POINT, BASE, VARIATIONS, workers=0, progress=False)
    assert np.array_equal(resumed.figures["power_W"], straight.figures["power_W"])
    assert np.array_equal(read_scan(path).figures["power_W"], straight.figures["power_W"])


def test_torn_and_corrupt_journal_lines_are_ignored(tmp_path):
    path = tmp_path / "scan.h5"
    run_scan(POINT, BASE, VARIATIONS[:1], scan_file=path, workers=0, progress=False, fold_interval_s=1e9)
    full = read_scan(path)
    # simulate a driver killed while writing: a journal with one good line, one line with a
    # wrong checksum, and a torn last line without its newline
    from plasmazero.workflows.scanfile import PointRecord, _line, _record_json, to_json
    header, _, _ = read_hdf5(path)
    rec = PointRecord(index=3, status="ok", wall_time_s=0.0, figures={"power_W": 123.0})
    bad = _line(_record_json(PointRecord(index=4, status="ok", figures={"power_W": 1.0}))).replace(b"1.0", b"2.0")
    torn = _line(_record_json(PointRecord(index=5, status="ok", figures={"power_W": 9.0})))[:-7]
    journal_path(path).write_bytes(_line(to_json({"journal": "plasmazero-scan", "fingerprint": header["fingerprint"]}))
                                   + _line(_record_json(rec)) + bad + torn)
    seen = read_scan(path)
    assert seen.figures["power_W"][3] == 123.0                               # the good line counts
    assert seen.figures["power_W"][4] == full.figures["power_W"][4]          # the corrupt one does not
    assert seen.figures["power_W"][5] == full.figures["power_W"][5]          # nor the torn one
    # a journal of another scan is refused rather than mixed in
    journal_path(path).write_bytes(_line(to_json({"journal": "plasmazero-scan", "fingerprint": "0" * 64})))
    from plasmazero.data.errors import InputError
    with pytest.raises(InputError, match="journal of a different scan"):
        read_scan(path)
