"""Mechanism files: every validation error names file, line, entry and problem; all together.

The reference for each message is the schema documented in plasmazero/data/mechanism.py;
the unit factors are checked against scipy.constants (CODATA values, independent of the
constants plasmazero carries).
"""

import copy

import numpy as np
import math

import pytest
import scipy.constants as sc
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from plasmazero.data import mechanism as mech_mod
from plasmazero.data.errors import InputError
from plasmazero.data.mechanism import load_mechanism, mechanism_warnings, parse_equation
from plasmazero.data.shipped import shipped_root
from plasmazero.physics.compiled import compile_mechanism
from plasmazero.physics.expression import compile_expression

LIBRARY = shipped_root() / "thermo" / "nasa7.yaml"
AR = shipped_root() / "cross_sections" / "ar.yaml"


def _check(text, file, entry, line):
    compile_expression(text, file=file, entry=entry, line=line)


BASE = f"""\
name: test
units: {{rate_coefficient: cm^3/s, activation: K}}
elements: [Ar, O, E]
cross_sections: [{AR}]
thermo_library: {LIBRARY}
species:
  - name: e
    composition: {{E: 1}}
    charge: -1
  - name: Ar
    composition: {{Ar: 1}}
  - name: Ar+
    composition: {{Ar: 1}}
    charge: 1
  - name: Ar*
    state_of: Ar
    energy_eV: 11.5
  - name: O
    composition: {{O: 1}}
  - name: O2
    composition: {{O: 2}}
  - name: X
    composition: {{O: 4}}
reactions:
  - equation: e + Ar => e + e + Ar+
    rate: {{electron_impact: ar_ionization}}
    source: test
  - equation: O + O + M <=> O2 + M
    rate: {{arrhenius: {{A: 5.0e-33, b: -1.0, Ea: 0}}}}
    efficiencies: {{Ar: 0.5}}
    source: test
  - equation: O2 + O2 => X
    rate: {{arrhenius: {{A: 1.0e-20}}}}
    source: test
"""


def _write(tmp_path, text, name="m.yaml"):
    path = tmp_path / name
    path.write_text(text)
    return path


def _problems(tmp_path, text):
    path = _write(tmp_path, text)
    with pytest.raises(InputError) as err:
        load_mechanism(path, check_expression=_check)
    return path, err.value.problems


def _line_of(text, marker):
    """1-based line of the first line of ``text`` containing ``marker``."""
    for no, line in enumerate(text.splitlines(), 1):
        if marker in line:
            return no
    raise AssertionError(marker)


def test_base_is_valid(tmp_path):
    m = load_mechanism(_write(tmp_path, BASE), check_expression=_check)
    assert [s.name for s in m.species] == ["e", "Ar", "Ar+", "Ar*", "O", "O2", "X"]
    assert m.electron == "e"
    assert m.species[3].nasa7 is not None and m.species[3].thermo_from == "parent:Ar"
    assert m.species[6].nasa7 is None    # X is not in the thermo library
    r = m.reactions[1]
    assert r.reversible and r.third_body == "M" and r.efficiencies == {"Ar": 0.5}
    # cm^6/s -> m^6/s for two reactants plus M (common practice, no source)
    assert r.rate.params["A"] == pytest.approx(5.0e-45, rel=1e-14)


