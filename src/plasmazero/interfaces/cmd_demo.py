"""Run the shipped demo: an invented packed-bed DBD on a CO2/H2 feed.

``plasmazero demo [--json] [-o RESULT.h5]`` prints the summary, the bed feed and the main
pathways. All operating numbers of the demo are invented (see the scenario file, which
``plasmazero init DIR`` copies for editing).
"""

from plasmazero.data.scenario import load_scenario
from plasmazero.workflows.examples import DEMO, example_path

from .cmd_run import execute


def add_arguments(parser):
    parser.add_argument("-o", "--out", metavar="RESULT.h5", help="also write the HDF5 result")
    parser.add_argument("--json", action="store_true", help="print the summary as one JSON document")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar on stderr")


def run(args):
    path = example_path(DEMO)
    print(execute(load_scenario(path), path, args.out, args.json, show_progress=not args.no_progress))
    return 0
