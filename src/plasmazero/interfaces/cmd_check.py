"""Check a mechanism file: validate it, print a summary and warnings.

``plasmazero check MECHANISM.yaml`` reads the mechanism with every file it refers to
(cross sections, thermo library), reports every problem at once (one line each: file,
line, entry, problem; exit status 2), and otherwise prints a summary (species, elements,
reactions by rate law, cross-section files) followed by warnings: species never produced
or never consumed, reactions without a source, duplicates without a partner, unused
cross sections, and rate coefficients that are not finite or negative at a few sample
states. Exit status 0 when valid; with ``--strict`` warnings give exit status 1.
"""

from __future__ import annotations

import math
from collections import Counter

# The numerical modules are imported inside the functions: cli.build_parser imports every
# command module, and `plasmazero --help` should not wait for numba.

#: sample states for the rate sanity check: gas temperatures (K) and mean energies (eV)
SAMPLE_T_GAS_K = (300.0, 1000.0, 2500.0)
SAMPLE_MEAN_ENERGY_EV = (0.5, 3.0, 10.0)
SAMPLE_N_M_M3 = 2.5e25   # about 1 bar at 300 K


def add_arguments(parser):
    """Options of ``plasmazero check``."""
    parser.add_argument("mechanism", metavar="MECHANISM.yaml",
                        help="mechanism file to check, or the name of a shipped mechanism (co2, ...)")
    parser.add_argument("--strict", action="store_true",
                        help="exit with status 1 when there are warnings")
    parser.add_argument("--quiet", action="store_true",
                        help="print only warnings and the final verdict")


def summary_lines(loaded, mech):
    """The summary printed by the command, as a list of lines."""
    from plasmazero.physics import ratelaws as rl

    out = [f"mechanism {loaded.name} ({loaded.path})"]
    if loaded.description:
        out.append(f"  {loaded.description}")
    states = [s for s in loaded.species if s.state_of]
    charged = [s.name for s in loaded.species if s.charge]
    out.append(f"species: {len(loaded.species)}: {', '.join(s.name for s in loaded.species)}")
    if charged:
        out.append(f"  charged: {', '.join(charged)}")
    if states:
        out.append("  states: " + ", ".join(f"{s.name} ({s.state_of} + {s.energy_eV:g} eV)" for s in states))
    origin = Counter(s.thermo_from.split(":")[0] or "none" for s in loaded.species)
    no_thermo = [s.name for s in loaded.species if s.nasa7 is None]
    out.append("  thermo: " + ", ".join(f"{k} {v}" for k, v in sorted(origin.items()))
               + (f" (none for {', '.join(no_thermo)})" if no_thermo else ""))
    out.append(f"elements: {', '.join(loaded.elements)}")
    n_rev = sum(r.reversible for r in loaded.reactions)
    out.append(f"reactions: {len(loaded.reactions)} in the file, {mech.n_reactions} rows "
               f"({n_rev} reversible, each with a detailed-balance reverse row)")
    by_law = Counter(rl.LAW_NAMES[int(c)] for c in mech.law)
    out.append("  by rate law: " + ", ".join(f"{k} {v}" for k, v in sorted(by_law.items())))
    n_tb = sum(r.third_body == "M" for r in loaded.reactions)
    n_fo = sum(r.third_body == "falloff" for r in loaded.reactions)
    n_dup = sum(r.duplicate for r in loaded.reactions)
    n_unc = sum(not math.isnan(r.uncertainty_factor) for r in loaded.reactions)
    out.append(f"  three-body {n_tb}, falloff {n_fo}, duplicate {n_dup}, "
               f"with uncertainty factor {n_unc}")
    if loaded.cross_sections:
        out.append("cross-section files:")
        for cs in loaded.cross_sections:
            out.append(f"  {cs.path} ({cs.gas}: {len(cs.processes)} processes)")
    else:
        out.append("cross-section files: none")
    if mech.electron_processes:
        out.append(f"electron-impact processes used: {', '.join(mech.electron_processes)}")
    if loaded.thermo_library is not None:
        out.append("thermo library: " + ", ".join(str(p) for p in loaded.thermo_library))
    u = loaded.units
    out.append(f"units in the file: rate coefficient {u['rate_coefficient']} (bimolecular), "
               f"density {u['density']}, activation {u['activation']}; SI inside")
    return out


def rate_warnings(mech):
    """Rows whose rate coefficient is not finite or is negative at the sample states."""
    import numpy as np

    from plasmazero.physics.compiled import evaluate_rate_coefficients

    out = []
    bad = {}
    ke = np.zeros(len(mech.electron_processes))
    for T in SAMPLE_T_GAS_K:
        for eps in SAMPLE_MEAN_ENERGY_EV:
            with np.errstate(all="ignore"):
                k, dk = evaluate_rate_coefficients(mech, T, mean_energy_eV=eps, k_electron_m3_s=ke,
                                                   n_M_m3=SAMPLE_N_M_M3)
            for j in np.flatnonzero(~np.isfinite(k) | (k < 0) | ~np.isfinite(dk)):
                bad.setdefault(int(j), (T, eps, float(k[j])))
    for j, (T, eps, kj) in sorted(bad.items()):
        line = int(mech.line[j]) if mech.line[j] >= 0 else None
        where = f"{mech.path}:{line}" if line is not None else f"{mech.path}"
        out.append(f"{where}: reactions[{int(mech.file_reaction[j])}] '{mech.reactions[j]}': rate "
                   f"coefficient {kj!r} at Tg = {T:g} K, mean energy {eps:g} eV (not finite or negative)")
    return out


def run(args):
    """Run ``plasmazero check``; returns the exit status."""
    from plasmazero.data.mechanism import load_mechanism, mechanism_warnings
    from plasmazero.physics.compiled import compile_mechanism
    from plasmazero.physics.expression import compile_expression

    def check_expression(text, file, entry, line):
        compile_expression(text, file=file, entry=entry, line=line)

    from pathlib import Path

    from plasmazero.workflows.dbd import resolve_mechanism

    path = args.mechanism
    if not Path(path).exists():          # a shipped name such as "co2"
        path = resolve_mechanism(path)
    loaded = load_mechanism(path, check_expression=check_expression)
    mech = compile_mechanism(loaded)
    warnings = mechanism_warnings(loaded) + rate_warnings(mech)
    if not args.quiet:
        for line in summary_lines(loaded, mech):
            print(line)
    if warnings:
        print(f"warnings: {len(warnings)}")
        for w in warnings:
            print(f"  warning: {w}")
    plural = "s" if len(warnings) != 1 else ""
    verdict = "valid" if not warnings else f"valid, with {len(warnings)} warning{plural}"
    print(f"{loaded.path}: {verdict}")
    return 1 if (args.strict and warnings) else 0