# (replacement of a line of BASE, the marker of the line the error must point at, words of
#  the problem)
CASES = {
    "unknown top key": ("name: test", "name: test\nflavour: strange", "flavour", "unknown key"),
    "unknown species key": ("    energy_eV: 11.5", "    energy_eV: 11.5\n    colour: red", "colour",
                            "unknown key"),
    "unknown reaction key": ("    efficiencies: {Ar: 0.5}", "    efficiencies: {Ar: 0.5}\n    rate_unit: x",
                             "rate_unit", "unknown key"),
    "unknown arrhenius key": ("{A: 1.0e-20}", "{A: 1.0e-20, Eb: 3}", "Eb: 3", "unknown arrhenius key"),
    "unknown species in equation": ("O2 + O2 => X", "O2 + O3 => X", "O2 + O3", "unknown species 'O3'"),
    "element balance": ("O2 + O2 => X", "O2 + O => X", "O2 + O => X", "element O does not balance"),
    "charge balance": ("e + Ar => e + e + Ar+", "e + Ar => e + Ar+", "e + Ar => e + Ar+",
                       "charge does not balance"),
    "missing thermo for reversible": ("O2 + O2 => X", "O2 + O2 <=> X", "O2 + O2 <=> X",
                                      "needs thermo (NASA polynomials) of X"),
    "unknown process id": ("{electron_impact: ar_ionization}", "{electron_impact: ar_ionisation}",
                           "ar_ionisation", "not in the cross-section files"),
    "reverse without weight ratio": ("e + Ar => e + e + Ar+\n    rate: {electron_impact: ar_ionization}",
                                     "e + Ar* => e + Ar\n    rate: {electron_impact: 'ar_excitation:reverse'}",
                                     "ar_excitation:reverse", "no weight_ratio"),
    "target gas not a reactant": ("e + Ar => e + e + Ar+\n    rate: {electron_impact: ar_ionization}",
                                  "e + O => e + O\n    rate: {electron_impact: ar_excitation}",
                                  "ar_excitation}", "which is not a reactant"),
    "electron impact needs the electron": ("e + Ar => e + e + Ar+", "Ar + Ar => Ar + Ar* ",
                                           "electron_impact: ar_ionization", "one of them the electron"),
    "non-finite A": ("{A: 1.0e-20}", "{A: .nan}", "{A: .nan}", "not a finite non-negative number"),
    "infinite A": ("{A: 1.0e-20}", "{A: .inf}", "{A: .inf}", "not a finite non-negative number"),
    "negative A": ("{A: 1.0e-20}", "{A: -1.0e-20}", "{A: -1.0e-20}", "not a finite non-negative number"),
    "text A": ("{A: 1.0e-20}", "{A: 'lots'}", "{A: 'lots'}", "not a finite non-negative number"),
    "bad expression": ("{arrhenius: {A: 1.0e-20}}", "{expression: \"os.system('x')\"}", "os.system",
                       "attribute access is not allowed"),
    "state of unknown parent": ("    state_of: Ar", "    state_of: Kr", "state_of: Kr", "state_of 'Kr'"),
    "state of a state": ("  - name: O\n", "  - name: Ar**\n    state_of: Ar*\n    energy_eV: 12\n  - name: O\n",
                         "state_of: Ar*", "is itself a state"),
    "energy without state": ("    composition: {O: 2}", "    composition: {O: 2}\n    energy_eV: 7",
                             "energy_eV: 7", "only allowed with state_of"),
    "negative excitation energy": ("    energy_eV: 11.5", "    energy_eV: -1", "energy_eV: -1",
                                   "not a non-negative number"),
    "bad rate unit": ("rate_coefficient: cm^3/s", "rate_coefficient: furlong^3/fortnight", "units:",
                      "rate_coefficient 'furlong^3/fortnight' is not one of"),
    "bad activation unit": ("activation: K", "activation: degC", "units:", "activation 'degC'"),
    "density and rate units disagree": ("rate_coefficient: cm^3/s,", "rate_coefficient: cm^3/s, density: m^-3,",
                                        "units:", "does not match"),
    "unknown element": ("    composition: {O: 2}", "    composition: {O: 1, N: 1}", "{O: 1, N: 1}",
                        "element 'N' is not in elements"),
    "electron count against charge": ("    composition: {Ar: 1}\n    charge: 1",
                                      "    composition: {Ar: 1, E: 1}\n    charge: 1", "{Ar: 1, E: 1}",
                                      "must equal minus the charge"),
    "non-integer charge": ("    composition: {Ar: 1}\n    charge: 1", "    composition: {Ar: 1}\n    charge: 0.5",
                           "charge: 0.5", "not an integer"),
    "uncertainty below one": ("    efficiencies: {Ar: 0.5}", "    efficiencies: {Ar: 0.5}\n    uncertainty_factor: 0.5",
                              "uncertainty_factor", "not a number >= 1"),
    "efficiency without M": ("{A: 1.0e-20}}\n", "{A: 1.0e-20}}\n    efficiencies: {O2: 2}\n",
                             "efficiencies: {O2: 2}", "need a third body"),
    "efficiency of unknown species": ("{Ar: 0.5}", "{Kr: 0.5}", "Kr: 0.5", "unknown species 'Kr'"),
    "negative efficiency": ("{Ar: 0.5}", "{Ar: -0.5}", "Ar: -0.5", "not a finite non-negative number"),
    "falloff without (+M)": ("{arrhenius: {A: 1.0e-20}}", "{falloff: {low: {A: 1}, high: {A: 1}}}",
                             "falloff:", "needs (+M)"),
    "(+M) without falloff": ("O2 + O2 => X", "O2 + O2 (+M) => X (+M)", "(+M) => X", "falloff rate law only"),
    "troe alpha out of range": ("O2 + O2 => X\n    rate: {arrhenius: {A: 1.0e-20}}",
                                "O2 + O2 (+M) => X (+M)\n    rate: {falloff: {low: {A: 1}, high: {A: 1}, "
                                "troe: {alpha: 2, T3: 100, T1: 1000}}}", "troe", "troe alpha 2"),
    "troe missing T1": ("O2 + O2 => X\n    rate: {arrhenius: {A: 1.0e-20}}",
                        "O2 + O2 (+M) => X (+M)\n    rate: {falloff: {low: {A: 1}, high: {A: 1}, "
                        "troe: {alpha: 0.5, T3: 100}}}", "troe", "troe needs T1"),
    "ladder level zero": ("{arrhenius: {A: 1.0e-20}}", "{landau_teller: {A: 1, B: 10, ladder: {level: 0}}}",
                          "ladder", "ladder level 0"),
    "ladder anharmonicity too large": ("{arrhenius: {A: 1.0e-20}}",
                                       "{landau_teller: {A: 1, B: 10, ladder: {level: 20, anharmonicity: 0.06}}}",
                                       "ladder", "1 - level * anharmonicity > 0"),
    "landau teller without B": ("{arrhenius: {A: 1.0e-20}}", "{landau_teller: {A: 1}}", "landau_teller",
                                "landau_teller B"),
    "reversible electron impact": ("e + Ar => e + e + Ar+", "e + Ar <=> e + e + Ar+", "<=>",
                                   "cannot be reversible"),
    "unknown rate law": ("{arrhenius: {A: 1.0e-20}}", "{modified_arrhenius: {A: 1.0e-20}}",
                         "modified_arrhenius", "unknown rate law"),
    "two rate laws": ("{arrhenius: {A: 1.0e-20}}", "{arrhenius: {A: 1.0e-20}, expression: '1'}",
                      "expression: '1'", "exactly one of"),
    "missing rate": ("    rate: {arrhenius: {A: 1.0e-20}}\n", "", "O2 + O2 => X", "rate is missing"),
    "two arrows": ("O2 + O2 => X", "O2 + O2 => X => X", "=> X => X", "exactly one arrow"),
    "no spaces around plus": ("O2 + O2 => X", "O2+O2 => X", "O2+O2", "unknown species 'O2+O2'"),
    "M on one side": ("O + O + M <=> O2 + M", "O + O + M <=> O2", "M <=> O2", "M must appear once on each side"),
    "too many reactants": ("O2 + O2 => X", "O + O + O + O => X", "O + O + O + O", "at most 3 reactants"),
    "fractional reactant": ("O2 + O2 => X", "0.5 O2 + O2 + O2 + O => X", "0.5 O2", "must be an integer"),
    "duplicate reaction": ("  - equation: O2 + O2 => X\n", "  - equation: 2 O2 => X\n    rate: {arrhenius: {A: 1}}\n"
                           "    source: test\n  - equation: O2 + O2 => X\n", "- equation: O2 + O2 => X",
                           "same reaction as reactions[2]"),
    "duplicate of a reverse direction": ("  - equation: O2 + O2 => X\n", "  - equation: O2 + M => O + O + M\n"
                                         "    rate: {arrhenius: {A: 1}}\n    source: test\n  - equation: O2 + O2 => X\n",
                                         "O2 + M => O + O + M", "same reaction as reactions[1]"),
    "species listed twice": ("  - name: X\n", "  - name: O  # again\n    composition: {O: 1}\n  - name: X\n", "# again",
                             "listed twice"),
    "M is reserved": ("  - name: X\n", "  - name: M\n    composition: {O: 1}\n  - name: X\n", "- name: M",
                      "not a valid species name"),
    "name starting with a digit": ("  - name: X\n", "  - name: 2O\n    composition: {O: 2}\n  - name: X\n",
                                   "- name: 2O", "not a valid species name"),
    "state with own thermo": ("    energy_eV: 11.5", "    energy_eV: 11.5\n    thermo: {source: x}", "thermo:",
                              "takes its parent's thermo"),
    "inline thermo bad nasa7": ("    composition: {O: 4}", "    composition: {O: 4}\n    thermo:\n      source: test\n"
                                "      nasa7: {T_ranges_K: [300, 200, 100], low: [1,2,3,4,5,6,7], high: [1,2,3,4,5,6,7]}",
                                "nasa7:", "strictly increasing"),
    "inline thermo without source": ("    composition: {O: 4}", "    composition: {O: 4}\n    thermo:\n"
                                     "      nasa7: {T_ranges_K: [200, 1000, 6000], low: [2.5,0,0,0,0,0,0], "
                                     "high: [2.5,0,0,0,0,0,0]}", "thermo:", "needs a source"),
    "bad provenance": ("    efficiencies: {Ar: 0.5}", "    efficiencies: {Ar: 0.5}\n    provenance: guessed",
                       "provenance: guessed", "provenance 'guessed'"),
    "duplicate flag not boolean": ("    efficiencies: {Ar: 0.5}", "    efficiencies: {Ar: 0.5}\n    duplicate: maybe",
                                   "duplicate: maybe", "true or false"),
    "negative scale": ("{electron_impact: ar_ionization}", "{electron_impact: {process: ar_ionization, scale: -2}}",
                       "scale: -2", "scale -2"),
    "composition against the thermo library": ("  - name: X\n", "  - name: O3   # here\n    composition: {O: 2}\n"
                                               "  - name: X\n", "# here",
                                               "differs from the thermo library's"),
    "two electron species": ("  - name: X\n", "  - name: e2\n    composition: {E: 1}\n    charge: -1\n"
                             "  - name: X\n", "species:", "more than one electron species"),
    "state composition differs from parent": ("    state_of: Ar\n", "    state_of: Ar\n    composition: {O: 1}  # here\n",
                                              "# here", "differs from the parent's"),
    "momentum transfer is no reaction": ("{electron_impact: ar_ionization}", "{electron_impact: ar_elastic}",
                                         "ar_elastic", "which is no reaction"),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_each_validation_error_names_file_line_entry_and_problem(tmp_path, case):
    old, new, marker, words = CASES[case]
    assert old in BASE, case
    text = BASE.replace(old, new, 1)
    path, problems = _problems(tmp_path, text)
    hits = [p for p in problems if words in p]
    assert hits, f"{case}: {problems}"
    assert len(problems) == 1, f"{case}: {problems}"
    p = hits[0]
    line = _line_of(text, marker)
    assert p.startswith(f"{path}:{line}:"), f"{case}: expected line {line}: {p}"
    assert "\n" not in p


def test_entry_is_named(tmp_path):
    text = BASE.replace("O2 + O2 => X", "O2 + O => X")
    _, problems = _problems(tmp_path, text)
    assert "reactions[2] 'O2 + O => X'" in problems[0]
    text = BASE.replace("    state_of: Ar", "    state_of: Kr")
    _, problems = _problems(tmp_path, text)
    assert "species Ar*" in problems[0]


def test_yaml_syntax_error_has_its_line(tmp_path):
    text = BASE.replace("  - name: X\n", "  - name: [X\n")
    path, problems = _problems(tmp_path, text)
    assert len(problems) == 1 and problems[0].startswith(f"{path}:") and "YAML syntax" in problems[0]


def test_duplicate_key_is_an_error(tmp_path):
    text = BASE.replace("name: test", "name: test\nname: again")
    path, problems = _problems(tmp_path, text)
    assert problems[0].startswith(f"{path}:2:") and "duplicate key" in problems[0]


def test_all_errors_of_a_file_are_reported_together(tmp_path):
    text = (BASE.replace("name: test", "name: test\nflavour: x")
            .replace("    state_of: Ar", "    state_of: Kr")
            .replace("O2 + O2 => X", "O2 + O => X")
            .replace("{Ar: 0.5}", "{Ar: -0.5}")
            .replace("{electron_impact: ar_ionization}", "{electron_impact: nothing}"))
    path, problems = _problems(tmp_path, text)
    assert len(problems) == 5, problems
    for word in ("flavour", "Kr", "element O", "efficiency of Ar", "nothing"):
        assert sum(word in p for p in problems) == 1, word
    assert all(p.startswith(f"{path}:") for p in problems)


def test_problems_of_referenced_files_are_reported_with_their_own_file(tmp_path):
    cs = _write(tmp_path, "gas: Ar\nmass_amu: -1\nprocesses: []\n", "bad_cs.yaml")
    text = BASE.replace(str(AR), str(cs)).replace("name: test", "name: test\nflavour: x")
    path, problems = _problems(tmp_path, text)
    assert any(p.startswith(f"{cs}:") for p in problems)
    assert any(p.startswith(f"{path}:") and "flavour" in p for p in problems)
    # a missing file
    text = BASE.replace(str(LIBRARY), str(tmp_path / "nowhere.yaml"))
    _, problems = _problems(tmp_path, text)
    assert any("nowhere.yaml" in p and "file not found" in p for p in problems)


def test_relative_paths_are_relative_to_the_mechanism_file(tmp_path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "ar.yaml").write_text(AR.read_text())
    text = BASE.replace(str(AR), "sub/ar.yaml")
    m = load_mechanism(_write(tmp_path, text))
    assert m.cross_section_paths == (tmp_path / "sub" / "ar.yaml",)


def test_unit_tables_agree_with_codata():
    # the data layer keeps its own exact SI constants; compare with scipy.constants (CODATA)
    from plasmazero.physics import constants as pc

    assert mech_mod._N_A == sc.N_A == pc.AVOGADRO_1_MOL
    assert mech_mod._K_B == sc.k == pc.BOLTZMANN_J_K
    assert mech_mod._E_C == sc.e == pc.ELEMENTARY_CHARGE_C
    assert mech_mod.ACTIVATION_UNITS["kcal/mol"] == pytest.approx(4184 / sc.R, rel=1e-15)


def test_parse_equation_forms():
    names = {"O", "O2", "O3", "Ar+", "e", "CO2(v1)"}
    assert parse_equation("O + O2 (+M) <=> O3 (+M)", names) == ([("O", 1.0), ("O2", 1.0)], [("O3", 1.0)],
                                                                True, "falloff")
    assert parse_equation("2O + M => O2 + M", names)[0] == [("O", 2.0)]
    assert parse_equation("Ar+ + e => e + Ar+", names)[0] == [("Ar+", 1.0), ("e", 1.0)]
    assert parse_equation("CO2(v1) + O => 0.5 O2 + CO2(v1)", names)[1] == [("O2", 0.5), ("CO2(v1)", 1.0)]
    for bad in ("O + O2", "O => ", "=> O", "O + M => O2", "O (+M) => O2", "O + O (+M) => O2 + M (+M)"):
        with pytest.raises(ValueError):
            parse_equation(bad, names)


def test_warnings(tmp_path):
    text = BASE.replace("    source: test\n  - equation: O2 + O2 => X", "  - equation: O2 + O2 => X")
    m = load_mechanism(_write(tmp_path, text))
    w = mechanism_warnings(m)
    assert any("reactions[1]" in x and "no source" in x for x in w)
    assert any("species Ar*: never produced" in x for x in w)
    assert any("species X: never consumed" in x for x in w)
    assert not any("species O: never" in x for x in w)   # O is both, through the reversible reaction
    assert any("ar_excitation" in x and "used by no reaction" in x for x in w)


# --------------------------------------------------------------------------- hostile input

def _base_doc():
    doc = yaml.safe_load(BASE)
    # keep the fuzzing fast and self-contained: no referenced files, inline thermo
    del doc["cross_sections"], doc["thermo_library"]
    doc["reactions"] = doc["reactions"][1:]
    for s in doc["species"]:
        if s["name"] in ("O", "O2"):
            s["thermo"] = {"source": "test", "nasa7": {"T_ranges_K": [200.0, 1000.0, 6000.0],
                                                       "low": [2.5, 0, 0, 0, 0, 0, 0],
                                                       "high": [2.5, 0, 0, 0, 0, 0, 0]}}
    doc["reactions"].append({"equation": "O + O2 => O2 + O", "source": "t",
                             "rate": {"expression": "1e-10 * (Tg/300)**0.5"}})
    doc["reactions"].append({"equation": "O2(v) + O2 => O2 + O2", "source": "t",
                             "rate": {"landau_teller": {"A": 1e-10, "B": 100, "ladder": {"level": 2}}}})
    doc["species"].append({"name": "O2(v)", "state_of": "O2", "energy_eV": 0.2})
    return doc


def _paths(node, prefix=()):
    yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, prefix + (i,))


