"""The shipped example scenarios (``mechanisms/scenarios/``), found by name."""

from __future__ import annotations

from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.shipped import shipped_root
from plasmazero.data.yamlio import read_yaml

DEMO = "co2_h2_packed_bed_demo"


def example_paths():
    """{name: path} of the shipped example scenarios, sorted by name."""
    folder = shipped_root() / "scenarios"
    return {p.stem: p for p in sorted(folder.glob("*.yaml"))}


def example_path(name):
    """Path of a shipped example scenario (InputError naming the choices if unknown)."""
    paths = example_paths()
    if name not in paths:
        raise InputError([format_problem(None, "--example", f"no shipped example {name!r} "
                                         f"(shipped: {', '.join(paths)})")])
    return paths[name]


def describe(name):
    """(mechanism, description) of a shipped example."""
    doc = read_yaml(example_path(name))
    return doc.get("mechanism", "?"), doc.get("description", "")
