"""The scan engine: grids through a process pool, checkpoint file, failures, Dask, plots.

Point functions are real functions of this project: the Manley power of a DBD
(plasmazero.physics.discharge.manley_power_W) and the two-term Boltzmann solution in the
shipped argon set (plasmazero.boltzmann). Reference values are independent computations:
the closed form of Manley's equation written out here, and direct calls of the solver.
"""

import csv
import functools
import os
import sys
from pathlib import Path

import numpy as np
import pytest

from plasmazero.data.errors import InputError
from plasmazero.physics.discharge import manley_power_W
from plasmazero.workflows.scan import (read_scan, resolve_point_function, run_scan, summary_table,
                                       write_summary_csv)
from plasmazero.workflows.scanfile import acquire_lock, read_hdf5

# invented DBD operating point (orders of magnitude of a lab reactor, not a measured one)
MANLEY_BASE = {
    "power": {"applied": {"amplitude_V": 8000.0, "frequency_Hz": 20000.0, "burning_voltage_V": 2500.0}},
    "reactor": {"dielectric": {"capacitance_F": 1.0e-10}, "gap_capacitance_F": 2.0e-11},
}


def manley_point(doc, context):
    """Point function: mean discharge power of the doc's DBD by Manley's equation."""
    a = doc["power"]["applied"]
    r = doc["reactor"]
    return {"power_W": manley_power_W(a["amplitude_V"], a["frequency_Hz"], a["burning_voltage_V"],
                                      r["dielectric"]["capacitance_F"], r["gap_capacitance_F"]),
            "point_index": float(context["point_index"])}


def crashing_point(doc, context):
    """Fault injection: the worker process dies (as on a segmentation fault) at 7000 V."""
    if doc["power"]["applied"]["amplitude_V"] == 7000.0:
        os._exit(3)
    return manley_point(doc, context)


def manley_closed_form(u0, f, ub, cd, cg):
    # Manley (1943), Trans. Electrochem. Soc. 84, 83: P = 4 f C_d U_b (U_0 - U_b (C_d + C_g)/C_d)
    # above the ignition amplitude U_b (C_d + C_g)/C_d, else 0 (independent re-statement)
    u_min = ub * (cd + cg) / cd
    return 4.0 * f * cd * ub * (u0 - u_min) if u0 > u_min else 0.0


@functools.lru_cache(maxsize=None)
def _argon_mixture():
    from plasmazero.boltzmann import build_mixture
    from plasmazero.data.cross_sections import load_cross_sections
    from plasmazero.data.shipped import shipped_cross_section

    return build_mixture([(load_cross_sections(shipped_cross_section("ar")), 1.0)])


def _numba_cache_stats():
    """(cache hits, cache misses) of every numba dispatcher loaded from plasmazero, this process."""
    from numba.core.registry import CPUDispatcher

    hits = misses = 0
    for name, mod in list(sys.modules.items()):
        if not name.startswith("plasmazero") or mod is None:
            continue
        for obj in list(vars(mod).values()):
            if isinstance(obj, CPUDispatcher):
                hits += sum(obj.stats.cache_hits.values())
                misses += sum(obj.stats.cache_misses.values())
    return hits, misses


def argon_swarm_point(doc, context):
    """Point function: mean energy and drift velocity in argon at the doc's E/N and gas temperature."""
    from plasmazero.boltzmann import solve_swarm

    sw = solve_swarm(_argon_mixture(), doc["discharge"]["E_N_Td"], doc["gas_temperature"]["temperature_K"])
    hits, misses = _numba_cache_stats()
    return {"mean_energy_eV": float(sw.mean_energy_eV[0]), "drift_velocity_m_s": float(sw.drift_velocity_m_s[0]),
            "numba_cache_hits": float(hits), "numba_cache_misses": float(misses), "pid": float(os.getpid())}


AMPLITUDES = "power.applied.amplitude_V=-2000:10000:7"          # -2, 0, 2, ..., 10 kV
FREQUENCIES = "power.applied.frequency_Hz=1e4,2e4,5e4"


