"""The discharge scenario as a scan point function (see :mod:`plasmazero.workflows.scan`).

``evaluate(doc, context)`` validates the scenario mapping ``doc`` (the scan's base with
the point's values applied), runs it and returns its figures of merit as a flat dict of
floats, the same keys at every point of a scan:

``power_W``, ``sei_kJ_L``, ``sei_eV_per_molecule``, ``energy_efficiency``,
``element_balance_error``, ``conversion_<feed species>``, ``selectivity_<C|H|O>_<species>``
and ``bed_mole_fraction_<species>`` for every species of the mechanism.

``context`` keys: ``scenario_file`` (for relative mechanism paths and error messages),
``rate_multipliers`` (optional, one factor per compiled rate row).
"""

from __future__ import annotations

import math

from plasmazero.data.scenario import validate_scenario

from . import analysis, dbd


def evaluate(doc, context):
    """Run one scenario mapping and return its figures (see the module docstring)."""
    file = context.get("scenario_file")
    scenario = validate_scenario(doc, file)
    setup = dbd.prepare(scenario, file)
    result = dbd.run(setup, rate_multipliers=context.get("rate_multipliers"))
    s = analysis.summary(result)
    out = {"power_W": s["power_W"], "sei_kJ_L": s["sei_kJ_L"], "sei_eV_per_molecule": s["sei_eV_per_molecule"],
           "energy_efficiency": s["energy_efficiency"], "element_balance_error": s["element_balance_error"]}
    for name, x in s["conversion"].items():
        out[f"conversion_{name}"] = x
    comp = analysis.element_counts(result)
    parents = {sp.name for sp in setup.loaded.species if not sp.state_of}
    for el in analysis.SELECTIVITY_ELEMENTS:
        sel = s["selectivity"].get(el, {})
        for name in sorted(parents):
            if comp[name].get(el, 0) and name not in s["conversion"] and name != setup.loaded.electron:
                out[f"selectivity_{el}_{name}"] = sel.get(name, math.nan) if sel else math.nan
    for row in analysis.bed_feed(result)["rows"]:
        out[f"bed_mole_fraction_{row['species']}"] = row["mole_fraction"]
    return out
