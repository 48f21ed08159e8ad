"""Export the bed feed of a result for a surface (microkinetic) model.

``plasmazero export RESULT.h5 --bed-feed FILE`` writes CSV, YAML or JSON by the file's
extension (.csv, .yaml/.yml, .json), with units in the column names and a metadata block
(scenario, mechanism, plasmazero version, date, where the bed sits). Written atomically.
"""

import csv
import datetime as _dt
import io
import json
import os
import tempfile
from pathlib import Path

import yaml

from plasmazero import __version__
from plasmazero.data.errors import InputError, format_problem

from .result_file import read_result

COLUMNS = ("species", "mole_fraction", "partial_pressure_Pa", "partial_pressure_bar", "density_m3",
           "flux_m2_s", "peak_density_m3")


def add_arguments(parser):
    parser.add_argument("result", help="HDF5 result of plasmazero run")
    parser.add_argument("--bed-feed", required=True, metavar="FILE", help="output file: .csv, .yaml or .json")
    parser.add_argument("--min-fraction", type=float, default=0.0, help="leave out species below this mole fraction")


def bed_feed_document(data, min_fraction=0.0):
    """(metadata dict, rows) of the bed feed stored in a read result file."""
    bed = data["bed_feed"]
    meta = {
        "what": "gas composition reaching the catalyst (plasmazero bed feed)",
        "where": bed["where"],
        "scenario": data["summary"].get("scenario", ""),
        "scenario_file": str(data.get("scenario_file", "")),
        "invented_scenario": bool(data["summary"].get("invented_scenario", False)),
        "mechanism": str(data.get("mechanism_name", "")),
        "plasmazero_version": __version__,
        "result_created_utc": str(data.get("created_utc", "")),
        "exported_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "temperature_K": bed["temperature_K"],
        "pressure_Pa": bed["pressure_Pa"],
        "flux": "impingement flux on a surface from kinetic theory, n v_mean / 4",
        "vibrational_temperatures_K": bed.get("vibrational_temperatures_K", {}),
    }
    rows = [{k: r[k] for k in COLUMNS} for r in bed["rows"] if r["mole_fraction"] >= min_fraction]
    return meta, rows


def render(meta, rows, suffix):
    """Text of the export in the format of ``suffix``."""
    if suffix == ".json":
        return json.dumps({"metadata": meta, "species": rows}, indent=1)
    if suffix in (".yaml", ".yml"):
        return yaml.safe_dump({"metadata": meta, "species": rows}, sort_keys=False)
    buf = io.StringIO()
    for key, value in meta.items():
        buf.write(f"# {key}: {json.dumps(value) if isinstance(value, dict) else value}\n")
    writer = csv.DictWriter(buf, fieldnames=COLUMNS, lineterminator="\n")
    writer.writeheader()
    writer.writerows(rows)
    return buf.getvalue()


def run(args):
    out = Path(args.bed_feed)
    suffix = out.suffix.lower()
    if suffix not in (".csv", ".json", ".yaml", ".yml"):
        raise InputError([format_problem(out, "--bed-feed", "extension must be .csv, .json, .yaml or .yml")])
    meta, rows = bed_feed_document(read_result(args.result), args.min_fraction)
    text = render(meta, rows, suffix)
    folder = out.parent if str(out.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{out.name}.", dir=folder)
    with os.fdopen(fd, "w", encoding="utf-8") as f:
        f.write(text)
    os.replace(tmp, out)
    print(f"wrote {len(rows)} species to {out}")
    return 0