def test_grid_scan_in_a_pool_matches_manley_and_records_failures(tmp_path):
    path = tmp_path / "scan.h5"
    res = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES, FREQUENCIES], scan_file=path, workers=2,
                   progress=False)
    assert len(res) == 21 and res.n_evaluated == 21
    u0, f = res.parameter("power.applied.amplitude_V"), res.parameter("power.applied.frequency_Hz")
    assert list(u0[:6]) == [-2000.0] * 3 + [0.0] * 3 and list(f[:3]) == [1e4, 2e4, 5e4]   # last fastest
    for i in range(len(res)):
        if u0[i] <= 0:
            # manley_power_W refuses a non-positive amplitude: the point fails, the scan goes on
            assert res.status[i] == "failed"
            assert res.errors[i].startswith("ValueError: amplitude_V must be a positive")
            assert np.isnan(res.figures["power_W"][i])
        else:
            assert res.status[i] == "ok" and res.errors[i] == ""
            ref = manley_closed_form(u0[i], f[i], 2500.0, 1e-10, 2e-11)
            assert res.figures["power_W"][i] == pytest.approx(ref, rel=1e-12, abs=1e-9)
            assert res.figures["point_index"][i] == i
    assert np.all(res.wall_time_s >= 0)
    # the file holds the same, bit for bit, with the plan and the base scenario
    back = read_scan(path)
    assert back.status == res.status and back.errors == res.errors
    assert np.array_equal(back.figures["power_W"], res.figures["power_W"], equal_nan=True)
    header, plan, _ = read_hdf5(path)
    assert header["design"] == "grid" and "amplitude_V: 8000.0" in header["base_text"]
    assert plan.variations == (AMPLITUDES, FREQUENCIES) and plan.values == res.plan.values
    # summary table: units are in the column names
    csv_path = tmp_path / "summary.csv"
    write_summary_csv(back, csv_path)
    rows = list(csv.reader(csv_path.open()))
    assert rows[0] == ["index", "status", "power.applied.amplitude_V", "power.applied.frequency_Hz",
                       "power_W", "point_index", "wall_time_s", "error"]
    assert len(rows) == 22 and rows[1][1] == "failed" and rows[1][4] == "" and "ValueError" in rows[1][7]
    assert float(rows[-1][4]) == res.figures["power_W"][-1]


def test_second_run_skips_finished_points_and_other_scans_are_refused(tmp_path):
    path = tmp_path / "scan.h5"
    first = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], scan_file=path, workers=0, progress=False)
    again = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], scan_file=path, workers=0, progress=False)
    assert again.n_evaluated == 0
    assert np.array_equal(again.figures["power_W"], first.figures["power_W"], equal_nan=True)
    retry = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], scan_file=path, workers=0, progress=False,
                     retry_failed=True)
    assert retry.n_evaluated == first.status.count("failed") == 2
    with pytest.raises(InputError, match="holds a different scan"):
        run_scan(manley_point, MANLEY_BASE, [FREQUENCIES], scan_file=path, workers=0, progress=False)
    other_base = {**MANLEY_BASE, "reactor": {"dielectric": {"capacitance_F": 2e-10}, "gap_capacitance_F": 2e-11}}
    with pytest.raises(InputError, match="holds a different scan"):
        run_scan(manley_point, other_base, [AMPLITUDES], scan_file=path, workers=0, progress=False)
    fresh = run_scan(manley_point, MANLEY_BASE, [FREQUENCIES], scan_file=path, workers=0, progress=False,
                     overwrite=True)
    assert fresh.n_evaluated == 3 and len(read_scan(path)) == 3


def test_a_running_scan_file_is_locked(tmp_path):
    path = tmp_path / "scan.h5"
    fd = acquire_lock(path)
    try:
        with pytest.raises(InputError, match="in use by another running scan"):
            run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], scan_file=path, workers=0, progress=False)
    finally:
        os.close(fd)
    run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], scan_file=path, workers=0, progress=False)


def test_bad_inputs_are_input_errors_before_anything_runs(tmp_path):
    path = tmp_path / "scan.h5"
    with pytest.raises(InputError, match="power.applied.amplitud_V: unknown key path") as err:
        run_scan(manley_point, MANLEY_BASE, ["power.applied.amplitud_V=1,2"], scan_file=path, progress=False)
    assert len(err.value.problems) == 1           # named once, not once per point
    with pytest.raises(InputError, match="expected grid or latin:N"):
        run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], design="random", progress=False)
    with pytest.raises(InputError, match="package.module:function"):
        resolve_point_function("no_colon_here")
    with pytest.raises(InputError, match="cannot import module"):
        resolve_point_function("plasmazero.no_such_module:f")
    assert not path.exists()


def test_dotted_name_latin_design_and_a_real_function_with_the_wrong_signature(tmp_path):
    name = f"{__name__}:manley_point"
    res = run_scan(name, MANLEY_BASE, ["power.applied.amplitude_V=log:4000:10000:2",
                                        "power.applied.burning_voltage_V=2000,3000"],
                   design="latin:6", seed=3, scan_file=tmp_path / "lhs.h5", workers=0, progress=False)
    u0 = res.parameter("power.applied.amplitude_V")
    ub = res.parameter("power.applied.burning_voltage_V")
    assert len(res) == 6 and np.all((u0 >= 4000) & (u0 <= 10000)) and np.all((ub >= 2000) & (ub <= 3000))
    assert all(s == "ok" for s in res.status)
    for i in range(6):
        assert res.figures["power_W"][i] == pytest.approx(manley_closed_form(u0[i], 2e4, ub[i], 1e-10, 2e-11),
                                                          rel=1e-12)
    header, plan, _ = read_hdf5(tmp_path / "lhs.h5")
    assert header["design"] == "latin:6" and header["seed"] == 3 and header["evaluate"] == name
    # manley_power_W itself is not a point function: every point records the TypeError
    bad = run_scan(manley_power_W, MANLEY_BASE, [FREQUENCIES], workers=0, progress=False)
    assert bad.status == ("failed",) * 3 and all(e.startswith("TypeError") for e in bad.errors)


