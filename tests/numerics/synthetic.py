"""A larger synthetic plasma-like mechanism for the linear-algebra tests.

INVENTED FOR THE TESTS, NOT PHYSICAL DATA. Species: electrons ``e``, neutral clusters
``A1 .. An`` (made of n units of the element A) and their positive ions ``A1+ .. An+``.
Reactions (random subsets, seeded; every rate number is invented, of plausible orders
only): electron-impact ionization, dissociative recombination, charge exchange,
three-body association with collision efficiencies (some differ from 1), bimolecular
association and unimolecular fragmentation. Every reaction conserves the units of A and
the charge, so element totals are a check.
"""

from __future__ import annotations

import numpy as np

import systems


def cluster_plasma(n_max=40, seed=0):
    """(mechanism, initial densities m^-3) of the invented cluster plasma (2 n_max + 1 species)."""
    rng = np.random.default_rng(seed)
    neutral = [f"A{i}" for i in range(1, n_max + 1)]
    ions = [f"A{i}+" for i in range(1, n_max + 1)]
    species = ["e"] + neutral + ions
    rx = []
    for i in range(1, n_max + 1):
        rx.append((f"e + A{i} => e + e + A{i}+", ("k", 10.0 ** rng.uniform(-19, -18))))
        if i >= 2:
            rx.append((f"e + A{i}+ => A{i - 1} + A1", ("k", 10.0 ** rng.uniform(-14, -13))))
            rx.append((f"A{i} => A{i - 1} + A1", ("k", 10.0 ** rng.uniform(1, 4))))
        else:
            rx.append(("e + A1+ => A1", ("k", 1e-13)))
    for _ in range(2 * n_max):
        i = int(rng.integers(1, n_max))
        j = int(rng.integers(1, n_max + 1 - i))
        if i + j > n_max:
            continue
        rx.append((f"A{i} + A{j} + M => A{i + j} + M", ("k", 10.0 ** rng.uniform(-45, -43)),
                   {f"A{int(rng.integers(1, n_max + 1))}": float(rng.uniform(0.3, 3.0))}))
        rx.append((f"A{i} + A{j} => A{i + j}", ("k", 10.0 ** rng.uniform(-21, -19))))
    for _ in range(2 * n_max):
        i, j = (int(v) for v in rng.integers(1, n_max + 1, 2))
        if i != j:
            rx.append((f"A{i}+ + A{j} => A{i} + A{j}+", ("k", 10.0 ** rng.uniform(-16, -15))))
    composition = {"e": {}}
    for i in range(1, n_max + 1):
        composition[f"A{i}"] = {"A": i}
        composition[f"A{i}+"] = {"A": i}
    charge = {"e": -1, **{s: 1 for s in ions}}
    mech = systems.build(species, rx, charge=charge, composition=composition)
    y0 = np.zeros(len(species))
    y0[species.index("A1")] = 1.2e25
    y0[species.index("A2")] = 1.2e25
    y0[species.index("e")] = y0[species.index("A2+")] = 1e16
    return mech, y0
