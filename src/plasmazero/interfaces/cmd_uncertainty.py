"""Monte Carlo propagation of rate-coefficient uncertainty to a scenario's figures.

``plasmazero uncertainty SCENARIO.yaml --target conversion_CO2 -o UQ.h5 [--samples 200]
[--seed 1] [--default-factor 2] [--workers N] [--plot DIR]``

Every rate coefficient is multiplied by a log-normal factor whose width comes from the
reaction's ``uncertainty_factor`` (read as one geometric standard deviation; reactions
without one take ``--default-factor``), following Turner (2015), Plasma Sources Sci.
Technol. 24, 035027. Prints the 5/50/95 percentiles of each target and the reactions whose
uncertainty drives it most (correlation of ln target with ln factor).
"""

from pathlib import Path

from plasmazero.data.scenario import load_scenario
from plasmazero.data.yamlio import read_yaml
from plasmazero.workflows.uncertainty import rank_drivers, run_uncertainty

from .cmd_sensitivity import POINT, mechanism_rows, save_per_target


def add_arguments(parser):
    parser.add_argument("scenario", help="scenario YAML file")
    parser.add_argument("--target", action="append", required=True, help="figure to analyse (repeatable)")
    parser.add_argument("-o", "--out", required=True, metavar="FILE.h5", help="scan file of the samples")
    parser.add_argument("--samples", type=int, default=200, help="Monte Carlo samples (default 200)")
    parser.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    parser.add_argument("--default-factor", type=float, default=2.0,
                        help="uncertainty factor of reactions that give none (default 2)")
    parser.add_argument("--workers", type=int, default=None, help="local workers (default: all cores)")
    parser.add_argument("--dask", default=None, metavar="ADDRESS", help="a dask.distributed scheduler")
    parser.add_argument("--top", type=int, default=10, help="driving reactions listed per target")
    parser.add_argument("--plot", default=None, metavar="DIR", help="write a histogram per target")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar")


def run(args):
    path = Path(args.scenario)
    scenario = load_scenario(path)
    labels, mech = mechanism_rows(path, scenario)
    result = run_uncertainty(POINT, read_yaml(path), args.target, mech.uncertainty_factor, labels,
                             n_samples=args.samples, seed=args.seed, default_factor=args.default_factor,
                             tie_to=mech.reverse_of, context={"scenario_file": str(path.resolve())},
                             scan_file=args.out, workers=args.workers, dask_address=args.dask,
                             progress=not args.no_progress)
    for target in args.target:
        pct = ", ".join(f"{lv:g} %: {v:.4g}" for lv, v in zip(result.levels, result.percentiles[target]))
        print(f"== {target}: nominal {result.nominal.get(target, float('nan')):.4g}; {pct} "
              f"({result.n_failed} failed samples)")
        for row, label, r in rank_drivers(result, target, args.top):
            print(f"  r = {r:+.3f}  [{row}] {label}")
    if args.plot:
        from .scan_plots import plot_uncertainty
        save_per_target(plot_uncertainty, result, args.target, args.plot, "uncertainty")
    return 0
