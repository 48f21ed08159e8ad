"""Run a discharge scenario and write its result file.

``plasmazero run SCENARIO.yaml -o RESULT.h5 [--json]``: prints the summary (a readable
report by default, one JSON document with ``--json``), shows progress over the residence
time on stderr, and writes the HDF5 result atomically (never a half-written file).
"""

from __future__ import annotations

import json
import sys

from plasmazero.data.scenario import load_scenario
from plasmazero.workflows import analysis, dbd

from . import report_text
from .result_file import _json_default, write_result


def add_arguments(parser):
    parser.add_argument("scenario", help="scenario YAML file")
    parser.add_argument("-o", "--out", metavar="RESULT.h5", help="write the full result to this HDF5 file")
    parser.add_argument("--json", action="store_true", help="print the summary as one JSON document")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar on stderr")


def progress_bar(total_s, disable=False):
    """A tqdm bar over the residence time (ms of gas time); returns (callback, close)."""
    from tqdm import tqdm

    bar = tqdm(total=round(total_s * 1e3, 3), unit="ms", unit_scale=False, desc="gas time",
               file=sys.stderr, disable=disable, leave=False,
               bar_format="{desc}: {percentage:3.0f}%|{bar}| {n:.1f}/{total:.1f} ms gas time "
                          "[{elapsed}<{remaining}]")

    def update(t_done_s, _total):
        bar.update(round(t_done_s * 1e3, 3) - bar.n)

    return update, bar.close


def execute(scenario, file, out=None, as_json=False, show_progress=True):
    """Prepare, run, summarise and (optionally) write a scenario; returns the printed text."""
    setup = dbd.prepare(scenario, file)
    update, close = progress_bar(setup.residence_time_s, disable=not show_progress)
    try:
        result = dbd.run(setup, progress=update)
    finally:
        close()
    summary = analysis.summary(result)
    bed = analysis.bed_feed(result)
    summary["bed_feed"] = [{k: row[k] for k in ("species", "mole_fraction", "partial_pressure_Pa",
                                                 "density_m3", "flux_m2_s")} for row in bed["rows"]]
    if out:
        write_result(out, result, summary, bed)
    if as_json:
        return json.dumps(summary, default=_json_default, indent=1)
    main_species = [s for s in ("CO", "O", "H", "OH", "O3", "H2O", "CH3OH") if s in result.species]
    paths = [analysis.pathways(result, s, top=5) for s in main_species[:3]]
    return report_text.full_report(summary, bed, paths)


def run(args):
    scenario = load_scenario(args.scenario)
    text = execute(scenario, args.scenario, args.out, args.json, show_progress=not args.no_progress)
    print(text)
    return 0
