"""Analytic model gases of the swarm literature, as plasmazero cross-section files.

Each builder writes a YAML file in the plasmazero schema into a folder (a pytest
``tmp_path``) and loads it with :func:`plasmazero.data.cross_sections.load_cross_sections`,
so that the tests run the model gases through the same loader as user files. The
definitions are analytic, so the files are exact up to the tabulation noted per gas.

References
----------
I. D. Reid, "An investigation of the accuracy of numerical solutions of Boltzmann's
equation for electron swarms in gases with large inelastic cross sections", Aust. J. Phys.
32, 231 (1979).
J. Lucas and H. T. Saelee, "A comparison of a Monte Carlo simulation and the Boltzmann
solution for electron swarm motion in gases", J. Phys. D 8, 640 (1975).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import yaml

from plasmazero.data.cross_sections import load_cross_sections

ANGSTROM2_M2 = 1e-20

#: the largest tabulated energy of the linear model cross sections (eV); their analytic
#: forms are exact up to here, where the loader's flat extrapolation takes over
E_TOP_EV = 1000.0


def _write(folder, name, doc):
    path = Path(folder) / f"{name}.yaml"
    path.write_text(yaml.safe_dump(doc, sort_keys=False, default_flow_style=None), encoding="utf-8")
    return path


def reid_ramp_yaml(folder):
    """Write Reid's ramp model gas and return the path of the file.

    Mass 4 amu; elastic momentum transfer 6e-20 m2 at all energies; one inelastic
    process of threshold 0.2 eV with ``10e-20 * (eps - 0.2)`` m2 (eps in eV) above it.
    Reid (1979) used it at gas temperature 0 K and E/N from 1 to 24 Td. Both cross
    sections are linear, so two points give them exactly up to :data:`E_TOP_EV`.
    """
    src = "I. D. Reid, Aust. J. Phys. 32, 231 (1979): ramp model gas (analytic definition)"
    doc = {
        "gas": "ReidRamp",
        "mass_amu": 4.0,
        "source": src,
        "provenance": "recalled",
        "note": "Analytic model gas, definition recalled from memory of Reid 1979.",
        "processes": [
            {"id": "ramp_elastic", "kind": "momentum_transfer",
             "data": [[0.0, 6.0e-20], [E_TOP_EV, 6.0e-20]]},
            {"id": "ramp_inelastic", "kind": "excitation", "threshold_eV": 0.2,
             "data": [[0.2, 0.0], [E_TOP_EV, 10.0e-20 * (E_TOP_EV - 0.2)]]},
        ],
    }
    return _write(folder, "reid_ramp", doc)


def reid_ramp(folder):
    """Reid's ramp model gas as a loaded :class:`CrossSectionSet` (see :func:`reid_ramp_yaml`)."""
    return load_cross_sections(reid_ramp_yaml(folder))


def lucas_saelee_yaml(folder, F, n_points=600, e_min_eV=1e-6):
    """Write the Lucas-Saelee model gas with ionization fraction ``F`` and return the path.

    Mass 4 amu, gas at rest. In 1e-20 m2 with eps in eV:

    * elastic momentum transfer ``4 eps**-0.5`` (a Maxwell model: constant collision
      frequency), tabulated on ``n_points`` geometrically spaced energies from
      ``e_min_eV`` to :data:`E_TOP_EV` (linear interpolation between them overestimates
      the analytic form by at most ``(3/32) ln(r)**2``, 2e-4 for the default grid ratio
      ``r``; below ``e_min_eV`` the loader gives zero, which no swarm of this gas reaches);
    * excitation ``0.1 (1 - F) (eps - 8.5)`` above 8.5 eV;
    * ionization ``0.1 F (eps - 15.6)`` above 15.6 eV.

    ``F = 0`` leaves no ionization process in the file (its cross section would be zero
    everywhere); ``F = 1`` likewise drops the excitation.
    """
    src = ("J. Lucas and H. T. Saelee, J. Phys. D 8, 640 (1975): model gas "
           "(analytic definition)")
    e = np.geomspace(e_min_eV, E_TOP_EV, n_points)
    elastic = [[float(x), float(4.0 * ANGSTROM2_M2 / np.sqrt(x))] for x in e]
    processes = [{"id": "ls_elastic", "kind": "momentum_transfer", "data": elastic}]
    if F < 1.0:
        processes.append({"id": "ls_excitation", "kind": "excitation", "threshold_eV": 8.5,
                          "data": [[8.5, 0.0], [E_TOP_EV, 0.1 * (1.0 - F) * (E_TOP_EV - 8.5) * ANGSTROM2_M2]]})
    if F > 0.0:
        processes.append({"id": "ls_ionization", "kind": "ionization", "threshold_eV": 15.6,
                          "data": [[15.6, 0.0], [E_TOP_EV, 0.1 * F * (E_TOP_EV - 15.6) * ANGSTROM2_M2]]})
    doc = {
        "gas": f"LucasSaelee{F:g}",
        "mass_amu": 4.0,
        "source": src,
        "provenance": "recalled",
        "note": ("Analytic model gas, definition recalled from memory of Lucas & Saelee 1975 "
                 "as commonly restated in later benchmark work."),
        "processes": processes,
    }
    return _write(folder, f"lucas_saelee_F{F:g}", doc)


def lucas_saelee(folder, F, **kwargs):
    """The Lucas-Saelee model gas as a loaded :class:`CrossSectionSet`."""
    return load_cross_sections(lucas_saelee_yaml(folder, F, **kwargs))


def constant_mean_free_path_yaml(folder, sigma_m2=1e-19, mass_amu=0.5):
    """Write an elastic-only gas of constant cross section ``sigma_m2`` (constant mean free path).

    With a cold gas and ``m/M -> 0`` its two-term solution is the Druyvesteyn
    distribution (Druyvesteyn 1930, Physica 10, 61); used to check the Monte Carlo with an
    energy-dependent collision frequency.
    """
    doc = {
        "gas": "ConstantSigma",
        "mass_amu": float(mass_amu),
        "source": "analytic test gas (constant cross section), common practice",
        "provenance": "invented",
        "processes": [{"id": "cs_elastic", "kind": "momentum_transfer",
                       "data": [[0.0, float(sigma_m2)], [E_TOP_EV, float(sigma_m2)]]}],
    }
    return _write(folder, "constant_sigma", doc)
