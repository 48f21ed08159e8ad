"""Where the shipped data (cross sections, mechanisms, example scenarios) live.

In an installed wheel the repository's ``mechanisms/`` folder is package data at
``plasmazero/_shipped``; in a source checkout (editable install, or running from the
tree) it is the ``mechanisms/`` folder at the repository root.
"""

from __future__ import annotations

from pathlib import Path


def shipped_root():
    """Folder holding the shipped ``cross_sections/``, mechanisms and scenarios."""
    here = Path(__file__).resolve()
    packaged = here.parent.parent / "_shipped"
    if packaged.is_dir():
        return packaged
    checkout = here.parents[3] / "mechanisms"
    if checkout.is_dir():
        return checkout
    raise FileNotFoundError(
        "plasmazero's shipped data folder is missing: reinstall the package "
        "(pip install plasmazero) or run from a full source checkout"
    )


def shipped_cross_section(name):
    """Path of a shipped cross-section file, e.g. ``shipped_cross_section('ar')``."""
    name = name if name.endswith(".yaml") else f"{name}.yaml"
    return shipped_root() / "cross_sections" / name