def test_argon_swarm_scan_in_workers_matches_the_solver_and_loads_compiled_code(tmp_path):
    from plasmazero.boltzmann import solve_swarm

    base = {"discharge": {"E_N_Td": 100.0}, "gas_temperature": {"temperature_K": 300.0}}
    res = run_scan(argon_swarm_point, base, ["discharge.E_N_Td=log:10:300:6", "gas_temperature.temperature_K=300,600"],
                   scan_file=tmp_path / "ar.h5", workers=2, progress=False)
    assert all(s == "ok" for s in res.status), res.errors
    # the first point ran in the driver (warm-up), the others in worker processes
    pids = res.figures["pid"]
    assert pids[0] == os.getpid() and np.all(pids[1:] != os.getpid())
    # after the warm-up filled numba's on-disk cache, no worker compiled anything: every
    # kernel was loaded from the cache (cache hits, no misses)
    assert np.all(res.figures["numba_cache_misses"][1:] == 0)
    assert np.all(res.figures["numba_cache_hits"][1:] >= 1)
    # and the cache index files of the solver's kernels used here are on disk
    from numba.core.registry import CPUDispatcher
    used = [obj for name, mod in list(sys.modules.items()) if name.startswith("plasmazero.physics.boltzmann")
            for obj in vars(mod).values() if isinstance(obj, CPUDispatcher) and obj.signatures]
    assert used
    for d in used:
        assert list(Path(d.stats.cache_path).glob(f"*.{d.py_func.__name__}-*.nbi")), d.py_func.__name__
    # independent computation: the solver called directly in this process, same numbers
    en = res.parameter("discharge.E_N_Td")
    tg = res.parameter("gas_temperature.temperature_K")
    for i in range(len(res)):
        sw = solve_swarm(_argon_mixture(), en[i], tg[i])
        assert res.figures["mean_energy_eV"][i] == pytest.approx(sw.mean_energy_eV[0], rel=1e-12)
        assert res.figures["drift_velocity_m_s"][i] == pytest.approx(sw.drift_velocity_m_s[0], rel=1e-12)


def test_a_dying_worker_fails_its_point_only(tmp_path):
    res = run_scan(crashing_point, MANLEY_BASE, ["power.applied.amplitude_V=4000:9000:6"], workers=2,
                   progress=False, scan_file=tmp_path / "crash.h5")
    u0 = res.parameter("power.applied.amplitude_V")
    for i in range(len(res)):
        if u0[i] == 7000.0:
            assert res.status[i] == "failed" and "worker process died" in res.errors[i]
        else:
            assert res.status[i] == "ok"
            assert res.figures["power_W"][i] == pytest.approx(manley_closed_form(u0[i], 2e4, 2500.0, 1e-10, 2e-11))


def test_dask_local_cluster_gives_the_same_results(tmp_path):
    distributed = pytest.importorskip("distributed")
    local = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES, FREQUENCIES], workers=0, progress=False)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False, protocol="tcp",
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        res = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES, FREQUENCIES], dask_address=cluster.scheduler_address,
                       scan_file=tmp_path / "dask.h5", progress=False, connect_timeout_s=10)
    assert res.status == local.status and res.errors == local.errors
    assert np.array_equal(res.figures["power_W"], local.figures["power_W"], equal_nan=True)
    assert read_scan(tmp_path / "dask.h5").status == local.status
    with pytest.raises(InputError, match="cannot reach the scheduler"):
        run_scan(manley_point, MANLEY_BASE, [AMPLITUDES], dask_address="tcp://127.0.0.1:9", progress=False,
                 connect_timeout_s=1)


def test_progress_goes_to_stderr(capsys):
    run_scan(manley_point, MANLEY_BASE, [FREQUENCIES], workers=0, progress=True)
    err = capsys.readouterr().err
    assert "3/3" in err and "point/s" in err


