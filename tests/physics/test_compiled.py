"""The compiled mechanism keeps the shared contract (arrays, shapes, meanings).

References: the contract itself (the integrator builds on it), element and charge
conservation (common practice, no source: every reaction conserves both), and the
example mechanism shipped in mechanisms/examples/every_law.yaml.
"""

import math

import numpy as np
import pytest

from plasmazero.data.errors import InputError
from plasmazero.data.mechanism import load_mechanism
from plasmazero.data.shipped import shipped_root
from plasmazero.physics import ratelaws as rl
from plasmazero.physics.compiled import (
    KERNEL_ARGS,
    compile_mechanism,
    evaluate_rate_coefficients,
    load_compiled_mechanism,
    reaction_enthalpies_J_mol,
    third_body_densities,
)

EXAMPLE = shipped_root() / "examples" / "every_law.yaml"
LIBRARY = shipped_root() / "thermo" / "nasa7.yaml"


@pytest.fixture(scope="module")
def example():
    return load_compiled_mechanism(EXAMPLE)


def test_example_exercises_every_rate_law(example):
    codes = set(int(c) for c in example.law)
    assert codes == {rl.ARRHENIUS, rl.ELECTRON_ARRHENIUS, rl.FALLOFF_LINDEMANN, rl.FALLOFF_TROE,
                     rl.LANDAU_TELLER, rl.EXPRESSION, rl.ELECTRON_IMPACT, rl.REVERSE}


def test_contract_shapes_and_dtypes(example):
    m = example
    n_r, n_s = m.n_reactions, m.n_species
    assert len(m.species) == n_s and len(m.reactions) == n_r
    assert m.charge.dtype == np.int64 and m.charge.shape == (n_s,)
    assert m.element_counts.dtype == np.float64 and m.element_counts.shape == (len(m.elements), n_s)
    assert m.reactant_index.dtype == np.int64 and m.reactant_index.shape == (n_r, 3)
    assert m.product_index.dtype == np.int64 and m.product_index.shape == (n_r, 6)
    assert m.product_coeff.dtype == np.float64 and m.product_coeff.shape == (n_r, 6)
    assert m.third_body.dtype == np.int64 and m.third_body.shape == (n_r,)
    assert m.efficiencies.dtype == np.float64 and m.efficiencies.shape[1] == n_s
    assert m.multiply_M.dtype == bool and m.multiply_M.shape == (n_r,)
    assert m.law.dtype == np.int64 and m.fpar.shape == (n_r, 16) and m.ipar.shape == (n_r, 4)
    assert m.ipar.dtype == np.int64 and m.fpar.dtype == np.float64
    assert m.uncertainty_factor.shape == (n_r,) and len(m.source) == n_r
    assert len(m.kernel_args) == len(KERNEL_ARGS) == 11
    for name, arr in zip(KERNEL_ARGS, m.kernel_args):
        assert arr.flags.c_contiguous, name
    assert m.kernel_args[0] is not None and np.array_equal(m.kernel_args[0], m.law)
    # -1 padding: entries after the first -1 are -1 too
    for row in m.reactant_index:
        k = list(row).index(-1) if -1 in row else 3
        assert np.all(row[k:] == -1)
    # efficiency rows exist for each third body used
    assert m.third_body.max() < m.efficiencies.shape[0]


def test_every_row_conserves_elements_and_charge(example):
    m = example
    # element_counts @ nu = 0 and charge @ nu = 0 for every row (common practice, no source)
    assert np.abs(m.element_counts @ m.stoichiometry).max() < 1e-12
    assert np.abs(m.charge @ m.stoichiometry).max() < 1e-12
    # the electron pseudo-element E counts -charge
    e = m.elements.index("E")
    assert np.array_equal(m.element_counts[e], -m.charge.astype(float))


def test_stoichiometry_matches_index_arrays(example):
    m = example
    nu = np.zeros((m.n_species, m.n_reactions))
    for j in range(m.n_reactions):
        for s in m.reactant_index[j]:
            if s >= 0:
                nu[s, j] -= 1
        for s, c in zip(m.product_index[j], m.product_coeff[j]):
            if s >= 0:
                nu[s, j] += c
    assert np.array_equal(nu, m.stoichiometry)


def test_third_bodies_efficiencies_and_multiply_M(example):
    m = example
    sp = m.species_index
    j = m.reactions.index("Ar+ + Ar + M => Ar2+ + M")
    assert m.multiply_M[j]
    row = m.efficiencies[m.third_body[j]]
    assert row[sp["O2"]] == 0.8 and row[sp["Ar"]] == 1.0 and row[sp["O3"]] == 1.0
    j = m.reactions.index("O + O2 (+M) <=> O3 (+M)")
    assert m.third_body[j] >= 0 and not m.multiply_M[j] and m.law[j] == rl.FALLOFF_TROE
    j = m.reactions.index("O3 + O => 2 O2")
    assert m.third_body[j] == -1 and not m.multiply_M[j]
    # products: a coefficient 2 entry
    assert m.product_coeff[j, 0] == 2.0 and m.product_index[j, 0] == sp["O2"]
    # n_M = sum efficiencies * y
    y = np.arange(1.0, m.n_species + 1.0) * 1e20
    nM = third_body_densities(m, y)
    assert nM[j] == 0.0
    jj = m.reactions.index("Ar+ + Ar + M => Ar2+ + M")
    assert nM[jj] == pytest.approx(y.sum() - 0.2 * y[sp["O2"]], rel=1e-14)


