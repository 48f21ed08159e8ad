"""Discharge scenario files: operating conditions of a DBD reactor, validated and in SI.

A scenario says what a practitioner knows of the reactor: feed, flow, pressure, power or
applied voltage, geometry, dielectric, packing, and how the discharge is represented.
Every number has its unit in its key. The schema (documented for users in the README,
section "Scenario files")::

    description: "..."             # free text
    invented: true                 # optional: marks an invented (demo) scenario
    mechanism: co2_h2              # shipped mechanism name, or a path relative to this file
    feed:
      mole_fractions: {CO2: 0.25, H2: 0.75}
      flow_sccm: 100               # or flow_slm; standard conditions 273.15 K and 101325 Pa
      pressure_Pa: 101325          # or pressure_bar
      temperature_K: 300           # inlet gas temperature
    reactor:
      geometry: coaxial            # coaxial | planar | volume
      gap_m: 1.0e-3
      length_m: 0.10
      inner_diameter_m: 0.020      # coaxial: diameter of the inner boundary of the gas gap
      # planar: width_m; volume: volume_m3 (with gap_m)
      dielectric: {thickness_m: 1.5e-3, relative_permittivity: 4.5}   # or {capacitance_F: ...}
      packed_bed:                  # optional: pellets filling the discharge gap
        porosity: 0.4
        pellet_diameter_m: 2.0e-3
        surface_losses:
          - {species: H, sticking: 1.0e-3, products: {H2: 0.5}}
    power:                         # exactly one of the four
      absorbed_W: 20
      # sei_kJ_L: 3.0              # kJ per standard litre of feed
      # sei_eV_per_molecule: 0.8
      # applied: {amplitude_V: 8000, frequency_Hz: 20000, burning_voltage_V: 2500}  # Manley
    discharge:
      mode: filaments              # filaments | uniform
      E_N_Td: 150                  # or "self_sustaining"
      pulse_duration_s: 3.0e-8     # filaments only
      pulse_shape: gaussian        # square | gaussian | triangle
      pulses: 50                   # filaments seen by the gas over the residence time
      arrival: periodic            # periodic | random
      seed: 1                      # random arrival only
    gas_temperature:
      mode: fixed                  # fixed | energy_equation
      temperature_K: 300           # fixed only; default: the feed temperature
      # energy_equation only (the gas starts at the feed temperature; isobaric parcel):
      # wall_temperature_K: 300        # electrodes, dielectric, pellets; default: feed
      # thermal_conductivity_W_m_K: 0.017  # default: kinetic-theory estimate of the feed
      # heat_loss_W_m3_K: 1.0e5        # default: conduction, lambda / Lambda^2 with
      #                                # Lambda = gap / pi, or the bed's void diffusion
      #                                # length in a packed bed; 0 = adiabatic
    bed:
      downstream_transit_s: 0.0    # afterglow time between the discharge exit and the catalyst
    solver: {rtol: 1.0e-5, atol_floor_m3: 1.0e6}   # method: rodas4 (default) | bdf
    output: {eedf_samples: 8}      # EEDFs kept in the result: feed, afterglow, at each
                                   # rebuild of the electron table (composition), and exit

Validation rejects unknown keys and impossible values with one line naming the file,
the key path and the problem (:class:`~plasmazero.data.errors.InputError`).
"""

from __future__ import annotations

from pathlib import Path

from .errors import InputError, format_problem
from .yamlio import is_finite_number, line_of, read_yaml

#: Standard conditions of sccm and slm: 273.15 K and 101325 Pa (the usual mass-flow
#: controller convention; some vendors use 20 C or 25 C, which the user must convert).
STANDARD_T_K = 273.15
STANDARD_P_PA = 101325.0