def test_plots_of_a_scan():
    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import plot_heat_map, plot_versus_parameter

    res = run_scan(manley_point, MANLEY_BASE, ["power.applied.amplitude_V=4000:10000:4", FREQUENCIES],
                   workers=0, progress=False)
    fig = plot_versus_parameter(res, "power_W", "power.applied.amplitude_V")
    ax = fig.axes[0]
    # labels carry the unit read from the name's suffix
    assert len(ax.lines) == 3 and ax.get_xlabel() == "power.applied.amplitude_V (V)" and ax.get_ylabel() == "power_W (W)"
    assert [t.get_text() for t in ax.get_legend().get_texts()] == [f"power.applied.frequency_Hz = {f:g} Hz"
                                                                   for f in (1e4, 2e4, 5e4)]
    x, y = ax.lines[1].get_data()                       # f = 2e4 Hz
    assert list(x) == [4000.0, 6000.0, 8000.0, 10000.0]
    assert np.allclose(y, [manley_closed_form(u, 2e4, 2500.0, 1e-10, 2e-11) for u in x], rtol=1e-12)
    heat = plot_heat_map(res, "power_W", "power.applied.amplitude_V", "power.applied.frequency_Hz", log_y=True)
    mesh = heat.axes[0].collections[0]
    z = np.asarray(mesh.get_array()).reshape(3, 4)      # rows: frequency, columns: amplitude
    assert z[2, 3] == pytest.approx(manley_closed_form(10000.0, 5e4, 2500.0, 1e-10, 2e-11))
    with pytest.raises(ValueError, match="two parameters only"):
        three = run_scan(manley_point, MANLEY_BASE, [AMPLITUDES, FREQUENCIES, "power.applied.burning_voltage_V=2e3,3e3"],
                         workers=0, progress=False)
        plot_heat_map(three, "power_W", "power.applied.amplitude_V", "power.applied.frequency_Hz")
    header, rows = summary_table(res)
    assert len(rows) == 12 and header[4] == "power_W"
    # the cells carry their values, as the colour bar does
    texts = [t.get_text() for t in heat.axes[0].texts]
    assert f"{manley_closed_form(10000.0, 5e4, 2500.0, 1e-10, 2e-11):.3g}" in texts and len(texts) == 12


def test_axis_labels_read_units_from_names():
    pytest.importorskip("matplotlib")
    from plasmazero.interfaces.scan_plots import axis_label, spans_decades, unit_of

    # units in names are the project's convention (DEVELOPERS.md); "-" is dimensionless
    assert unit_of("power.absorbed_W") == "W" and unit_of("sei_kJ_L") == "kJ/L"
    assert unit_of("sei_eV_per_molecule") == "eV/molecule" and unit_of("discharge.E_N_Td") == "Td"
    assert unit_of("feed.flow_sccm") == "sccm" and unit_of("discharge.pulse_duration_s") == "s"
    assert unit_of("reactor.packed_bed.porosity") == "-" and unit_of("discharge.pulses") == "-"
    # species names are not units: C, K, F are species here
    assert unit_of("bed_mole_fraction_C") == "-" and unit_of("conversion_CO2") == "-"
    assert axis_label("selectivity_C_CO") == "C selectivity to CO (-)"
    assert axis_label("feed.mole_fractions.H2") == "H2 mole fraction, feed (-)"
    assert axis_label("reactor.packed_bed.surface_losses[0].sticking") == \
        "reactor.packed_bed.surface_losses[0].sticking (-)"
    assert spans_decades([1e-5, 1e-3, np.nan]) and not spans_decades([0.1, 0.5]) and not spans_decades([-1, 1e3])


def test_largest_predicted_first_follows_the_fitted_cost():
    from plasmazero.workflows.scan import cost_features, largest_predicted_first, scan_plan

    plan = scan_plan(["power.absorbed_W=5:15:6", "discharge.mode=filaments,uniform"])
    x = cost_features(plan)
    assert x.shape == (12, 1)                     # the word parameter is left out
    assert x[0, 0] == 0.0 and x[-1, 0] == 1.0
    # exact affine costs are recovered exactly by least squares (analytic): the pending
    # point of largest cost comes first, whatever its place in the plan (grid order: the
    # last variation changes fastest, so points 2i and 2i+1 share a power)
    cost = 2.0 + 3.0 * x[:, 0]
    done = {i: cost[i] for i in (0, 2, 4)}
    pending = [3, 6, 11, 7, 10]
    assert largest_predicted_first(pending, x, done) == 2                      # point 11, x = 1
    assert largest_predicted_first(pending, x, {0: 5.0, 2: 4.0, 4: 3.0}) == 0  # falling cost: point 3
    # too few finished points for the fit (one more than the two coefficients), or no
    # numeric parameter: plan order
    assert largest_predicted_first(pending, x, {0: 1.0, 2: 2.0}) == 0
    assert largest_predicted_first(pending, None, done) == 0
    assert cost_features(scan_plan(["discharge.mode=filaments,uniform"])) is None
