"""Speed of the two-term Boltzmann solver: time per E/N point, a 100-point table, a dense baseline.

Usage: ``python benchmarks/bench_swarm.py [--json] [--repeat N]``

The mixture is SYNTHETIC SPEED-ONLY DATA, NOT PHYSICAL DATA: five invented gases with
analytic model cross sections (smooth humps above each threshold), 8 processes each
(momentum transfer, four low-threshold "vibrational" excitations, two "electronic"
excitations, one ionization; one gas also has attachment), 41 processes in all. The numbers
only set the amount of work, which is what a real five-gas set of that size costs.

Timings (best of ``--repeat`` runs, after numba compilation; the first call, which compiles
or loads the numba cache, is reported on its own). The E/N-independent operators are kept
on the mixture between calls (``Mixture.operator_cache``); "fresh" timings clear it first.

* ``time_per_point_s``: per point of a 100-point table (1 to 1000 Td, log-spaced) from a
  fresh cache: the table time divided by 100, grid adaptation and operator builds included;
* ``single_point_fresh_s``: one call for a single E/N (50 Td) from a fresh cache (automatic
  grid: typically two grids built and solved);
* ``single_point_cached_s``: the same call again, its operators already built (what a
  kinetics code calling the solver repeatedly for one mixture pays);
* ``table_100_s``: the 100-point table at 500 cells (fresh cache);
* ``dense_solve_500_s``: one ``numpy.linalg.solve`` of a dense 500 x 500 system, the baseline
  of the target "no slower than one dense solve of the same size";
* ``time_per_point_superelastic_500_s``: per point of the 100-point table with superelastic
  reverses of the vibrational excitations at their Boltzmann populations (banded
  elimination instead of marching).
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import time
from pathlib import Path

import numpy as np

from plasmazero.boltzmann import build_mixture, solve_swarm
from plasmazero.data.cross_sections import CrossSectionSet, Process

LABEL = "synthetic speed-only data, not physical data (invented analytic cross sections)"


def _hump(threshold_eV, peak_m2, width_eV, top_eV=1e4, n=40):
    """A smooth invented cross section: zero at threshold, peak ~width above, slow fall (m2)."""
    x = threshold_eV + np.concatenate(([0.0], np.geomspace(1e-3 * width_eV, top_eV, n)))
    t = (x - threshold_eV) / width_eV
    return x, peak_m2 * t * np.exp(1.0 - t) / (1.0 + 0.05 * t) + peak_m2 * 0.02 * t / (1.0 + t)


def synthetic_mixture(superelastic=False):
    """Five invented gases, 41 processes (speed-only data)."""
    parts = []
    for g in range(5):
        name = f"SYN{g}"
        procs = []
        e = np.concatenate(([0.0], np.geomspace(1e-3, 1e4, 60)))
        s = (4e-20 + 2e-20 * g) * (1.0 + e / (2.0 + g)) / (1.0 + (e / 20.0) ** 1.5)
        procs.append(Process(id=f"{name}_m", kind="momentum_transfer", gas=name, energy_eV=e, cross_section_m2=s))
        for v in range(4):
            thr = 0.1 + 0.08 * v + 0.03 * g
            x, y = _hump(thr, 3e-21 / (1 + v), 0.5)
            procs.append(Process(id=f"{name}_v{v}", kind="excitation", gas=name, energy_eV=x,
                                 cross_section_m2=y, threshold_eV=thr,
                                 weight_ratio=1.0 if superelastic else None))
        for k in range(2):
            thr = 7.0 + 2.0 * k + 0.5 * g
            x, y = _hump(thr, 1e-20, 15.0)
            procs.append(Process(id=f"{name}_x{k}", kind="excitation", gas=name, energy_eV=x,
                                 cross_section_m2=y, threshold_eV=thr))
        thr = 12.0 + g
        x, y = _hump(thr, 2.5e-20, 60.0)
        procs.append(Process(id=f"{name}_i", kind="ionization", gas=name, energy_eV=x, cross_section_m2=y, threshold_eV=thr))
        if g == 4:
            x = np.array([0.0, 3.0, 4.5, 6.0, 8.0])
            procs.append(Process(id=f"{name}_a", kind="attachment", gas=name, energy_eV=x,
                                 cross_section_m2=np.array([0.0, 0.0, 4e-22, 0.0, 0.0])))
        procs = tuple(procs)
        parts.append((CrossSectionSet(gas=name, mass_amu=20.0 + 4.0 * g, processes=procs,
                                      by_id={p.id: p for p in procs}), 0.2))
    return build_mixture(parts)


def _best(fn, repeat):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def run(repeat=5):
    """All timings as a dict (see the module docstring)."""
    cache_dir = Path(__import__("plasmazero.physics.boltzmann.operator", fromlist=["x"]).__file__).parent / "__pycache__"
    cache_before = any(cache_dir.glob("operator.*.nbi")) if cache_dir.is_dir() else False
    load_before = os.getloadavg()[0]
    mix = synthetic_mixture()
    t0 = time.perf_counter()
    solve_swarm(mix, [50.0], n_cells=500)
    first_call = time.perf_counter() - t0
    en = np.geomspace(1.0, 1000.0, 100)

    def fresh(values, n):
        mix.operator_cache.clear()
        return solve_swarm(mix, values, n_cells=n)

    per_point, single_fresh, single_cached, tables = {}, {}, {}, {}
    for n in (200, 500, 1000, 2000):
        tables[n] = _best(lambda n=n: fresh(en, n), max(2, repeat // 2))
        per_point[str(n)] = tables[n] / en.size
        single_fresh[str(n)] = _best(lambda n=n: fresh([50.0], n), repeat)
        solve_swarm(mix, [50.0], n_cells=n)
        single_cached[str(n)] = _best(lambda n=n: solve_swarm(mix, [50.0], n_cells=n), repeat)
    table = tables[500]
    solves = int(fresh(en, 500).iterations.sum())
    rng = np.random.default_rng(1)
    A = rng.random((500, 500)) + 500.0 * np.eye(500)
    b = rng.random(500)
    dense = _best(lambda: np.linalg.solve(A, b), repeat * 4)
    mix_se = synthetic_mixture(superelastic=True)

    def fresh_se():
        mix_se.operator_cache.clear()
        return solve_swarm(mix_se, en, n_cells=500, excited_fractions="boltzmann")

    fresh_se()
    per_point_se = _best(fresh_se, max(2, repeat // 2)) / en.size
    return {
        "mixture": {"label": LABEL, "gases": len(mix.gases), "processes": len(mix.process_ids)},
        "machine": {"python": platform.python_version(), "processor": platform.processor() or platform.machine(),
                    "cpu_count": os.cpu_count(),
                    "load_average_1min_before_and_after": [load_before, os.getloadavg()[0]]},
        "numba_cache_present_before_first_call": cache_before,
        "first_call_s": first_call,
        "time_per_point_s": per_point,
        "single_point_fresh_s": single_fresh,
        "single_point_cached_s": single_cached,
        "table_100_s": table,
        "table_100_linear_solves": solves,
        "dense_solve_500_s": dense,
        "time_per_point_superelastic_500_s": per_point_se,
        "ratios": {"dense_solve": dense / per_point["500"]},
        "targets": {"dense_solve": 1.0, "time_per_point_500_s": 0.002, "table_100_s": 0.3},
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true", help="print the figures as one JSON document")
    parser.add_argument("--repeat", type=int, default=5, help="repetitions per timing (best is kept)")
    args = parser.parse_args(argv)
    res = run(args.repeat)
    if args.json:
        print(json.dumps(res, indent=2))
        return 0
    print(f"mixture: {res['mixture']['gases']} gases, {res['mixture']['processes']} processes ({LABEL})")
    print(f"first call (numba compile or cache load): {res['first_call_s']:.3f} s")
    for n, t in res["time_per_point_s"].items():
        print(f"{n:>4} cells: per point of a 100-point table {t * 1e3:8.3f} ms; single point fresh "
              f"{res['single_point_fresh_s'][n] * 1e3:8.3f} ms, cached {res['single_point_cached_s'][n] * 1e3:8.3f} ms")
    print(f"100-point table, 500 cells:   {res['table_100_s']:.3f} s ({res['table_100_linear_solves']} linear solves)")
    print(f"dense numpy.linalg.solve 500:  {res['dense_solve_500_s'] * 1e3:8.3f} ms "
          f"(ratio dense/ours {res['ratios']['dense_solve']:.2f})")
    print(f"per point with superelastic, 500 cells: {res['time_per_point_superelastic_500_s'] * 1e3:.3f} ms")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
