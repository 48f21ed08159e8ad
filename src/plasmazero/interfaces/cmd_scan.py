"""Scan a scenario over parameters: a full grid or a Latin hypercube, locally or on Dask.

``plasmazero scan SCENARIO.yaml --vary power.absorbed_W=5:20:4 --vary
feed.mole_fractions.H2=0.5,0.67,0.75 [--sample latin:200 --seed 1] -o SCAN.h5
[--workers N] [--dask ADDRESS] [--csv TABLE.csv] [--plots DIR]``

``--vary KEY=SPEC`` takes any key path of the scenario: ``start:stop:count`` (linear),
``log:start:stop:count`` or a list ``a,b,c``. A varied feed mole fraction renormalises the
others (they keep their ratios and fill 1 - x). The scan file is the checkpoint: run the
same command again to continue after an interruption; failed points are recorded with
their error and the scan goes on. Progress (count, rate, time left) goes to stderr.

``--csv`` writes the summary table (one row per point; the units are in the column
names). ``--plots DIR`` writes PNG figures of the main figures of merit (conversions,
energy efficiency, leading bed-feed species): lines versus one varied parameter, heat
maps over a grid of two, scatter plots coloured by the figure for a Latin hypercube
(:func:`plasmazero.interfaces.scan_plots.scan_figures`); ``plasmazero plot SCAN.h5 -o DIR``
makes the same figures later from the scan file.
"""

import sys
from pathlib import Path

from plasmazero.data.scenario import load_scenario
from plasmazero.data.yamlio import read_yaml
from plasmazero.workflows.scan import run_scan, write_summary_csv


def add_arguments(parser):
    parser.add_argument("scenario", help="base scenario YAML file")
    parser.add_argument("--vary", action="append", default=[], metavar="KEY=SPEC",
                        help="a parameter to vary (repeatable)")
    parser.add_argument("--sample", default="grid", metavar="grid|latin:N", help="design (default: full grid)")
    parser.add_argument("--seed", type=int, default=0, help="seed of the Latin hypercube")
    parser.add_argument("-o", "--out", required=True, metavar="SCAN.h5", help="scan file (checkpoint and result)")
    parser.add_argument("--workers", type=int, default=None, help="local worker processes (default: all cores)")
    parser.add_argument("--dask", default=None, metavar="ADDRESS", help="a dask.distributed scheduler address")
    parser.add_argument("--csv", default=None, metavar="TABLE.csv", help="also write the summary table")
    parser.add_argument("--plots", default=None, metavar="DIR",
                        help="also write PNG figures of the figures of merit into DIR (needs the plot extra)")
    parser.add_argument("--retry-failed", action="store_true", help="evaluate failed points again")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar")


def run(args):
    if args.plots:
        from .scan_plots import require_matplotlib
        require_matplotlib("--plots")   # before the scan: a long scan must not end without its plots
    load_scenario(args.scenario)   # one-line errors for a bad base before any worker starts
    path = Path(args.scenario)
    base = read_yaml(path)
    result = run_scan("plasmazero.workflows.dbd_point:evaluate", base, args.vary, design=args.sample,
                      seed=args.seed, context={"scenario_file": str(path.resolve())}, scan_file=args.out,
                      workers=args.workers, dask_address=args.dask, base_text=path.read_text(encoding="utf-8"),
                      scenario_file=path, retry_failed=args.retry_failed, progress=not args.no_progress)
    if args.csv:
        write_summary_csv(result, args.csv)
    failed = sum(1 for s in result.status if s != "ok")
    print(f"{len(result.status)} points in {args.out} ({failed} failed); evaluated now: {result.n_evaluated}")
    if args.csv:
        print(f"wrote the summary table {args.csv}")
    if args.plots:
        from .scan_plots import write_scan_plots
        try:
            paths = write_scan_plots(result, args.plots)
        except ValueError as exc:     # nothing to plot (every point failed, no numeric parameter)
            print(f"plasmazero: no plots: {exc}", file=sys.stderr)
        else:
            print(f"wrote {len(paths)} figures to {args.plots}")
    return 0
