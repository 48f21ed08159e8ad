"""``plasmazero check``: summary, warnings, exit codes, one line per error, no traceback.

The reference is the command's documented behaviour (plasmazero/interfaces/cmd_check.py)
and the shipped example mechanism; counts below are those of that file.
"""

import pytest

from plasmazero.data.shipped import shipped_root
from plasmazero.interfaces import cli

EXAMPLE = shipped_root() / "examples" / "every_law.yaml"
LIBRARY = shipped_root() / "thermo" / "nasa7.yaml"


@pytest.fixture
def run(monkeypatch, capsys):
    # only the check command is registered, so that this test does not depend on the
    # import of the other command modules
    monkeypatch.setattr(cli, "COMMANDS", {"check": cli.COMMANDS["check"]})

    def _run(*argv):
        code = cli.main(["check", *map(str, argv)])
        out, err = capsys.readouterr()
        return code, out, err

    return _run


def test_check_is_a_registered_command():
    assert "check" in cli.COMMANDS


def test_valid_example_prints_a_summary_and_exits_zero(run):
    code, out, err = run(EXAMPLE)
    assert code == 0 and err == ""
    assert "mechanism every_law" in out
    assert "species: 11: e, Ar, Ar(4s), Ar+, Ar2+, O, O2, O2(v1), O2(v2), O3, O-" in out
    assert "elements: Ar, O, E" in out
    assert "reactions: 15 in the file, 17 rows (2 reversible" in out
    for law in ("arrhenius 5", "electron_arrhenius 1", "electron_impact 2", "expression 3",
                "falloff (Lindemann) 1", "falloff (Troe) 1", "landau_teller 2",
                "reverse (detailed balance) 2"):
        assert law in out, law
    assert "ar.yaml (Ar: 3 processes)" in out
    assert "electron-impact processes used: ar_excitation, ar_ionization" in out
    assert out.rstrip().endswith("valid")
    assert "warning" not in out


def _write(tmp_path, reactions, species_extra=""):
    path = tmp_path / "m.yaml"
    path.write_text(f"""name: t
elements: [O]
thermo_library: {LIBRARY}
species:
  - {{name: O, composition: {{O: 1}}}}
  - {{name: O2, composition: {{O: 2}}}}
  - {{name: O3, composition: {{O: 3}}}}
{species_extra}
reactions:
{reactions}
""")
    return path


def test_warnings_are_printed_and_strict_turns_them_into_exit_one(tmp_path, run):
    path = _write(tmp_path, """
  - {equation: O + O2 => O3, rate: {arrhenius: {A: 1e-40}}}
  - {equation: O3 + O => O2 + O2, rate: {expression: "1e-18 * log(Tg - 400)"}, source: test}
""")
    code, out, err = run(path)
    assert code == 0 and err == ""
    warnings = [line for line in out.splitlines() if line.strip().startswith("warning:")]
    assert any("reactions[0]" in w and "no source" in w for w in warnings)
    # O is never produced; O3 is both produced and consumed
    assert any("species O: never produced" in w for w in warnings)
    assert not any("species O3: never" in w for w in warnings)
    # log(Tg - 400) is nan at 300 K: the rate check flags it with the state
    assert any("reactions[1]" in w and "Tg = 300 K" in w and "not finite" in w for w in warnings)
    assert f"{path}:" in warnings[0]
    assert out.rstrip().endswith(f"valid, with {len(warnings)} warnings")
    code, out, _ = run(path, "--strict")
    assert code == 1
    code, out, _ = run(path, "--quiet")
    assert code == 0 and "species:" not in out and "warning:" in out


def test_errors_exit_two_with_one_line_each_and_no_traceback(tmp_path, run):
    path = _write(tmp_path, """
  - {equation: O + O2 => O4, rate: {arrhenius: {A: 1e-40}}, source: test}
  - {equation: O + O2 => O3, rate: {arrhenius: {A: -1}}, source: test}
  - {equation: O3 => O2 + O, rate: {expression: "import os"}, source: test}
""")
    code, out, err = run(path)
    assert code == 2 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 3
    assert all(line.startswith(f"plasmazero: error: {path}:") for line in lines)
    text = path.read_text().splitlines()
    line_no = [i for i, t in enumerate(text, 1) if "O4" in t][0]
    assert "unknown species 'O4'" in lines[0] and f"{path}:{line_no}:" in lines[0]
    assert "arrhenius A -1 is missing or not a finite non-negative number" in lines[1]
    assert "import os" in lines[2] and "syntax error" in lines[2]
    assert "Traceback" not in err


def test_missing_file_exits_two(tmp_path, run):
    code, out, err = run(tmp_path / "none.yaml")
    assert code == 2 and "file not found" in err and "Traceback" not in err


def test_a_shipped_mechanism_by_name(run):
    code, out, _ = run("argon", "--quiet")
    assert code == 0 and out.strip().endswith("valid")
    code, out, err = run("no_such_mechanism")
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and "no shipped mechanism" in err and "argon" in err