BASE_DOC = _base_doc()
PATHS = [p for p in _paths(BASE_DOC) if p]

scalars = st.one_of(
    st.none(), st.booleans(), st.integers(), st.integers(min_value=10 ** 300, max_value=10 ** 400),
    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=30),
    st.sampled_from(["O", "O2", "e", "M", "(+M)", "=>", "<=>", "O + O => O2", "exp(", "__import__",
                     "cm^3/s", "2 O2 + O2 => O3", "ar_ionization:reverse", "-1", ".nan", "1e400"]),
)
values = st.recursive(scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=4), st.dictionaries(st.one_of(st.text(max_size=8), st.integers()), inner, max_size=4)),
    max_leaves=8)


def _load_or_input_error(path):
    try:
        m = load_mechanism(path, check_expression=_check)
    except InputError as exc:
        assert exc.problems and all(isinstance(p, str) and "\n" not in p for p in exc.problems)
        return None
    compile_mechanism(m)   # a file that loads must also compile
    return m


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(path_index=st.integers(0, len(PATHS) - 1), value=values)
def test_hostile_field_values_give_input_error_never_a_crash(tmp_path, path_index, value):
    doc = copy.deepcopy(BASE_DOC)
    target = PATHS[path_index]
    node = doc
    for key in target[:-1]:
        node = node[key]
    node[target[-1]] = value
    path = tmp_path / "fuzz.yaml"
    path.write_text(yaml.safe_dump(doc, allow_unicode=True))
    _load_or_input_error(path)


