"""Scan throughput on the demo scenario with 1 and 2 local workers.

Points per minute of ``run_scan`` over a small grid of the demo scenario (power varied),
with one worker process and with two; the same points both times, each in a fresh scan
file, after one warm-up point has filled the numba cache. ``ratios.two_workers`` is the
1-worker time over the 2-worker time (target 1.8 on a 2-core machine).

    python benchmarks/bench_scan.py --json [--points 6] [--pulses 10]
"""

import argparse
import json
import os
import tempfile
import time

from plasmazero.data.yamlio import read_yaml
from plasmazero.workflows.examples import DEMO, example_path
from plasmazero.workflows.scan import run_scan


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true", help="print JSON only")
    parser.add_argument("--points", type=int, default=6, help="points of the grid (default 6)")
    parser.add_argument("--pulses", type=int, default=10, help="filaments per point (default 10)")
    args = parser.parse_args()
    path = example_path(DEMO)
    base = dict(read_yaml(path))
    base["discharge"] = dict(base["discharge"], pulses=args.pulses)
    variation = [f"power.absorbed_W=5:15:{args.points}"]
    context = {"scenario_file": str(path)}
    evaluate = "plasmazero.workflows.dbd_point:evaluate"
    times = {}
    with tempfile.TemporaryDirectory() as tmp:
        run_scan(evaluate, base, ["power.absorbed_W=10"], context=context, workers=0, progress=False,
                 scan_file=os.path.join(tmp, "warm.h5"))
        for workers in (1, 2):
            t0 = time.perf_counter()
            res = run_scan(evaluate, base, variation, context=context, workers=workers, progress=False,
                           warm_up=False, scan_file=os.path.join(tmp, f"w{workers}.h5"))
            times[workers] = time.perf_counter() - t0
            assert all(s == "ok" for s in res.status), res.errors
    out = {
        "points": args.points, "pulses_per_point": args.pulses, "cpu_count": os.cpu_count(),
        "wall_s": {"1_worker": times[1], "2_workers": times[2]},
        "points_per_minute": {"1_worker": 60 * args.points / times[1], "2_workers": 60 * args.points / times[2]},
        "ratios": {"two_workers": times[1] / times[2]},
        "targets": {"two_workers": 1.8},
    }
    print(json.dumps(out, indent=None if args.json else 1))


if __name__ == "__main__":
    main()
