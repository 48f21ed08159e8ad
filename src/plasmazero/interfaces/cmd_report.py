"""Print the summary, bed feed and pathways stored in a result file.

``plasmazero report RESULT.h5 [--species CO,H,O]``: pathways from the integrated rates of
the discharge zone (and of the downstream transit when there was one).
"""

import numpy as np

from plasmazero.data.errors import InputError, format_problem
from plasmazero.workflows.analysis import rank_pathways

from . import report_text
from .result_file import read_result


def add_arguments(parser):
    parser.add_argument("result", help="HDF5 result of plasmazero run")
    parser.add_argument("--species", default=None, help="comma-separated species for the pathways (default: CO,H,O where present)")
    parser.add_argument("--top", type=int, default=8, help="reactions listed per direction (default 8)")


def pathways_from_file(data, species, zone="discharge", top=8):
    """Pathways of ``species`` from a read result file (same output as analysis.pathways)."""
    surface = data["surface_net_m3"] if zone == "discharge" else None
    return rank_pathways(data["species"], data["reactions"], data["stoichiometry"],
                         data[f"integrated_rates_{zone}_m3"], surface, species, zone, top)


def run(args):
    data = read_result(args.result)
    wanted = [s.strip() for s in args.species.split(",")] if args.species else \
        [s for s in ("CO", "H", "O") if s in data["species"]]
    unknown = [s for s in wanted if s not in data["species"]]
    if unknown:
        raise InputError([format_problem(args.result, "--species", f"not in this result: {', '.join(unknown)}")])
    parts = [report_text.summary_text(data["summary"]), report_text.bed_feed_text(data["bed_feed"])]
    zones = ["discharge"] + (["downstream"] if np.any(data["integrated_rates_downstream_m3"]) else [])
    for s in wanted:
        for zone in zones:
            parts.append(report_text.pathways_text(pathways_from_file(data, s, zone, args.top)))
    print("\n\n".join(parts))
    return 0
