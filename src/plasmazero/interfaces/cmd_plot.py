"""Plot a discharge result into a folder of PNG files (needs the ``plot`` extra).

``plasmazero plot RESULT.h5 -o DIR [--species CO,H,O]`` writes densities.png,
electrons.png, eedf.png, bed_feed.png and pathways_<species>.png.
"""

from pathlib import Path

from plasmazero.data.errors import InputError, format_problem

from .cmd_report import pathways_from_file
from .result_file import read_result


def add_arguments(parser):
    parser.add_argument("result", help="HDF5 result of plasmazero run")
    parser.add_argument("-o", "--out", required=True, metavar="DIR", help="folder for the PNG files")
    parser.add_argument("--species", default=None, help="comma-separated species for pathway plots (default CO,H,O)")


def run(args):
    try:
        from . import result_plots as rp
        rp._figure()
    except RuntimeError as exc:
        raise InputError([format_problem(None, "plot", str(exc))]) from None
    data = read_result(args.result)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    figures = {"densities": rp.densities(data), "electrons": rp.electrons(data), "eedf": rp.eedfs(data),
               "bed_feed": rp.bed_feed_bars(data)}
    wanted = [s.strip() for s in args.species.split(",")] if args.species else \
        [s for s in ("CO", "H", "O") if s in data["species"]]
    for s in wanted:
        if s not in data["species"]:
            raise InputError([format_problem(args.result, "--species", f"{s!r} is not in this result")])
        figures[f"pathways_{s}"] = rp.pathway_bars(pathways_from_file(data, s))
    for name, fig in figures.items():
        fig.savefig(out / f"{name}.png", dpi=110)
    print(f"wrote {len(figures)} figures to {out}")
    return 0
