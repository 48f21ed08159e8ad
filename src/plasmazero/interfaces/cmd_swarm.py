"""Electron swarm parameters and rate coefficients versus E/N (two-term Boltzmann solver).

``plasmazero swarm [FILE.yaml[=FRACTION] ...] [--en 1,10,100] [--en-range START:STOP:COUNT]
[--tgas KELVIN] [--cells N] [--growth temporal|spatial|none] [--sharing equal|one_takes_all]
[--json] [--out TABLE.h5]``

Without FILE the shipped argon cross sections are used. A single FILE without fraction has
fraction 1; with several files every one needs ``=FRACTION`` and the fractions must add up
to 1. Output: a readable table (default), exactly one JSON document on stdout (``--json``),
and optionally the full table with EEDFs as HDF5 (``--out``).
"""

from __future__ import annotations

import argparse
import math
import sys

import numpy as np

from plasmazero.data.cross_sections import load_cross_sections
from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.shipped import shipped_cross_section
from plasmazero.physics.boltzmann import DEFAULT_CELLS, build_mixture, solve_swarm

from .swarm_output import dump_json, format_table, json_document, write_hdf5

#: E/N values used when neither --en nor --en-range is given: 1 to 1000 Td, log-spaced
DEFAULT_EN_TD = np.geomspace(1.0, 1000.0, 13)


def add_arguments(parser):
    """Register the options of ``plasmazero swarm``."""
    parser.add_argument("files", nargs="*", metavar="FILE.yaml[=FRACTION]",
                        help="cross-section file and mole fraction (default: the shipped argon set; "
                             "a single file without fraction has fraction 1)")
    group = parser.add_mutually_exclusive_group()
    group.add_argument("--en", metavar="LIST",
                       help="comma-separated reduced fields in Td, e.g. 1,10,100")
    group.add_argument("--en-range", metavar="START:STOP:COUNT",
                       help="COUNT reduced fields from START to STOP Td, logarithmically spaced "
                            "(default without --en: 1:1000:13)")
    parser.add_argument("--tgas", metavar="KELVIN", default="300",
                        help="gas temperature in K (default 300)")
    parser.add_argument("--cells", metavar="N", default=None,
                        help=f"number of energy cells (default {DEFAULT_CELLS})")
    parser.add_argument("--growth", choices=("temporal", "spatial", "none"), default="temporal",
                        help="growth of the electron number (default temporal)")
    parser.add_argument("--sharing", choices=("equal", "one_takes_all"), default="equal",
                        help="energy sharing after ionization (default equal)")
    parser.add_argument("--json", action="store_true", help="print one JSON document instead of the table")
    parser.add_argument("--out", metavar="TABLE.h5", help="also write the full table with EEDFs to HDF5")


def _number(text, what):
    try:
        value = float(text)
    except ValueError:
        raise InputError([format_problem(None, what, f"{text!r} is not a number")]) from None
    if not math.isfinite(value):
        raise InputError([format_problem(None, what, f"{text!r} is not a finite number")])
    return value


def parse_fields(en, en_range):
    """E/N values in Td from the --en / --en-range options (InputError when invalid)."""
    if en is not None:
        items = [s.strip() for s in en.split(",")]
        if not en.strip() or any(not s for s in items):
            raise InputError([format_problem(None, "--en", f"{en!r} is not a comma-separated list of numbers")])
        values = np.array([_number(s, "--en") for s in items])
        if np.any(values < 0.0):
            raise InputError([format_problem(None, "--en", f"E/N {values[values < 0][0]:g} Td is negative")])
        return values
    if en_range is not None:
        parts = en_range.split(":")
        if len(parts) != 3:
            raise InputError([format_problem(None, "--en-range", f"{en_range!r} is not START:STOP:COUNT")])
        start, stop = _number(parts[0], "--en-range"), _number(parts[1], "--en-range")
        try:
            count = int(parts[2])
        except ValueError:
            raise InputError([format_problem(None, "--en-range", f"COUNT {parts[2]!r} is not an integer")]) from None
        if start <= 0.0 or stop < start:
            raise InputError([format_problem(None, "--en-range", "needs 0 < START <= STOP (the range is logarithmic)")])
        if count < 1:
            raise InputError([format_problem(None, "--en-range", "COUNT must be at least 1")])
        return np.geomspace(start, stop, count)
    return DEFAULT_EN_TD.copy()


def parse_files(specs):
    """[(path, fraction)] from FILE[=FRACTION] arguments (shipped argon when empty)."""
    if not specs:
        return [(shipped_cross_section("ar"), 1.0)]
    out = []
    for spec in specs:
        path, sep, frac = spec.rpartition("=")
        if not sep:
            path, frac = spec, None
        elif not path:
            raise InputError([format_problem(None, spec, "expected FILE.yaml=FRACTION")])
        out.append([path, None if frac is None else _number(frac, f"fraction of {path}")])
    missing = [p for p, f in out if f is None]
    if missing and len(out) > 1:
        raise InputError([format_problem(p, None, "give a mole fraction (FILE=FRACTION) for every file "
                                            "when several files are given") for p in missing])
    if len(out) == 1 and out[0][1] is None:
        out[0][1] = 1.0
    return [(p, f) for p, f in out]


def _options(args):
    tgas = _number(args.tgas, "--tgas")
    if tgas < 0.0:
        raise InputError([format_problem(None, "--tgas", f"{args.tgas!r} is below 0 K")])
    cells = None
    if args.cells is not None:
        try:
            cells = int(args.cells)
        except ValueError:
            raise InputError([format_problem(None, "--cells", f"{args.cells!r} is not an integer")]) from None
        if cells < 20:
            raise InputError([format_problem(None, "--cells", "needs at least 20 cells")])
    return tgas, cells


def run(args):
    """Compute the swarm table and print or write it; returns the exit status."""
    en = parse_fields(args.en, args.en_range)
    tgas, cells = _options(args)
    specs = parse_files(args.files)
    parts, problems = [], []
    for path, frac in specs:
        try:
            parts.append((load_cross_sections(path), frac))
        except InputError as exc:
            problems.extend(exc.problems)
    if problems:
        raise InputError(problems)
    mixture = build_mixture(parts)
    table = solve_swarm(mixture, en, tgas, n_cells=cells, growth=args.growth, sharing=args.sharing)
    inputs = {
        "files": [str(p) for p, _ in specs],
        "gases": list(mixture.gases),
        "fractions": [float(f) for _, f in specs],
        "T_gas_K": tgas,
        "cells": int(table.inputs["n_cells"]),
        "growth": args.growth,
        "sharing": args.sharing,
    }
    if args.out:
        write_hdf5(args.out, table, inputs)
    if args.json:
        sys.stdout.write(dump_json(json_document(table, inputs)) + "\n")
    else:
        sys.stdout.write(format_table(table, inputs))
        if args.out:
            sys.stdout.write(f"# full table with EEDFs written to {args.out}\n")
    return 0


if __name__ == "__main__":  # pragma: no cover - use the plasmazero console script
    p = argparse.ArgumentParser()
    add_arguments(p)
    sys.exit(run(p.parse_args()))
