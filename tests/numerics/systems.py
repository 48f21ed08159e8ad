"""Test systems for the integrator, built directly as the arrays of the shared contract.

:func:`build` fills a :class:`plasmazero.physics.compiled.CompiledMechanism` (the fields
of the shared contract, plus ``stoichiometry``) from a short list of reactions, without
going through the mechanism file loader, so that the numerics can be tested against
closed forms on systems with exactly known rate coefficients. The rate coefficients are
evaluated by the real rate-law kernel (:func:`plasmazero.physics.ratelaws.rate_coefficients`);
the laws used here are ARRHENIUS with A = k, b = 0, Ea = 0 (constant k), ELECTRON_IMPACT
and the falloff forms.

Every number in this file is either a textbook test problem (Robertson 1966) or invented
for the tests and labelled so; none is presented as physical data.
"""

from __future__ import annotations

import numpy as np

from plasmazero.numerics import ElectronTable
from plasmazero.physics import ratelaws as rl
from plasmazero.physics.compiled import KERNEL_ARGS, CompiledMechanism


def _side(text):
    """'2 A + B' -> ['A', 'A', 'B'] (a leading integer repeats the species)."""
    out = []
    for term in text.split(" + "):
        term = term.strip()
        parts = term.split()
        if len(parts) == 2:
            out += [parts[1]] * int(parts[0])
        else:
            out.append(term)
    return out


def build(species, reactions, *, charge=None, composition=None, electron_processes=()):
    """A CompiledMechanism for ``reactions`` (kernel arguments in the documented order).

    Parameters
    ----------
    species : sequence of str
    reactions : sequence of (equation, law)
        ``equation`` like ``"A + B => C + 2 D"``; a reactant ``M`` makes a plain three-body
        reaction (rate multiplied by n_M), a trailing ``(+M)`` on both sides a falloff
        reaction. ``law`` is one of ``("k", value)`` (ARRHENIUS with b = Ea = 0),
        ``("arrhenius", A, b, Ea_K)``, ``("electron", column, scale)``,
        ``("lindemann", A0, b0, Ea0, Ainf, binf, Eainf)``,
        ``("troe", A0, b0, Ea0, Ainf, binf, Eainf, alpha, T3, T1, T2)``;
        optional third element of the tuple: dict of third-body efficiencies (default 1).
    charge : dict or None
        Species -> charge number.
    composition : dict or None
        Species -> {element: count}; the electron charge is counted as element "E"
        (minus the charge), as the mechanism compiler does.
    electron_processes : sequence of str
        Names of the electron-impact columns.
    """
    species = tuple(species)
    index = {s: i for i, s in enumerate(species)}
    n_s = len(species)
    n_r = len(reactions)
    q = np.zeros(n_s, dtype=np.int64)
    for s, v in (charge or {}).items():
        q[index[s]] = v
    comp = composition or {s: {s: 1} for s in species}
    elements = sorted({el for c in comp.values() for el in c})
    if np.any(q != 0) and "E" not in elements:
        elements.append("E")
    counts = np.zeros((len(elements), n_s))
    for s, c in comp.items():
        for el, v in c.items():
            counts[elements.index(el), index[s]] = v
    if "E" in elements:
        counts[elements.index("E")] = -q
    reac = np.full((n_r, 3), -1, np.int64)
    prod = np.full((n_r, 6), -1, np.int64)
    coef = np.zeros((n_r, 6))
    tb = np.full(n_r, -1, np.int64)
    mult = np.zeros(n_r, dtype=bool)
    law = np.zeros(n_r, np.int64)
    fpar = np.zeros((n_r, rl.N_FPAR))
    ipar = np.zeros((n_r, rl.N_IPAR), np.int64)
    eff_rows = []
    texts = []
    for j, spec in enumerate(reactions):
        eq, lawspec = spec[0], spec[1]
        eff = spec[2] if len(spec) > 2 else {}
        texts.append(eq)
        left, right = (x.strip() for x in eq.split("=>"))
        falloff = left.endswith("(+M)")
        if falloff:
            left = left[:-4].strip()
            right = right[:-4].strip()
        lhs = _side(left)
        rhs = _side(right)
        plain_M = "M" in lhs
        lhs = [s for s in lhs if s != "M"]
        rhs = [s for s in rhs if s != "M"]
        reac[j, :len(lhs)] = [index[s] for s in lhs]
        uniq = []
        for s in rhs:
            if s not in uniq:
                uniq.append(s)
        for m, s in enumerate(uniq):
            prod[j, m] = index[s]
            coef[j, m] = rhs.count(s)
        if plain_M or falloff:
            row = np.ones(n_s)
            for s, v in eff.items():
                row[index[s]] = v
            tb[j] = len(eff_rows)
            eff_rows.append(row)
            mult[j] = plain_M
        kind = lawspec[0]
        if kind == "k":
            law[j] = rl.ARRHENIUS
            fpar[j, 0:3] = (lawspec[1], 0.0, 0.0)
        elif kind == "arrhenius":
            law[j] = rl.ARRHENIUS
            fpar[j, 0:3] = lawspec[1:4]
        elif kind == "electron":
            law[j] = rl.ELECTRON_IMPACT
            ipar[j, 0] = lawspec[1]
            fpar[j, 0] = lawspec[2]
        elif kind == "lindemann":
            law[j] = rl.FALLOFF_LINDEMANN
            fpar[j, 0:6] = lawspec[1:7]
        elif kind == "troe":
            law[j] = rl.FALLOFF_TROE
            fpar[j, 0:6] = lawspec[1:7]
            fpar[j, 6:10] = lawspec[7:11]
            ipar[j, 0] = 1
        else:
            raise ValueError(kind)
    efficiencies = np.array(eff_rows) if eff_rows else np.zeros((0, n_s))
    arrays = dict(law=law, fpar=fpar, ipar=ipar, reactant_index=reac, product_index=prod,
                  product_coeff=coef, nasa7_coeffs=np.full((n_s, 2, 7), np.nan),
                  nasa7_T_K=np.full((n_s, 3), np.nan), energy_shift_J_mol=np.zeros(n_s),
                  expr_code=np.zeros(0, np.int64), expr_consts=np.zeros(0))
    kernel_args = tuple(arrays[name] for name in KERNEL_ARGS)   # the documented order
    stoich = np.zeros((n_s, n_r))
    for j in range(n_r):
        for s in reac[j]:
            if s >= 0:
                stoich[s, j] -= 1.0
        for s, c in zip(prod[j], coef[j]):
            if s >= 0:
                stoich[s, j] += c
    return CompiledMechanism(
        name="test system", path=None, species=species, charge=q, elements=tuple(elements),
        element_counts=counts, reactions=tuple(texts), n_species=n_s, n_reactions=n_r,
        reactant_index=reac, product_index=prod, product_coeff=coef, third_body=tb,
        efficiencies=np.ascontiguousarray(efficiencies), multiply_M=mult, law=law, fpar=fpar,
        ipar=ipar, kernel_args=kernel_args, electron_processes=tuple(electron_processes),
        uncertainty_factor=np.full(n_r, np.nan), source=("invented for the tests",) * n_r,
        stoichiometry=stoich, electron_index=index.get("e", -1), species_index=index)


