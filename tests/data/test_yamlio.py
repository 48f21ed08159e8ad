"""plasmazero.data.yamlio: numbers, booleans, duplicate keys, syntax errors with lines."""

from __future__ import annotations

import math

import pytest
import yaml

from plasmazero.data.errors import InputError
from plasmazero.data.yamlio import LineDict, line_of, parse_yaml, read_yaml


@pytest.mark.parametrize("text, value", [
    ("6e-20", 6e-20),          # the PyYAML pitfall: no decimal point, still a float
    ("6E-20", 6e-20),
    ("1e5", 1e5),
    ("+2.5e3", 2500.0),
    ("1.5e5", 1.5e5),          # YAML 1.1 also wants a sign in the exponent
    ("-.5", -0.5),
    (".25", 0.25),
    ("3.", 3.0),
    ("1_000.5", 1000.5),
])
def test_exponent_and_decimal_numbers_are_floats(text, value):
    doc = parse_yaml(f"x: {text}\n")
    assert isinstance(doc["x"], float)
    assert doc["x"] == value


def test_plain_pyyaml_reads_6e_20_as_a_string():
    # documents the pitfall that yamlio exists to avoid (PyYAML, YAML 1.1 resolver)
    assert yaml.safe_load("x: 6e-20")["x"] == "6e-20"


def test_special_floats_are_floats():
    doc = parse_yaml("a: .inf\nb: -.inf\nc: .nan\n")
    assert doc["a"] == math.inf and doc["b"] == -math.inf and math.isnan(doc["c"])


@pytest.mark.parametrize("text, value", [
    ("10", 10), ("-3", -3), ("1_000", 1000), ("010", 10), ("0x1f", 31), ("0o17", 15),
])
def test_integers_follow_yaml_1_2(text, value):
    doc = parse_yaml(f"x: {text}\n")
    assert type(doc["x"]) is int and doc["x"] == value


@pytest.mark.parametrize("word", ["NO", "no", "No", "yes", "on", "off", "y", "n", "Y", "N"])
def test_yaml_1_1_boolean_words_stay_strings(word):
    # nitric oxide must stay "NO", not False
    doc = parse_yaml(f"gas: {word}\nspecies: [N2, {word}]\n")
    assert doc["gas"] == word
    assert doc["species"] == ["N2", word]


@pytest.mark.parametrize("text, value", [("true", True), ("False", False), ("TRUE", True)])
def test_true_false_are_booleans(text, value):
    assert parse_yaml(f"x: {text}\n")["x"] is value


def test_sexagesimal_is_not_a_number():
    assert parse_yaml("x: 1:30\n")["x"] == "1:30"


def test_the_safe_loader_of_pyyaml_is_not_modified():
    parse_yaml("x: 6e-20\n")
    assert yaml.safe_load("x: NO\ny: 6e-20") == {"x": False, "y": "6e-20"}


def test_mappings_remember_lines():
    doc = parse_yaml("a: 1\nb:\n  c: 2\n  d: 3\nlist:\n  - e: 4\n    f: 5\n")
    assert isinstance(doc, LineDict)
    assert doc.line_of("a") == 1 and doc.line_of("b") == 2 and doc.line_of("list") == 5
    assert doc["b"].line_of("d") == 4
    item = doc["list"][0]
    assert line_of(item) == 6 and line_of(item, "f") == 7
    assert doc.line_of("missing") == doc.line == 1
    assert line_of({"plain": 1}, "plain") is None


def test_duplicate_key_is_an_error_with_its_line(tmp_path):
    path = tmp_path / "dup.yaml"
    path.write_text("gas: Ar\nmass_amu: 39.9\nprocesses: []\nmass_amu: 40\n", encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_yaml(path)
    (problem,) = err.value.problems
    assert problem.startswith(f"{path}:4: ")
    assert "duplicate key 'mass_amu'" in problem


def test_duplicate_key_in_nested_mapping():
    with pytest.raises(InputError) as err:
        parse_yaml("processes:\n  - id: a\n    kind: excitation\n    id: b\n", file="f.yaml")
    assert str(err.value).startswith("f.yaml:4: ")
    assert "duplicate key 'id'" in str(err.value)


@pytest.mark.parametrize("text, line, words", [
    ("gas: Ar\nmass_amu: [40\n", 3, "expected ',' or ']'"),
    ("gas: Ar\n  mass_amu: 40\n", 2, "mapping values are not allowed"),
    ("a: 1\nb: 'open\n", 3, "YAML syntax"),
    ("a: 1\n\tb: 2\n", 2, "YAML syntax"),
    ("a: 1\n---\nb: 2\n", 2, "single document"),
    ("? [a, b]\n: 1\n", 1, "unhashable key"),
])
def test_syntax_errors_name_file_and_line(tmp_path, text, line, words):
    path = tmp_path / "bad.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_yaml(path)
    (problem,) = err.value.problems
    assert problem.startswith(f"{path}:{line}: YAML syntax: ")
    assert words in problem
    assert "\n" not in problem


def test_missing_file_and_directory(tmp_path):
    with pytest.raises(InputError, match=r"nope\.yaml: file not found$"):
        read_yaml(tmp_path / "nope.yaml")
    with pytest.raises(InputError, match="is a directory"):
        read_yaml(tmp_path)


def test_undecodable_file(tmp_path):
    path = tmp_path / "latin.yaml"
    path.write_bytes(b"gas: \xe9\n")
    with pytest.raises(InputError, match="cannot read file"):
        read_yaml(path)


def test_empty_file_is_none(tmp_path):
    path = tmp_path / "empty.yaml"
    path.write_text("", encoding="utf-8")
    assert read_yaml(path) is None


def test_input_error_is_one_line_per_problem():
    err = InputError(["f.yaml:1: a: first", "f.yaml:2: b: second"])
    assert str(err).splitlines() == ["f.yaml:1: a: first", "f.yaml:2: b: second"]
    assert isinstance(err, ValueError)


def test_integer_too_large_for_a_float_is_not_a_finite_number():
    # found by fuzzing: math.isfinite(10**400) raises OverflowError; loaders must report it instead
    from plasmazero.data.yamlio import is_finite_number
    assert not is_finite_number(10**400)
    assert not is_finite_number(True)
    assert is_finite_number(3) and is_finite_number(-2.5e-20)