def test_second_order_reactant_appears_twice(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("""
name: t
elements: [O]
species:
  - {name: O, composition: {O: 1}}
  - {name: O2, composition: {O: 2}}
reactions:
  - {equation: 2 O => O2, rate: {arrhenius: {A: 1e-20}}, source: test}
  - {equation: O + O2 => O2 + O, rate: {arrhenius: {A: 1e-20}}, source: test}
  - {equation: O2 => 2O, rate: {arrhenius: {A: 1.0}}, source: test}
""")
    m = load_compiled_mechanism(path)
    assert list(m.reactant_index[0]) == [0, 0, -1]
    assert list(m.product_index[2]) == [0, -1, -1, -1, -1, -1] and m.product_coeff[2, 0] == 2.0
    # a species on both sides: net stoichiometry zero
    assert np.all(m.stoichiometry[:, 1] == 0)


def test_electron_processes_and_columns(example):
    m = example
    assert m.electron_processes == ("ar_excitation", "ar_ionization")
    ke = np.array([2e-15, 3e-17])
    k, _ = evaluate_rate_coefficients(m, 300.0, mean_energy_eV=4.0, k_electron_m3_s=ke)
    assert k[m.reactions.index("e + Ar => e + Ar(4s)")] == 2e-15
    assert k[m.reactions.index("e + Ar => e + e + Ar+")] == 3e-17
    assert m.species[m.electron_index] == "e"


def test_provenance_fields(example):
    m = example
    j = m.reactions.index("e + Ar2+ => Ar(4s) + Ar")
    assert m.uncertainty_factor[j] == 3.0
    assert math.isnan(m.uncertainty_factor[0])
    assert all("invented for the example" in s for s in m.source)
    assert set(m.provenance) == {"invented"}


def test_excited_state_takes_parent_thermo_plus_energy(example):
    m = example
    sp = m.species_index
    a, p = sp["Ar(4s)"], sp["Ar"]
    assert np.array_equal(m.nasa7_coeffs[a], m.nasa7_coeffs[p])
    # 11.55 eV * e * N_A in J/mol (CODATA exact constants, via scipy.constants)
    import scipy.constants as sc
    assert m.energy_shift_J_mol[a] == pytest.approx(11.55 * sc.e * sc.N_A, rel=1e-14)
    assert not m.has_thermo[sp["Ar2+"]]


def test_reaction_enthalpy_of_excitation_is_the_excitation_energy(example):
    m = example
    dH = reaction_enthalpies_J_mol(m, 500.0)
    import scipy.constants as sc
    j = m.reactions.index("e + Ar => e + Ar(4s)")
    # e + Ar -> e + Ar*: the enthalpy change is the excitation energy (parent thermo shifted)
    assert dH[j] == pytest.approx(11.55 * sc.e * sc.N_A, rel=1e-12)
    assert math.isnan(dH[m.reactions.index("e + Ar2+ => Ar(4s) + Ar")])


def test_rate_coefficients_are_finite_and_positive_over_a_state_cloud(example):
    rng = np.random.default_rng(7)
    for _ in range(50):
        T = rng.uniform(200, 3000)
        k, dk = evaluate_rate_coefficients(example, T, mean_energy_eV=rng.uniform(0.1, 20),
                                           E_N_Td=rng.uniform(0, 500),
                                           k_electron_m3_s=rng.uniform(0, 1e-14, 2),
                                           n_M_m3=10 ** rng.uniform(20, 26))
        assert np.all(np.isfinite(k)) and np.all(k >= 0) and np.all(np.isfinite(dk))


def test_compile_reports_bad_expressions_when_loaded_without_checker(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("""
name: t
elements: [O]
species:
  - {name: O, composition: {O: 1}}
  - {name: O2, composition: {O: 2}}
reactions:
  - {equation: O + O => O2, rate: {expression: "__import__('os')"}, source: test}
  - {equation: O2 => O + O, rate: {expression: "Tg +"}, source: test}
""")
    loaded = load_mechanism(path)           # no checker: the data layer cannot compile formulas
    with pytest.raises(InputError) as err:
        compile_mechanism(loaded)
    assert len(err.value.problems) == 2
    assert all(str(path) in p for p in err.value.problems)
    with pytest.raises(InputError) as err:
        load_compiled_mechanism(path)
    assert len(err.value.problems) == 2