def robertson():
    """Robertson's (1966) three-species problem as reactions with constant k.

    A -> B (0.04), B + B -> B + C (3e7), B + C -> A + C (1e4), dimensionless densities:
    y1' = -0.04 y1 + 1e4 y2 y3, y2' = 0.04 y1 - 1e4 y2 y3 - 3e7 y2^2, y3' = 3e7 y2^2.

    References
    ----------
    Robertson, H. H. (1966), The solution of a set of reaction rate equations, in
    Numerical Analysis: an Introduction (J. Walsh, ed.), Academic Press, 178-182;
    Hairer & Wanner (1996), Solving ODEs II, section IV.1, eq. (1.3).
    """
    return build(("A", "B", "C"), [("A => B", ("k", 0.04)),
                                   ("B + B => B + C", ("k", 3e7)),
                                   ("B + C => A + C", ("k", 1e4))])


# ------------------------------------------------------------ ion/electron toy system
# INVENTED FOR THE TESTS, NOT PHYSICAL DATA: an argon-like ion/electron system with a
# little neutral chemistry. Densities are m^-3, rate coefficients SI; the magnitudes are
# of plausible orders and nothing more.

TOY_SPECIES = ("e", "X", "X*", "X+", "X2+", "Y2", "Y", "Y3")
TOY_PROCESSES = ("toy_excitation", "toy_ionization")


def toy_plasma():
    """The invented ion/electron toy mechanism (see the comment above)."""
    reactions = [
        ("e + X => e + X*", ("electron", 0, 1.0)),
        ("e + X => e + e + X+", ("electron", 1, 1.0)),
        ("e + X* => e + e + X+", ("k", 2.0e-13)),
        ("X+ + X + M => X2+ + M", ("k", 2.5e-43), {"Y2": 0.8}),
        ("e + X2+ => X* + X", ("k", 1.0e-13)),
        ("e + X+ => X", ("k", 1.0e-18)),
        ("X* + X* => e + X+ + X", ("k", 5.0e-16)),
        ("X* + Y2 => X + Y + Y", ("k", 2.0e-16)),
        ("Y + Y + M => Y2 + M", ("k", 5.0e-45), {"X": 0.5}),
        ("Y + Y2 (+M) => Y3 (+M)", ("troe", 6.0e-46, -2.5, 0.0, 3.0e-17, 0.0, 0.0,
                                    0.6, 100.0, 1500.0, 5000.0)),
        ("Y3 + Y => Y2 + Y2", ("k", 8.0e-21)),
        ("X* => X", ("k", 1.0e5)),
    ]
    composition = {"e": {}, "X": {"X": 1}, "X*": {"X": 1}, "X+": {"X": 1}, "X2+": {"X": 2},
                   "Y2": {"Y": 2}, "Y": {"Y": 1}, "Y3": {"Y": 3}}
    return build(TOY_SPECIES, reactions, charge={"e": -1, "X+": 1, "X2+": 1},
                 composition=composition, electron_processes=TOY_PROCESSES)


