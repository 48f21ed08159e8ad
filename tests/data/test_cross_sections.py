"""plasmazero.data.cross_sections: the shipped argon set and every validation error.

Each error must be one line naming the file, the line (where the loader knows it), the
entry (process id or key) and the problem.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest

from plasmazero.data.cross_sections import KINDS, load_cross_sections
from plasmazero.data.errors import InputError
from plasmazero.data.shipped import shipped_cross_section

# lines 1-6; a process appended by ``with_process`` starts at line 7
HEAD = """\
gas: Ar
mass_amu: 39.948
processes:
  - id: el
    kind: momentum_transfer
    data: [[0.0, 7.5e-20], [10.0, 1.0e-19]]
"""


def write(tmp_path, text, name="xs.yaml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def with_process(tmp_path, block, name="xs.yaml"):
    return write(tmp_path, HEAD + textwrap.indent(textwrap.dedent(block), "  "), name)


def problems_of(path):
    with pytest.raises(InputError) as err:
        load_cross_sections(path)
    for p in err.value.problems:
        assert "\n" not in p
    return err.value.problems


def expect(path, line, entry, words, file=None):
    """Exactly one problem, naming ``file:line``, ``entry`` and containing ``words``."""
    (problem,) = problems_of(path)
    where = f"{file or path}:{line}: " if line is not None else f"{file or path}: "
    assert problem.startswith(where + (f"{entry}: " if entry else "")), problem
    assert words in problem, problem
    return problem


# --- the shipped argon set ---------------------------------------------------------

def test_shipped_argon_loads_with_its_sources():
    xs = load_cross_sections(shipped_cross_section("ar"))
    assert xs.gas == "Ar"
    assert xs.mass_amu == pytest.approx(39.948)      # IUPAC standard atomic weight
    kinds = sorted(p.kind for p in xs.processes)
    assert kinds == ["excitation", "ionization", "momentum_transfer"]
    for p in xs.processes:
        assert p.source and p.provenance == "recalled"
        assert p.energy_eV[0] == p.threshold_eV     # tables start at 0 eV or at the threshold
        assert p.energy_eV[-1] >= 1000.0
    assert xs.process("ar_ionization").threshold_eV == pytest.approx(15.76, abs=0.01)  # NIST ASD 15.7596 eV
    assert 11.4 <= xs.process("ar_excitation").threshold_eV <= 11.6   # lowest 4s level 11.55 eV (NIST ASD)


def test_shipped_argon_has_the_ramsauer_townsend_minimum():
    el = load_cross_sections(shipped_cross_section("ar")).process("ar_elastic")
    e = np.geomspace(0.01, 10.0, 2000)
    s = el.sigma_m2(e)
    e_min = e[np.argmax(s == s[(e > 0.05) & (e < 1.0)].min())]
    # minimum near 0.23 eV, about 1e-21 m2 (Milloy et al. 1977, value from memory)
    assert 0.15 < e_min < 0.35
    assert s.min() < 0.02 * el.sigma_m2(0.0)
    # zero-energy limit 4 pi a**2 with the scattering length a = -1.45 a0 (value from memory
    # of O'Malley 1963, Phys. Rev. 130, 1020): 7.5e-20 m2
    assert el.sigma_m2(0.0) == pytest.approx(7.5e-20, rel=0.05)


def test_interpolation_threshold_and_flat_extrapolation(tmp_path):
    path = with_process(tmp_path, """\
        - id: ex
          kind: excitation
          threshold_eV: 2.0
          data: [[1.0, 0.0], [2.0, 0.0], [4.0, 2.0e-20]]
        """)
    xs = load_cross_sections(path)
    ex = xs.process("ex")
    assert ex.sigma_m2(3.0) == pytest.approx(1e-20)
    assert ex.sigma_m2(1.5) == 0.0 and ex.sigma_m2(50.0) == pytest.approx(2e-20)
    assert xs.process("el").sigma_m2(5.0) == pytest.approx(8.75e-20)
    assert xs.path == path and ex.gas == "Ar"


def test_exponent_without_decimal_point_is_a_number(tmp_path):
    path = write(tmp_path, """\
        gas: Ar
        mass_amu: 4e1
        processes:
          - id: el
            kind: momentum_transfer
            data: [[0, 6e-20], [1e3, 6E-20]]
        """)
    xs = load_cross_sections(path)
    assert xs.mass_amu == 40.0
    assert xs.process("el").cross_section_m2.tolist() == [6e-20, 6e-20]


def test_nitric_oxide_is_a_gas_name_not_a_boolean(tmp_path):
    path = write(tmp_path, HEAD.replace("gas: Ar", "gas: NO"))
    assert load_cross_sections(path).gas == "NO"


def test_data_file_with_comments_and_commas(tmp_path):
    (tmp_path / "ex.txt").write_text("# eV  m2\n2.0 0.0\n\n3.0, 1e-20  # peak\n", encoding="utf-8")
    path = with_process(tmp_path, """\
        - id: ex
          kind: excitation
          threshold_eV: 2.0
          weight_ratio: 3
          data_file: ex.txt
          products: Ar*
        """)
    ex = load_cross_sections(path).process("ex")
    assert ex.energy_eV.tolist() == [2.0, 3.0] and ex.weight_ratio == 3.0 and ex.products == "Ar*"


def test_total_momentum_transfer_and_attachment_are_accepted(tmp_path):
    path = write(tmp_path, """\
        gas: O2
        mass_amu: 32
        source: file source
        provenance: fitted
        processes:
          - id: mt
            kind: total_momentum_transfer
            data: [[0, 1e-20], [10, 1e-19]]
          - id: att
            kind: attachment
            data: [[0, 0], [6, 1e-22], [8, 0]]
            source: own source
        """)
    xs = load_cross_sections(path)
    assert xs.process("mt").source == "file source" and xs.process("mt").provenance == "fitted"
    assert xs.process("att").source == "own source"


# --- file-level errors -------------------------------------------------------------

def test_not_a_mapping(tmp_path):
    expect(write(tmp_path, "- a\n- b\n"), None, None, "expected a mapping")
    expect(write(tmp_path, "", "empty.yaml"), None, None, "expected a mapping")


def test_unknown_file_key(tmp_path):
    path = write(tmp_path, HEAD + "temperature: 300\n")
    expect(path, 7, "temperature", "unknown key")


@pytest.mark.parametrize("gas_line", ["", "gas: 12\n", "gas: ''\n", "gas: [Ar]\n"])
def test_missing_or_bad_gas(tmp_path, gas_line):
    text = HEAD.replace("gas: Ar\n", gas_line)
    problem = expect(write(tmp_path, text), 1, "gas", "missing or not a name")
    assert problem


@pytest.mark.parametrize("mass_line", ["", "mass_amu: -4\n", "mass_amu: 0\n", "mass_amu: heavy\n",
                                       "mass_amu: .nan\n", "mass_amu: .inf\n", "mass_amu: true\n"])
def test_missing_or_bad_mass(tmp_path, mass_line):
    text = HEAD.replace("mass_amu: 39.948\n", mass_line)
    line = 2 if mass_line else 1
    expect(write(tmp_path, text), line, "mass_amu", "missing or not a positive number")


def test_bad_file_provenance(tmp_path):
    path = write(tmp_path, "provenance: guessed\n" + HEAD)
    expect(path, 1, "provenance", "must be one of")


@pytest.mark.parametrize("processes", ["processes: []\n", "processes: ar\n", ""])
def test_missing_or_empty_processes(tmp_path, processes):
    text = "gas: Ar\nmass_amu: 39.948\n" + processes
    line = 3 if processes else 1
    expect(write(tmp_path, text), line, "processes", "missing or empty list")


def test_process_not_a_mapping(tmp_path):
    path = write(tmp_path, HEAD + "  - just a string\n")
    expect(path, 3, "processes[1]", "expected a mapping")


def test_no_momentum_transfer(tmp_path):
    path = write(tmp_path, """\
        gas: Ar
        mass_amu: 39.948
        processes:
          - id: ex
            kind: excitation
            threshold_eV: 1.0
            data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 3, "processes", "exactly one momentum_transfer or total_momentum_transfer process, found 0")