NAMES = ["O", "O2", "X", "e", "Ar", "Ar+", "Ar*", "O2(v)"]
term = st.tuples(st.sampled_from(["", "2 ", "2", "0.5 ", "3 "]), st.sampled_from(NAMES)).map("".join)
side = st.lists(term, min_size=1, max_size=3).map(" + ".join)
equations = st.one_of(
    st.tuples(side, st.sampled_from(["", " + M", " (+M)"]), st.sampled_from([" => ", " <=> ", " = ", "=>"]),
              side, st.sampled_from(["", " + M", " (+M)"])).map(lambda t: t[0] + t[1] + t[2] + t[3] + t[4]),
    st.lists(st.sampled_from(NAMES + ["2", "+", " + ", "=>", "<=>", "(+M)", "M", "(", ")", " "]),
             max_size=12).map("".join),
)
laws = st.sampled_from([{"arrhenius": {"A": 1e-16}}, {"expression": "1e-16"},
                        {"falloff": {"low": {"A": 1e-30}, "high": {"A": 1e-16}}},
                        {"landau_teller": {"A": 1, "B": 1}}, {"electron_arrhenius": {"A": 1}}])


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(equation=equations, law=laws)
def test_random_equations_give_input_error_or_a_balanced_reaction(tmp_path, equation, law):
    doc = copy.deepcopy(BASE_DOC)
    doc["reactions"].append({"equation": equation, "rate": law, "source": "t", "duplicate": True})
    path = tmp_path / "fuzz.yaml"
    path.write_text(yaml.safe_dump(doc))
    m = _load_or_input_error(path)
    if m is not None:
        # whatever the loader accepts conserves elements and charge (common practice, no source)
        cm = compile_mechanism(m)
        assert np.abs(cm.element_counts @ cm.stoichiometry).max() < 1e-9
        assert np.abs(cm.charge @ cm.stoichiometry).max() < 1e-9


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(text=st.text(max_size=200))
def test_random_text_files_give_input_error(tmp_path, text):
    path = tmp_path / "fuzz.yaml"
    path.write_bytes(text.encode("utf-8", "surrogatepass"))
    with pytest.raises(InputError):
        load_mechanism(path, check_expression=_check)