_SCHEMA = {
    "description": str,
    "invented": bool,
    "mechanism": str,
    "feed": {
        "mole_fractions": dict,
        "flow_sccm": float,
        "flow_slm": float,
        "pressure_Pa": float,
        "pressure_bar": float,
        "temperature_K": float,
    },
    "reactor": {
        "geometry": ("coaxial", "planar", "volume"),
        "gap_m": float,
        "length_m": float,
        "inner_diameter_m": float,
        "width_m": float,
        "volume_m3": float,
        "dielectric": {"thickness_m": float, "relative_permittivity": float, "capacitance_F": float},
        "packed_bed": {"porosity": float, "pellet_diameter_m": float, "surface_losses": list},
    },
    "power": {
        "absorbed_W": float,
        "sei_kJ_L": float,
        "sei_eV_per_molecule": float,
        "applied": {"amplitude_V": float, "frequency_Hz": float, "burning_voltage_V": float},
    },
    "discharge": {
        "mode": ("filaments", "uniform"),
        "E_N_Td": (float, "self_sustaining"),
        "pulse_duration_s": float,
        "pulse_shape": ("square", "gaussian", "triangle"),
        "pulses": int,
        "arrival": ("periodic", "random"),
        "seed": int,
    },
    "gas_temperature": {"mode": ("fixed", "energy_equation"), "temperature_K": float,
                        "wall_temperature_K": float, "thermal_conductivity_W_m_K": float,
                        "heat_loss_W_m3_K": float},
    "bed": {"downstream_transit_s": float},
    "solver": {"rtol": float, "atol_floor_m3": float, "max_steps": int,
               "method": ("rodas4", "bdf")},
    "output": {"eedf_samples": int},
}

def is_whole_number_key(path):
    """True when the scenario key ``path`` ("discharge.pulses") takes a whole number."""
    node = _SCHEMA
    for part in path.split("."):
        if not isinstance(node, dict) or part not in node:
            return False
        node = node[part]
    return node is int


_SURFACE_LOSS_KEYS = {"species", "sticking", "products"}


def _is_number(value):
    return is_finite_number(value)


def _check(doc, schema, path, file, problems):
    """Check ``doc`` against ``schema``; append problems; return a plain dict copy."""
    out = {}
    for key, value in doc.items():
        where = f"{path}.{key}" if path else str(key)
        if key not in schema:
            allowed = ", ".join(sorted(schema))
            problems.append(format_problem(file, where, f"unknown key (allowed here: {allowed})", line_of(doc, key)))
            continue
        rule = schema[key]
        line = line_of(doc, key)
        if isinstance(rule, dict):
            if not isinstance(value, dict):
                problems.append(format_problem(file, where, "expected a mapping", line))
                continue
            out[key] = _check(value, rule, where, file, problems)
        elif rule is float:
            if not _is_number(value):
                problems.append(format_problem(file, where, f"expected a finite number, got {value!r}", line))
                continue
            out[key] = float(value)
        elif rule is int:
            if not (isinstance(value, int) and not isinstance(value, bool)):
                problems.append(format_problem(file, where, f"expected a whole number, got {value!r}", line))
                continue
            out[key] = value
        elif rule is bool:
            if not isinstance(value, bool):
                problems.append(format_problem(file, where, f"expected true or false, got {value!r}", line))
                continue
            out[key] = value
        elif rule is str:
            if not isinstance(value, str) or not value.strip():
                problems.append(format_problem(file, where, "expected a non-empty text", line))
                continue
            out[key] = value
        elif rule in (dict, list):
            if not isinstance(value, rule):
                problems.append(format_problem(file, where, f"expected a {'mapping' if rule is dict else 'list'}", line))
                continue
            out[key] = value
        elif isinstance(rule, tuple):
            numeric = float in rule
            choices = [c for c in rule if isinstance(c, str)]
            if numeric and _is_number(value):
                out[key] = float(value)
            elif value in choices:
                out[key] = value
            else:
                expected = ("a number or " if numeric else "") + " | ".join(choices)
                problems.append(format_problem(file, where, f"expected {expected}, got {value!r}", line))
    return out


def _positive(section, key, where, file, line, problems, allow_zero=False):
    value = section.get(key)
    if value is None:
        return
    if value < 0 or (value == 0 and not allow_zero):
        problems.append(format_problem(file, f"{where}.{key}", f"must be {'non-negative' if allow_zero else 'positive'}, got {value:g}", line))


