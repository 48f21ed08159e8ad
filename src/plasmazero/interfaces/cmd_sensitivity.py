"""Normalised sensitivities d ln(target) / d ln(k_j) of a scenario's figures to its rate coefficients.

``plasmazero sensitivity SCENARIO.yaml --target conversion_CO2 [--target bed_mole_fraction_H]
-o SENS.h5 [--rows 0,5,12] [--factor 1.05] [--workers N] [--plot DIR]``

Central differences in ln k with factor f (2 runs per perturbed rate row, spread over
the workers; a reverse row moves with its forward row). Targets are figure names of the
scan point function (``conversion_<species>``, ``selectivity_<C|H|O>_<species>``,
``bed_mole_fraction_<species>``, ``energy_efficiency``, ...). The file is a scan file:
an interrupted run continues where it stopped.
"""

from pathlib import Path

from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.scenario import load_scenario
from plasmazero.data.yamlio import read_yaml
from plasmazero.workflows import dbd
from plasmazero.workflows.sensitivity import rank_sensitivities, run_sensitivity

POINT = "plasmazero.workflows.dbd_point:evaluate"


def add_arguments(parser):
    parser.add_argument("scenario", help="scenario YAML file")
    parser.add_argument("--target", action="append", required=True, help="figure to analyse (repeatable)")
    parser.add_argument("-o", "--out", required=True, metavar="FILE.h5", help="scan file of the runs")
    parser.add_argument("--rows", default=None, help="comma-separated rate rows to perturb (default: all)")
    parser.add_argument("--factor", type=float, default=1.05, help="perturbation factor (default 1.05)")
    parser.add_argument("--workers", type=int, default=None, help="local workers (default: all cores)")
    parser.add_argument("--dask", default=None, metavar="ADDRESS", help="a dask.distributed scheduler")
    parser.add_argument("--top", type=int, default=15, help="rows listed per target (default 15)")
    parser.add_argument("--plot", default=None, metavar="DIR", help="write a tornado plot per target")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar")


def mechanism_rows(path, scenario):
    """(row labels, compiled mechanism) of the scenario's mechanism."""
    loaded, mech = dbd.load_mechanism_pair(dbd.resolve_mechanism(scenario["mechanism"], path))
    return dbd.reaction_labels(loaded, mech), mech


def save_per_target(plot, result, targets, folder, prefix):
    """Write ``plot(result, target)`` as ``<folder>/<prefix>_<target>.png`` for every target."""
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    for target in targets:
        plot(result, target).savefig(out / f"{prefix}_{target}.png", dpi=110)


def parse_rows(text, n_rows, path):
    if text is None:
        return None
    try:
        rows = [int(v) for v in text.split(",") if v.strip()]
    except ValueError:
        raise InputError([format_problem(path, "--rows", f"not a list of row numbers: {text!r}")]) from None
    bad = [r for r in rows if not 0 <= r < n_rows]
    if bad:
        raise InputError([format_problem(path, "--rows", f"rows {bad} outside 0..{n_rows - 1}")])
    return rows


def run(args):
    path = Path(args.scenario)
    scenario = load_scenario(path)
    labels, mech = mechanism_rows(path, scenario)
    rows = parse_rows(args.rows, len(labels), path)
    result = run_sensitivity(POINT, read_yaml(path), args.target, labels, factor=args.factor, rows=rows,
                             tie_to=mech.reverse_of, context={"scenario_file": str(path.resolve())},
                             scan_file=args.out, workers=args.workers, dask_address=args.dask,
                             progress=not args.no_progress)
    for target in args.target:
        print(f"== sensitivity of {target} (nominal {result.nominal.get(target, float('nan')):.4g}), "
              f"d ln(target) / d ln(k)")
        for row, label, s in rank_sensitivities(result, target, args.top):
            print(f"  {s:+9.4f}  [{row}] {label}")
    if args.plot:
        from .scan_plots import plot_tornado
        save_per_target(lambda r, t: plot_tornado(r, t, top=args.top), result, args.target, args.plot,
                        "sensitivity")
    return 0