def test_thermo_library_may_be_a_list_of_files(tmp_path):
    # a second library file adds species; a name in two files is an error naming the key
    extra = tmp_path / "extra.yaml"
    lib_text = LIBRARY.read_text()
    start = lib_text.index("  - name: O2\n")
    end = lib_text.index("  - name:", start + 5)
    extra.write_text("species:\n" + lib_text[start:end].replace("name: O2\n", "name: O2x\n", 1)
                     .replace("composition: {O: 2}", "composition: {O: 2}"))
    text = BASE.replace(f"thermo_library: {LIBRARY}", f"thermo_library: [{LIBRARY}, {extra}]")
    loaded = load_mechanism(_write(tmp_path, text), check_expression=_check)
    assert loaded.thermo_library == (LIBRARY, extra)
    dup = tmp_path / "dup.yaml"
    dup.write_text("species:\n" + lib_text[start:end])
    path, problems = _problems(tmp_path, BASE.replace(f"thermo_library: {LIBRARY}",
                                                      f"thermo_library: [{LIBRARY}, {dup}]"))
    assert any("thermo_library" in p and "'O2' is in more than one" in p and str(path) in p for p in problems)


def test_statistical_weight_of_a_state_raises_its_entropy(tmp_path):
    # s_state = s_parent + R ln g at every temperature (Boltzmann population of a level of
    # degeneracy g; common practice, no source): the 7th NASA coefficient rises by ln g
    text = BASE.replace("    energy_eV: 11.5\n", "    energy_eV: 11.5\n    statistical_weight: 5\n")
    m = load_mechanism(_write(tmp_path, text), check_expression=_check)
    ar, star = m.species[1], m.species[3]
    assert star.statistical_weight == 5.0
    for rng in range(2):
        assert star.nasa7[0][rng][6] == pytest.approx(ar.nasa7[0][rng][6] + math.log(5.0), abs=1e-12)
        assert list(star.nasa7[0][rng][:6]) == list(ar.nasa7[0][rng][:6])


@pytest.mark.parametrize("change, message", [
    (("    energy_eV: 11.5\n", "    energy_eV: 11.5\n    statistical_weight: 0\n"), "positive number"),
    (("  - name: O\n    composition: {O: 1}\n", "  - name: O\n    composition: {O: 1}\n    statistical_weight: 2\n"),
     "statistical_weight is only allowed with state_of"),
])
def test_statistical_weight_errors(tmp_path, change, message):
    _, problems = _problems(tmp_path, BASE.replace(*change))
    assert any(message in p for p in problems), problems
