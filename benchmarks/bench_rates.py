"""Benchmark: all rate coefficients of a 500-reaction mechanism, compiled kernel vs Python loop.

The mechanism is SYNTHETIC (generated below, every number invented, not physical data):
species ``A1 .. A12`` made of a pseudo-element ``A``, an electron, and an excited state
``A1(v)``, with reactions of every rate law (arrhenius with and without third bodies,
reversible arrhenius, electron_arrhenius, falloff in the Lindemann and Troe forms,
landau_teller with a level ladder, expression, electron_impact). It is written to a
temporary YAML file and read through the ordinary loader and compiler.

Baseline: a plain-Python loop over the same reactions that evaluates each law from the
loaded records with :mod:`math` (written in this script, independently of the kernel),
including the detailed-balance reverse rates from the NASA polynomials. Both must give
the same k (relative difference below 1e-12 is checked and reported).

Usage: ``python benchmarks/bench_rates.py [--json] [--repeats N]``. The JSON holds raw
timings, ``ratios`` (``python_loop``: Python-loop time / kernel time, above 1 means the
kernel is faster) and ``targets``.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import numpy as np

from plasmazero.data.mechanism import load_mechanism
from plasmazero.physics import ratelaws as rl
from plasmazero.physics.compiled import compile_mechanism, third_body_densities
from plasmazero.physics.expression import compile_expression

N_REACTIONS = 500
N_SIZES = 12
N_PROCESSES = 10
# CODATA 2018 exact constants (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010)
K_B = 1.380649e-23
E_C = 1.602176634e-19
N_A = 6.02214076e23
R = K_B * N_A
P0 = 1e5


# --------------------------------------------------------------------------- synthetic mechanism


def _synthetic_files(folder):
    """Write the synthetic cross sections and mechanism into ``folder``; return the mechanism path."""
    rng = np.random.default_rng(12345)
    cs = ["gas: A1", "mass_amu: 20.0", "source: synthetic, invented for the benchmark, not physical data",
          "provenance: invented", "processes:",
          "  - {id: mt, kind: momentum_transfer, data: [[0, 1.0e-19], [100, 1.0e-19]]}"]
    for p in range(N_PROCESSES):
        thr = 0.2 + 0.5 * p
        cs.append(f"  - {{id: p{p}, kind: excitation, threshold_eV: {thr}, data: [[{thr}, 0], [{thr + 10}, 1.0e-21]]}}")
    (folder / "synthetic_cs.yaml").write_text("\n".join(cs) + "\n")

    species = ["  - {name: e, composition: {E: 1}, charge: -1}"]
    for n in range(1, N_SIZES + 1):
        a = [2.5 + 0.5 * n, 1e-4 * n, 0, 0, 0, -1000.0 * n, 4.0 + n]
        species.append(f"  - name: A{n}\n    composition: {{A: {n}}}\n    thermo:\n"
                       f"      nasa7: {{T_ranges_K: [200, 1000, 6000], low: {a}, high: {a}}}\n"
                       "      source: synthetic, invented for the benchmark, not physical data")
    species.append("  - {name: A1(v), state_of: A1, energy_eV: 0.3}")

    pairs = [(i, j) for i in range(1, N_SIZES + 1) for j in range(i, N_SIZES + 1) if i + j <= N_SIZES]
    kinds = ["arrhenius", "arrhenius_M", "reversible", "electron_arrhenius", "lindemann", "troe",
             "landau_teller", "expression", "electron_impact"]
    reactions = []
    for r in range(N_REACTIONS):
        kind = kinds[r % len(kinds)]
        i, j = pairs[int(rng.integers(len(pairs)))]
        k = i + j
        A = float(10 ** rng.uniform(-12, -9))
        b = round(float(rng.uniform(-1, 1)), 3)
        Ea = round(float(rng.uniform(0, 3000)), 1)
        if kind == "arrhenius":
            eq, rate = f"A{i} + A{j} => A{k}", f"{{arrhenius: {{A: {A}, b: {b}, Ea: {Ea}}}}}"
        elif kind == "arrhenius_M":
            eq = f"A{i} + A{j} + M => A{k} + M"
            rate = f"{{arrhenius: {{A: {A * 1e-20}, b: {b}, Ea: {Ea}}}}}"
        elif kind == "reversible":
            eq, rate = f"A{i} + A{j} <=> A{k}", f"{{arrhenius: {{A: {A}, b: {b}, Ea: {Ea}}}}}"
        elif kind == "electron_arrhenius":
            eq, rate = f"e + A{k} => e + A{i} + A{j}", f"{{electron_arrhenius: {{A: {A}, b: {b}, Ea: {Ea * 30}}}}}"
        elif kind in ("lindemann", "troe"):
            eq = f"A{i} + A{j} (+M) => A{k} (+M)"
            troe = ", troe: {alpha: 0.5, T3: 200, T1: 2000, T2: 4000}" if kind == "troe" else ""
            rate = f"{{falloff: {{low: {{A: {A * 1e-19}, b: {b - 1}, Ea: 0}}, high: {{A: {A}, b: {b}, Ea: {Ea}}}{troe}}}}}"
        elif kind == "landau_teller":
            eq = f"A1(v) + A{k} => A1 + A{k}"
            rate = f"{{landau_teller: {{A: {A}, B: {round(float(rng.uniform(20, 200)), 2)}, ladder: {{level: {1 + r % 5}, anharmonicity: 0.01}}}}}}"
        elif kind == "expression":
            eq = f"A{i} + A{j} => A{k}"
            rate = f'{{expression: "{A} * (Tg/300)**{b} * exp(-{Ea}/Tg) * sqrt(Te/11600)"}}'
        else:
            eq = "e + A1 => e + A1(v)"
            rate = f"{{electron_impact: {{process: p{r % N_PROCESSES}, scale: {round(float(rng.uniform(0.1, 1)), 3)}}}}}"
        extra = "\n    efficiencies: {A1: 2.0, A2: 0.5}" if kind in ("arrhenius_M", "troe") else ""
        reactions.append(f"  - equation: {eq}\n    rate: {rate}{extra}\n    duplicate: true\n"
                         "    source: synthetic, invented for the benchmark, not physical data")
    text = "\n".join([
        "name: synthetic_500",
        "description: synthetic mechanism for the rate benchmark; every number invented, not physical data",
        "provenance: invented",
        "units: {rate_coefficient: cm^3/s, activation: K}",
        "elements: [A, E]",
        "cross_sections: [synthetic_cs.yaml]",
        "species:", *species,
        "reactions:", *reactions, ""])
    path = folder / "synthetic_500.yaml"
    path.write_text(text)
    return path


# --------------------------------------------------------------------------- plain-Python baseline


def _arr(p, T):
    """Modified Arrhenius, reference 300 K: A (T/300)^b exp(-Ea/T)."""
    return p["A"] * (T / 300.0) ** p["b"] * math.exp(-p["Ea_K"] / T)


def _troe_F(T, Pr, t):
    """Gilbert, Luther & Troe (1983), Ber. Bunsenges. Phys. Chem. 87, 169."""
    Fc = (1 - t["alpha"]) * math.exp(-T / t["T3_K"]) + t["alpha"] * math.exp(-T / t["T1_K"])
    if t["T2_K"] is not None:
        Fc += math.exp(-t["T2_K"] / T)
    lf = math.log10(Fc)
    c, n = -0.4 - 0.67 * lf, 0.75 - 1.27 * lf
    x = math.log10(Pr) + c
    f = x / (n - 0.14 * x)
    return 10 ** (lf / (1 + f * f))


def _g_RT(nasa7, shift_eV, T):
    """g/(RT) from the NASA 7-coefficient form (McBride, Zehe & Gordon 2002)."""
    coeffs, T_K = nasa7
    a = coeffs[0] if T <= T_K[1] else coeffs[1]
    h = a[0] + a[1] * T / 2 + a[2] * T ** 2 / 3 + a[3] * T ** 3 / 4 + a[4] * T ** 4 / 5 + a[5] / T
    s = a[0] * math.log(T) + a[1] * T + a[2] * T ** 2 / 2 + a[3] * T ** 3 / 3 + a[4] * T ** 4 / 4 + a[6]
    return h - s + shift_eV * E_C / (K_B * T)


def python_rates(loaded, rows_of, programs, Tg, mean_eV, ke_by_process, nM_of_row):
    """Every row's k with a plain Python loop over the loaded reaction records."""
    Te = 2.0 / 3.0 * mean_eV * E_C / K_B
    variables = np.array([Tg, Te, 0.0, mean_eV])
    species = {s.name: s for s in loaded.species}
    out = {}
    for r in loaded.reactions:
        j = rows_of[r.index]
        p = r.rate.params
        kind = r.rate.kind
        if kind == "arrhenius":
            k = _arr(p, Tg)
        elif kind == "electron_arrhenius":
            k = _arr(p, Te)
        elif kind == "falloff":
            k0, kinf = _arr(p["low"], Tg), _arr(p["high"], Tg)
            Pr = k0 * nM_of_row[j] / kinf
            k = kinf * Pr / (1 + Pr)
            if p["troe"] is not None:
                k *= _troe_F(Tg, Pr, p["troe"])
        elif kind == "landau_teller":
            n, x = p["level"], p["anharmonicity"]
            k = n * (1 - x) / (1 - n * x) * p["A"] * math.exp(-p["B_K13"] * Tg ** (-1 / 3)
                                                            + p["C_K23"] * Tg ** (-2 / 3))
        elif kind == "expression":
            code, consts = programs[r.index]
            k = p["unit_factor"] * _eval_postfix(code, consts, variables)
        else:
            k = p["scale"] * ke_by_process[p["process"]]
        out[j] = k
        if r.reversible:
            dg = sum(c * _g_RT(species[n].nasa7, species[n].energy_eV, Tg) for n, c in r.products) \
                - sum(c * _g_RT(species[n].nasa7, species[n].energy_eV, Tg) for n, c in r.reactants)
            dnu = sum(c for _, c in r.products) - sum(c for _, c in r.reactants)
            Kc = math.exp(-dg) * (P0 / (K_B * Tg)) ** dnu
            out[j + 1] = k / Kc
    return out