def test_two_momentum_transfers(tmp_path):
    path = with_process(tmp_path, """\
        - id: el2
          kind: total_momentum_transfer
          data: [[0.0, 1e-20], [1.0, 1e-20]]
        """)
    expect(path, 3, "processes", "found 2")


# --- process-level errors ----------------------------------------------------------

def test_missing_id(tmp_path):
    path = with_process(tmp_path, """\
        - kind: excitation
          threshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 7, "processes[1]", "missing id")


def test_duplicate_id(tmp_path):
    path = with_process(tmp_path, """\
        - id: el
          kind: excitation
          threshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 7, "el", "duplicate id")


def test_unknown_process_key(tmp_path):
    path = with_process(tmp_path, """\
        - id: ex
          kind: excitation
          threshold_eV: 1.0
          treshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 10, "ex", "unknown key 'treshold_eV'")


@pytest.mark.parametrize("kind", ["elastic", "Excitation", "vibrational", ""])
def test_unknown_kind(tmp_path, kind):
    path = with_process(tmp_path, f"""\
        - id: ex
          kind: '{kind}'
          threshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    problem = expect(path, 8, "ex", f"unknown kind {kind!r}")
    assert all(k in problem for k in KINDS)


def test_missing_kind(tmp_path):
    path = with_process(tmp_path, """\
        - id: ex
          threshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 7, "ex", "unknown kind None")


@pytest.mark.parametrize("kind", ["excitation", "ionization"])
@pytest.mark.parametrize("thr_line", ["", "  threshold_eV: 0\n"])
def test_missing_threshold(tmp_path, kind, thr_line):
    block = f"- id: ex\n  kind: {kind}\n{thr_line}  data: [[1.0, 0.0], [2.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 7, "ex", f"{kind} needs a positive threshold_eV")


@pytest.mark.parametrize("value", ["-1.0", "low", ".nan", ".inf", "true"])
def test_bad_threshold(tmp_path, value):
    block = f"- id: ex\n  kind: excitation\n  threshold_eV: {value}\n  data: [[1.0, 0.0], [2.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 9, "ex", "threshold_eV must be a non-negative number")


def test_threshold_on_momentum_transfer(tmp_path):
    path = with_process(tmp_path, """\
        - id: mt
          kind: momentum_transfer
          threshold_eV: 1.0
          data: [[1.0, 0.0], [2.0, 1e-20]]
        """)
    expect(path, 9, "mt", "momentum transfer takes no threshold_eV")


@pytest.mark.parametrize("kind, thr", [("ionization", "  threshold_eV: 15.76\n"),
                                       ("attachment", ""),
                                       ("momentum_transfer", "")])
def test_weight_ratio_only_for_excitation(tmp_path, kind, thr):
    block = f"- id: x\n  kind: {kind}\n{thr}  weight_ratio: 2\n  data: [[16.0, 0.0], [20.0, 1e-20]]\n"
    line = 10 if thr else 9
    expect(with_process(tmp_path, block), line, "x", "weight_ratio applies to excitation only")


@pytest.mark.parametrize("value", ["0", "-1", "many", ".nan"])
def test_bad_weight_ratio(tmp_path, value):
    block = f"- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  weight_ratio: {value}\n  data: [[1.0, 0.0], [2.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 10, "ex", "weight_ratio must be a positive number")


def test_bad_process_provenance(tmp_path):
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  provenance: memory\n  data: [[1.0, 0.0], [2.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 10, "ex", "provenance must be one of")


def test_data_and_data_file_both(tmp_path):
    (tmp_path / "t.txt").write_text("1 0\n2 1e-20\n", encoding="utf-8")
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data: [[1.0, 0.0], [2.0, 1e-20]]\n  data_file: t.txt\n"
    expect(with_process(tmp_path, block), 7, "ex", "give exactly one of data or data_file")


def test_data_and_data_file_neither(tmp_path):
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n"
    expect(with_process(tmp_path, block), 7, "ex", "give exactly one of data or data_file")


def test_data_file_missing(tmp_path):
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data_file: nothere.txt\n"
    expect(with_process(tmp_path, block), 10, "ex", "data_file 'nothere.txt' not found or unreadable")


def test_data_file_is_a_directory_or_binary(tmp_path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "bin.txt").write_bytes(b"\xff\xfe\x00\x01")
    for name in ("sub", "bin.txt"):
        block = f"- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data_file: {name}\n"
        expect(with_process(tmp_path, block), 10, "ex", f"data_file '{name}' not found or unreadable")


@pytest.mark.parametrize("content, line, words", [
    ("1 0\n2 1e-20 5\n", 2, "expected two columns"),
    ("# header\n1 0\n\n2\n", 4, "expected two columns"),
    ("1 0\n2 big\n", 2, "not a number in '2 big'"),
])
def test_data_file_malformed(tmp_path, content, line, words):
    table = tmp_path / "t.txt"
    table.write_text(content, encoding="utf-8")
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data_file: t.txt\n"
    expect(with_process(tmp_path, block), line, "ex", words, file=table)


def test_data_file_rows_are_validated_like_data(tmp_path):
    (tmp_path / "t.txt").write_text("1 0\n3 1e-20\n2 2e-20\n", encoding="utf-8")
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data_file: t.txt\n"
    expect(with_process(tmp_path, block), 10, "ex", "energies not strictly increasing at 2 eV")
    (tmp_path / "t.txt").write_text("1 0\n2 nan\n", encoding="utf-8")
    expect(with_process(tmp_path, block), 10, "ex", "not two finite numbers")


@pytest.mark.parametrize("data, words", [
    ("[[1.0, 0.0]]", "at least two"),
    ("[]", "at least two"),
    ("12", "at least two"),
    ("[[1.0, 0.0], [2.0]]", "is not a pair"),
    ("[[1.0, 0.0], [2.0, 1e-20, 3]]", "is not a pair"),
    ("[[1.0, 0.0], 2.0]", "is not a pair"),
    ("[[1.0, 0.0], [2.0, high]]", "is not two finite numbers"),
    ("[[1.0, 0.0], [2.0, .nan]]", "is not two finite numbers"),
    ("[[1.0, 0.0], [.inf, 1e-20]]", "is not two finite numbers"),
    ("[[1.0, 0.0], [2.0, true]]", "is not two finite numbers"),
    ("[[1.0, 0.0], [1.0, 1e-20]]", "energies not strictly increasing at 1 eV"),
    ("[[1.0, 0.0], [3.0, 1e-20], [2.0, 1e-20]]", "energies not strictly increasing at 2 eV"),
    ("[[1.0, 0.0], [2.0, -1e-20]]", "negative cross section at 2 eV"),
])
def test_bad_data_tables(tmp_path, data, words):
    block = f"- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data: {data}\n"
    expect(with_process(tmp_path, block), 10, "ex", words)


def test_negative_energy(tmp_path):
    block = "- id: att\n  kind: attachment\n  data: [[-1.0, 0.0], [2.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 9, "att", "negative energy")


def test_non_zero_below_threshold(tmp_path):
    block = "- id: ex\n  kind: excitation\n  threshold_eV: 11.5\n  data: [[11.0, 1e-22], [12.0, 1e-20]]\n"
    expect(with_process(tmp_path, block), 10, "ex", "non-zero cross section below threshold_eV 11.5")


def test_data_line_is_the_data_key_for_block_tables(tmp_path):
    block = ("- id: ex\n  kind: excitation\n  threshold_eV: 1.0\n  data:\n"
             "    - [1.0, 0.0]\n    - [2.0, -1.0e-20]\n")
    expect(with_process(tmp_path, block), 10, "ex", "negative cross section")


def test_every_problem_is_reported_at_once(tmp_path):
    path = write(tmp_path, """\
        gas: Ar
        mass_amu: -1
        colour: blue
        processes:
          - id: el
            kind: momentum_transfer
            data: [[0.0, 1e-20], [1.0, 1e-20]]
          - id: ex
            kind: excitation
            data: [[1.0, 0.0], [2.0, 1e-20]]
          - id: ex
            kind: ionization
            threshold_eV: 15.0
            data: [[15.0, 0.0], [14.0, 1e-20]]
        """)
    problems = problems_of(path)
    assert len(problems) == 5
    joined = "\n".join(problems)
    for fragment in (f"{path}:2: mass_amu:", f"{path}:3: colour: unknown key",
                     f"{path}:8: ex: excitation needs a positive threshold_eV",
                     f"{path}:11: ex: duplicate id",
                     f"{path}:14: ex: energies not strictly increasing"):
        assert fragment in joined


def test_missing_cross_section_file(tmp_path):
    with pytest.raises(InputError, match="file not found"):
        load_cross_sections(tmp_path / "absent.yaml")


def test_yaml_errors_reach_the_user_with_lines(tmp_path):
    path = write(tmp_path, HEAD + "  - id: ex\n    kind: excitation\n    kind: ionization\n")
    expect(path, 9, None, "YAML syntax: duplicate key 'kind'")
    path = write(tmp_path, HEAD + "  - id: ex\n     kind: excitation\n")
    (problem,) = problems_of(path)
    assert problem.startswith(f"{path}:8: YAML syntax:")


def test_process_records_are_finite_arrays(tmp_path):
    xs = load_cross_sections(shipped_cross_section("ar"))
    for p in xs.processes:
        assert p.energy_eV.dtype == float and np.all(np.isfinite(p.cross_section_m2))
        assert np.all(np.diff(p.energy_eV) > 0) and math.isfinite(p.threshold_eV)


def test_huge_integer_in_data_is_an_input_error(tmp_path):
    from plasmazero.data.cross_sections import load_cross_sections
    from plasmazero.data.errors import InputError
    p = tmp_path / "x.yaml"
    p.write_text("gas: X\nmass_amu: 4\nprocesses:\n  - id: x_m\n    kind: momentum_transfer\n"
                 "    data: [[0, 1e-20], [10, " + "1" * 400 + "]]\n")
    with pytest.raises(InputError, match="x_m: data point"):
        load_cross_sections(p)