def validate_scenario(doc, file=None):
    """Validate a parsed scenario mapping and return it normalised to SI.

    Parameters
    ----------
    doc : dict
        The parsed YAML (a :class:`~plasmazero.data.yamlio.LineDict` gives line numbers).
    file : path-like or None
        Named in error messages; relative mechanism paths are resolved against its folder.

    Returns
    -------
    dict
        Plain nested dict with defaults filled in, flows in standard m3/s
        (``feed.flow_std_m3_s``), pressure in Pa, and ``mechanism_path`` resolved when the
        mechanism is given as a path. Unit aliases (``flow_slm``, ``pressure_bar``) are
        converted and removed.

    Raises
    ------
    InputError
        With every problem found, one line each.
    """
    problems = []
    if not isinstance(doc, dict):
        raise InputError([format_problem(file, None, "a scenario file must be a mapping of sections")])
    sc = _check(doc, _SCHEMA, "", file, problems)
    for section in ("mechanism", "feed", "reactor", "power", "discharge"):
        if section not in doc:
            problems.append(format_problem(file, section, "missing required section"))
    feed = sc.get("feed", {})
    reactor = sc.get("reactor", {})
    power = sc.get("power", {})
    discharge = sc.get("discharge", {})
    doc_feed = doc.get("feed") if isinstance(doc.get("feed"), dict) else {}

    # feed
    fractions = feed.get("mole_fractions")
    if "feed" in doc:
        if not fractions:
            problems.append(format_problem(file, "feed.mole_fractions", "missing or empty", line_of(doc_feed)))
        else:
            clean = {}
            for name, x in fractions.items():
                if not _is_number(x) or x < 0:
                    problems.append(format_problem(file, f"feed.mole_fractions.{name}", f"must be a non-negative number, got {x!r}", line_of(fractions, name)))
                else:
                    clean[str(name)] = float(x)
            total = sum(clean.values())
            if clean and abs(total - 1.0) > 1e-6:
                problems.append(format_problem(file, "feed.mole_fractions", f"fractions sum to {total:.6g}, not 1", line_of(doc_feed, "mole_fractions")))
            feed["mole_fractions"] = clean
        n_flow = ("flow_sccm" in feed) + ("flow_slm" in feed)
        if n_flow != 1:
            problems.append(format_problem(file, "feed", "give exactly one of flow_sccm or flow_slm", line_of(doc_feed)))
        elif "flow_slm" in feed:
            feed["flow_sccm"] = feed.pop("flow_slm") * 1000.0
        if ("pressure_Pa" in feed) + ("pressure_bar" in feed) != 1:
            problems.append(format_problem(file, "feed", "give exactly one of pressure_Pa or pressure_bar", line_of(doc_feed)))
        elif "pressure_bar" in feed:
            feed["pressure_Pa"] = feed.pop("pressure_bar") * 1e5
        feed.setdefault("temperature_K", 300.0)
        for key in ("flow_sccm", "pressure_Pa", "temperature_K"):
            _positive(feed, key, "feed", file, line_of(doc_feed, key), problems)
        if "flow_sccm" in feed:
            feed["flow_std_m3_s"] = feed["flow_sccm"] * 1e-6 / 60.0

    # reactor
    doc_reactor = doc.get("reactor") if isinstance(doc.get("reactor"), dict) else {}
    if "reactor" in doc:
        geometry = reactor.get("geometry")
        needs = {"coaxial": ("gap_m", "length_m", "inner_diameter_m"), "planar": ("gap_m", "length_m", "width_m"),
                 "volume": ("volume_m3", "gap_m")}
        if geometry is None:
            problems.append(format_problem(file, "reactor.geometry", "missing (coaxial, planar or volume)", line_of(doc_reactor)))
        else:
            for key in needs[geometry]:
                if key not in reactor:
                    problems.append(format_problem(file, f"reactor.{key}", f"required for geometry {geometry}", line_of(doc_reactor)))
            for key in ("gap_m", "length_m", "inner_diameter_m", "width_m", "volume_m3"):
                _positive(reactor, key, "reactor", file, line_of(doc_reactor, key), problems)
        diel = reactor.get("dielectric")
        if diel is not None:
            has_geom = "thickness_m" in diel and "relative_permittivity" in diel
            if has_geom == ("capacitance_F" in diel) or (not has_geom and len(diel) > 1):
                problems.append(format_problem(file, "reactor.dielectric", "give thickness_m with relative_permittivity, or capacitance_F alone", line_of(doc_reactor, "dielectric")))
            for key in ("thickness_m", "relative_permittivity", "capacitance_F"):
                _positive(diel, key, "reactor.dielectric", file, line_of(doc_reactor, "dielectric"), problems)
        bed = reactor.get("packed_bed")
        if bed is not None:
            bed_line = line_of(doc_reactor, "packed_bed")
            por = bed.get("porosity")
            if por is None or not 0.0 < por < 1.0:
                problems.append(format_problem(file, "reactor.packed_bed.porosity", "required, between 0 and 1 (exclusive)", bed_line))
            if bed.get("pellet_diameter_m") is None or bed["pellet_diameter_m"] <= 0:
                problems.append(format_problem(file, "reactor.packed_bed.pellet_diameter_m", "required and positive", bed_line))
            losses = []
            for i, entry in enumerate(bed.get("surface_losses", []) or []):
                where = f"reactor.packed_bed.surface_losses[{i}]"
                eline = line_of(entry) or bed_line
                if not isinstance(entry, dict):
                    problems.append(format_problem(file, where, "expected {species, sticking, products}", bed_line))
                    continue
                unknown = set(entry) - _SURFACE_LOSS_KEYS
                if unknown:
                    problems.append(format_problem(file, where, f"unknown key {sorted(unknown)[0]!r} (allowed: products, species, sticking)", eline))
                gamma = entry.get("sticking")
                if not isinstance(entry.get("species"), str):
                    problems.append(format_problem(file, where, "species: expected a species name", eline))
                    continue
                if not _is_number(gamma) or not 0.0 < gamma <= 1.0:
                    problems.append(format_problem(file, f"{where}.sticking", f"must be in (0, 1], got {gamma!r}", eline))
                    continue
                products = entry.get("products", {}) or {}
                if not isinstance(products, dict) or not all(_is_number(v) and v >= 0 for v in products.values()):
                    problems.append(format_problem(file, f"{where}.products", "expected {species: non-negative coefficient}", eline))
                    continue
                losses.append({"species": entry["species"], "sticking": float(gamma),
                               "products": {str(k): float(v) for k, v in products.items()}})
            bed["surface_losses"] = losses

    # power
    doc_power = doc.get("power") if isinstance(doc.get("power"), dict) else {}
    if "power" in doc:
        given = [k for k in ("absorbed_W", "sei_kJ_L", "sei_eV_per_molecule", "applied") if k in power]
        if len(given) != 1:
            problems.append(format_problem(file, "power", "give exactly one of absorbed_W, sei_kJ_L, sei_eV_per_molecule, applied", line_of(doc_power)))
        for key in ("absorbed_W", "sei_kJ_L", "sei_eV_per_molecule"):
            _positive(power, key, "power", file, line_of(doc_power, key), problems, allow_zero=True)
        applied = power.get("applied")
        if applied is not None:
            for key in ("amplitude_V", "frequency_Hz"):
                if key not in applied:
                    problems.append(format_problem(file, f"power.applied.{key}", "required", line_of(doc_power, "applied")))
            for key in ("amplitude_V", "frequency_Hz", "burning_voltage_V"):
                _positive(applied, key, "power.applied", file, line_of(doc_power, "applied"), problems)
            if "dielectric" not in reactor:
                problems.append(format_problem(file, "reactor.dielectric", "required when power is given as applied voltage (Manley's equation)", line_of(doc_reactor)))

    # discharge
    doc_dis = doc.get("discharge") if isinstance(doc.get("discharge"), dict) else {}
    if "discharge" in doc:
        discharge.setdefault("mode", "filaments")
        discharge.setdefault("E_N_Td", "self_sustaining")
        if isinstance(discharge["E_N_Td"], float):
            _positive(discharge, "E_N_Td", "discharge", file, line_of(doc_dis, "E_N_Td"), problems)
        if discharge["mode"] == "filaments":
            discharge.setdefault("pulse_duration_s", 3e-8)
            discharge.setdefault("pulse_shape", "gaussian")
            discharge.setdefault("pulses", 50)
            discharge.setdefault("arrival", "periodic")
            discharge.setdefault("seed", 0)
            _positive(discharge, "pulse_duration_s", "discharge", file, line_of(doc_dis, "pulse_duration_s"), problems)
            if discharge["pulses"] < 1:
                problems.append(format_problem(file, "discharge.pulses", "must be at least 1", line_of(doc_dis, "pulses")))
        else:
            for key in ("pulse_duration_s", "pulse_shape", "pulses", "arrival", "seed"):
                if key in discharge:
                    problems.append(format_problem(file, f"discharge.{key}", "applies to mode filaments only", line_of(doc_dis, key)))

    gas_t = sc.setdefault("gas_temperature", {})
    gas_t.setdefault("mode", "fixed")
    if gas_t["mode"] == "fixed":
        gas_t.setdefault("temperature_K", feed.get("temperature_K", 300.0))
        _positive(gas_t, "temperature_K", "gas_temperature", file, None, problems)
        for key in ("wall_temperature_K", "thermal_conductivity_W_m_K", "heat_loss_W_m3_K"):
            if key in gas_t:
                problems.append(format_problem(file, f"gas_temperature.{key}",
                                               "applies to mode energy_equation only"))
    else:
        if "temperature_K" in gas_t:
            problems.append(format_problem(file, "gas_temperature.temperature_K",
                                           "applies to mode fixed only (the energy equation "
                                           "starts from feed.temperature_K)"))
        gas_t.setdefault("wall_temperature_K", feed.get("temperature_K", 300.0))
        _positive(gas_t, "wall_temperature_K", "gas_temperature", file, None, problems)
        if "thermal_conductivity_W_m_K" in gas_t:
            _positive(gas_t, "thermal_conductivity_W_m_K", "gas_temperature", file, None, problems)
        if "heat_loss_W_m3_K" in gas_t:
            _positive(gas_t, "heat_loss_W_m3_K", "gas_temperature", file, None, problems,
                      allow_zero=True)
    bed_out = sc.setdefault("bed", {})
    bed_out.setdefault("downstream_transit_s", 0.0)
    _positive(bed_out, "downstream_transit_s", "bed", file, None, problems, allow_zero=True)
    solver = sc.setdefault("solver", {})
    solver.setdefault("rtol", 1e-5)
    solver.setdefault("atol_floor_m3", 1e6)
    solver.setdefault("method", "rodas4")
    if not 1e-12 <= solver["rtol"] <= 0.1:
        problems.append(format_problem(file, "solver.rtol", "must be between 1e-12 and 0.1"))
    sc.setdefault("output", {}).setdefault("eedf_samples", 8)
    sc.setdefault("invented", False)

    mech = sc.get("mechanism")
    if mech is not None:
        as_path = Path(mech)
        if as_path.suffix in (".yaml", ".yml") or len(as_path.parts) > 1:
            base = Path(file).parent if file is not None else Path.cwd()
            resolved = (base / as_path) if not as_path.is_absolute() else as_path
            if not resolved.is_file():
                problems.append(format_problem(file, "mechanism", f"mechanism file {mech!r} not found", line_of(doc, "mechanism")))
            sc["mechanism_path"] = str(resolved)
    if problems:
        raise InputError(problems)
    return sc


def load_scenario(path):
    """Read and validate a scenario file (see :func:`validate_scenario`)."""
    path = Path(path)
    return validate_scenario(read_yaml(path), file=path)
