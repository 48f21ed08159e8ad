"""Plot a discharge result or a scan file into a folder of PNG files (needs the ``plot`` extra).

``plasmazero plot RESULT.h5 -o DIR [--species CO,H,O]`` writes densities.png,
electrons.png, eedf.png, bed_feed.png and pathways_<species>.png.

``plasmazero plot SCAN.h5 -o DIR [--species CO,H2O]`` (a file of ``plasmazero scan``,
recognised by its ``format`` attribute) writes the figures of merit of the scan: lines
versus one varied parameter, heat maps over a grid of two, scatter plots for a Latin
hypercube; ``--species`` chooses the bed-feed species (default: the leading products).
A scan still running can be plotted: the finished points are shown.
"""

from pathlib import Path

from plasmazero.data.errors import InputError, format_problem
from plasmazero.workflows.scanfile import FORMAT as SCAN_FORMAT

from .cmd_report import pathways_from_file
from .result_file import read_result


def add_arguments(parser):
    parser.add_argument("result", help="HDF5 result of plasmazero run, or scan file of plasmazero scan")
    parser.add_argument("-o", "--out", required=True, metavar="DIR", help="folder for the PNG files")
    parser.add_argument("--species", default=None,
                        help="comma-separated species: pathway plots of a result (default CO,H,O), "
                             "bed-feed species of a scan (default: the leading products)")


def file_format(path):
    """The ``format`` attribute of the HDF5 file at ``path`` (``""`` when it is not readable)."""
    import h5py

    try:
        with h5py.File(path, "r") as f:
            value = f.attrs.get("format", "")
    except OSError:
        return ""      # missing or not HDF5: read_result reports it in its words
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)


def run(args):
    if file_format(args.result) == SCAN_FORMAT:
        return _plot_scan(args)
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
    temperature = rp.gas_temperature(data)
    if temperature is not None:
        figures["gas_temperature"] = temperature
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


def _plot_scan(args):
    from plasmazero.workflows.scan import read_scan

    from .scan_plots import require_matplotlib, write_scan_plots

    require_matplotlib("plot")
    result = read_scan(args.result)
    kind = result.plan.kind
    if kind != "scan":
        raise InputError([format_problem(args.result, None, f"a {kind} file: its plots are written by "
                                         f"plasmazero {kind} --plot DIR")])
    species = None
    if args.species:
        species = [s.strip() for s in args.species.split(",") if s.strip()]
        missing = [s for s in species if f"bed_mole_fraction_{s}" not in result.figures]
        if missing:
            raise InputError([format_problem(args.result, "--species", f"{s!r} is not a bed-feed species "
                                             "of this scan") for s in missing])
    try:
        paths = write_scan_plots(result, args.out, species=species)
    except ValueError as exc:
        raise InputError([format_problem(args.result, None, str(exc))]) from None
    done = int(result.ok.sum())
    print(f"wrote {len(paths)} figures to {args.out} ({done} of {len(result)} points succeeded)")
    return 0