def _eval_postfix(code, consts, variables):
    """Plain-Python stack evaluation of one compiled formula (Bauer & Samelson 1960,
    Commun. ACM 3, 76); opcodes as documented in plasmazero.physics.expression."""
    stack = []
    for op, arg in zip(code[0::2], code[1::2]):
        if op == 1:
            stack.append(float(consts[arg]))
        elif op == 2:
            stack.append(float(variables[arg]))
        elif op == 3:
            stack.append(-stack.pop())
        elif op == 4:
            stack.append(math.exp(stack.pop()))
        elif op == 5:
            stack.append(math.log(stack.pop()))
        elif op == 6:
            stack.append(math.sqrt(stack.pop()))
        else:
            b, a = stack.pop(), stack.pop()
            if op == 7:
                stack.append(a + b)
            elif op == 8:
                stack.append(a - b)
            elif op == 9:
                stack.append(a * b)
            elif op == 10:
                stack.append(a / b)
            elif op == 11:
                stack.append(a ** b)
            elif op == 12:
                stack.append(min(a, b))
            else:
                stack.append(max(a, b))
    return stack[0]


# --------------------------------------------------------------------------- main


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true", help="print the results as JSON")
    parser.add_argument("--repeats", type=int, default=2000, help="kernel calls to time")
    args = parser.parse_args(argv)

    with tempfile.TemporaryDirectory() as tmp:
        path = _synthetic_files(Path(tmp))

        def check(text, file, entry, line):
            compile_expression(text, file=file, entry=entry, line=line)

        loaded = load_mechanism(path, check_expression=check)
        mech = compile_mechanism(loaded)
    rows_of = {int(mech.file_reaction[j]): j for j in range(mech.n_reactions) if mech.reverse_of[j] < 0}
    programs = {r.index: compile_expression(r.rate.params["text"]) for r in loaded.reactions
                if r.rate.kind == "expression"}

    Tg, mean_eV = 650.0, 3.2
    rng = np.random.default_rng(1)
    ke = np.ascontiguousarray(rng.uniform(1e-17, 1e-14, len(mech.electron_processes)))
    ke_by_process = dict(zip(mech.electron_processes, ke))
    y = rng.uniform(1e20, 1e23, mech.n_species)
    nM = third_body_densities(mech, y)
    k = np.empty(mech.n_reactions)
    dk = np.empty(mech.n_reactions)

    t0 = time.perf_counter()
    rl.rate_coefficients(mech.kernel_args, Tg, math.nan, 0.0, mean_eV, ke, nM, k, dk)
    first_call = time.perf_counter() - t0
    best_kernel = math.inf
    for _ in range(5):
        t0 = time.perf_counter()
        for _ in range(args.repeats):
            rl.rate_coefficients(mech.kernel_args, Tg, math.nan, 0.0, mean_eV, ke, nM, k, dk)
        best_kernel = min(best_kernel, (time.perf_counter() - t0) / args.repeats)

    py_repeats = max(5, args.repeats // 200)
    best_python = math.inf
    for _ in range(3):
        t0 = time.perf_counter()
        for _ in range(py_repeats):
            ref = python_rates(loaded, rows_of, programs, Tg, mean_eV, ke_by_process, nM)
        best_python = min(best_python, (time.perf_counter() - t0) / py_repeats)

    ref_k = np.array([ref[j] for j in range(mech.n_reactions)])
    rel = np.abs(k - ref_k) / np.maximum(np.abs(ref_k), 1e-300)
    max_rel = float(rel.max())
    laws = Counter(rl.LAW_NAMES[int(c)] for c in mech.law)
    result = {
        "benchmark": "rate_coefficients",
        "mechanism": "synthetic (generated in the script, numbers invented, not physical data)",
        "n_reactions_in_file": len(loaded.reactions),
        "n_rows": mech.n_reactions,
        "n_species": mech.n_species,
        "rows_by_law": dict(sorted(laws.items())),
        "state": {"T_gas_K": Tg, "mean_energy_eV": mean_eV},
        "timings_s": {
            "kernel_per_call": best_kernel,
            "python_loop_per_call": best_python,
            "kernel_first_call_including_compile_or_cache_load": first_call,
        },
        "repeats": {"kernel": args.repeats, "python_loop": py_repeats, "best_of": [5, 3]},
        "max_relative_difference": max_rel,
        "same_k": bool(max_rel < 1e-12),
        "ratios": {"python_loop": best_python / best_kernel},
        "targets": {"python_loop": 50},
    }
    if args.json:
        print(json.dumps(result, indent=2))
    else:
        print(f"{result['n_rows']} rows ({result['n_reactions_in_file']} reactions), "
              f"kernel {best_kernel * 1e6:.1f} us/call, Python loop {best_python * 1e3:.2f} ms/call, "
              f"ratio {result['ratios']['python_loop']:.0f} (target 50), max rel. diff {max_rel:.1e}")
    return 0 if result["same_k"] else 1


if __name__ == "__main__":
    sys.exit(main())