def toy_table(columns=TOY_PROCESSES, scale=1.0, mole_fractions=None):
    """An invented electron table for the toy system (NOT PHYSICAL DATA).

    k_p(E/N) = scale * A_p exp(-B_p / (E/N)) with (A, B) = (3e-15 m^3/s, 300 Td) for
    excitation-like and (2e-15 m^3/s, 600 Td) for ionization-like columns; mean energy
    0.04 + 0.08 (E/N / Td)^0.8 eV; drift velocity 2e3 (E/N / Td) m/s; grid 0 and
    1 ... 1000 Td (40 points uniform in log E/N).
    """
    E = np.r_[0.0, np.geomspace(1.0, 1000.0, 40)]
    k = np.zeros((E.size, len(columns)))
    for p, name in enumerate(columns):
        A, B = (2e-15, 600.0) if "ion" in name else (3e-15, 300.0)
        with np.errstate(divide="ignore"):
            k[1:, p] = scale * A * np.exp(-B / E[1:])
    mean = 0.04 + 0.08 * E ** 0.8
    drift = 2e3 * E
    return ElectronTable(E_N_Td=E, k_m3_s=k, mean_energy_eV=mean, drift_velocity_m_s=drift,
                         processes=tuple(columns), mole_fractions=mole_fractions or {})


def toy_initial(n_gas_m3=2.4e25, x_Y2=0.2, n_e_m3=1e14):
    """Initial densities of the toy system: X/Y2 mixture with a neutral seed plasma."""
    y0 = np.zeros(len(TOY_SPECIES))
    idx = {s: i for i, s in enumerate(TOY_SPECIES)}
    y0[idx["X"]] = (1.0 - x_Y2) * n_gas_m3
    y0[idx["Y2"]] = x_Y2 * n_gas_m3
    y0[idx["e"]] = n_e_m3
    y0[idx["X+"]] = n_e_m3
    return y0


def radau_reference(mech, y0, t_eval, *, T_gas_K, field, table=None, rtol=1e-10, atol=1.0,
                    **linear):
    """Independent reference: scipy's Radau IIA (order 5) on the same right-hand side.

    The right-hand side and Jacobian come from the integrator's model evaluation
    (:func:`plasmazero.numerics.kinetics.evaluate`), the field from
    :meth:`FieldProfile.at`; the integration restarts at every field breakpoint.
    Radau IIA: Hairer & Wanner (1996), Solving ODEs II, section IV.8; scipy's
    implementation follows that description.
    """
    from scipy.integrate import solve_ivp

    from plasmazero.numerics import kinetics
    from plasmazero.numerics.integrate import build_model

    model = build_model(mech, T_gas_K, electron_table=table, **linear)
    cond = model[4]
    n = len(mech.species)
    f = np.zeros(n)
    J = np.zeros((n, n))

    def set_field(t):
        cond[1] = t
        cond[2] = field.at(t)
        cond[3] = 0.0

    def fun(t, y):
        set_field(t)
        kinetics.evaluate(cond[2], np.ascontiguousarray(y), model, f, J, kinetics.RHS)
        return f.copy()

    def jac(t, y):
        set_field(t)
        kinetics.evaluate(cond[2], np.ascontiguousarray(y), model, f, J, kinetics.JACOBIAN)
        return J.copy()

    t_eval = np.asarray(t_eval, dtype=float)
    cuts = [t for t in field.times_s if t_eval[0] < t < t_eval[-1]]
    edges = np.unique(np.r_[t_eval[0], cuts, t_eval[-1]])
    out = np.zeros((t_eval.size, n))
    out[t_eval == t_eval[0]] = y0
    y = np.asarray(y0, dtype=float)
    for a, b in zip(edges[:-1], edges[1:]):
        inside = (t_eval > a) & (t_eval <= b)
        ask = np.unique(np.r_[t_eval[inside], b])
        sol = solve_ivp(fun, (a, b), y, method="Radau", jac=jac, rtol=rtol, atol=atol,
                        t_eval=ask)
        assert sol.success, sol.message
        out[inside] = sol.y.T[np.searchsorted(ask, t_eval[inside])]
        y = sol.y[:, -1]
    return out
