"""The HDF5 result file of a discharge run: documented layout, atomic writing, reading.

Layout (format ``plasmazero-discharge/1``; every dataset's unit is in its name)::

    /                     attrs: format, plasmazero_version, created_utc, scenario_file,
                                 mechanism_name, invented_scenario
    /inputs/scenario_yaml         the scenario file's text
    /inputs/mechanism_yaml        the mechanism file's text
    /species                      (n_s,) names
    /reactions                    (n_r,) equations
    /stoichiometry                (n_s, n_r) products minus reactants
    /time_s                       (n_t,)
    /densities_m3                 (n_t, n_s)
    /gas_temperature_K            (n_t,)
    /E_N_Td                       (n_t,)
    /electron_density_m3          (n_t,)
    /mean_electron_energy_eV      (n_t,)
    /expansion_factor             (n_t,)  V(t)/V0 of the gas parcel
    /zone                         (n_t,)  0 discharge zone, 1 downstream transit
    /in_pulse                     (n_t,)  1 inside a filament
    /integrated_rates/discharge_m3   (n_r,) molecules per m^3 of inlet gas
    /integrated_rates/downstream_m3  (n_r,)
    /integrated_rates/surface_net_m3 (n_s,) net made (+) / lost (-) on a packed bed's surfaces
    /eedf/<k>/energy_eV, /eedf/<k>/eedf_eV_m3_2   attrs: label, E_N_Td
    /summary_json                 the summary (plasmazero.workflows.analysis.summary) as JSON
    /bed_feed_json                the bed feed (analysis.bed_feed) as JSON

Any HDF5 reader can open it (h5py, HDFView, MATLAB, ...); strings are UTF-8.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import tempfile
from pathlib import Path

import h5py
import numpy as np

from plasmazero import __version__
from plasmazero.data.errors import InputError, format_problem

FORMAT = "plasmazero-discharge/1"


def _text(value):
    return np.array(value, dtype=h5py.string_dtype("utf-8"))


def write_result(path, result, summary, bed_feed):
    """Write a run to ``path`` atomically (temporary file in the same folder, then rename)."""
    path = Path(path)
    setup = result.setup
    folder = path.parent if str(path.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    os.close(fd)
    try:
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = FORMAT
            f.attrs["plasmazero_version"] = __version__
            f.attrs["created_utc"] = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
            f.attrs["scenario_file"] = "" if setup.file is None else str(setup.file)
            f.attrs["mechanism_name"] = setup.loaded.name
            f.attrs["invented_scenario"] = bool(setup.scenario.get("invented", False))
            inputs = f.create_group("inputs")
            inputs["scenario_yaml"] = _text(setup.file.read_text(encoding="utf-8") if setup.file else
                                            json.dumps(setup.scenario, default=str))
            inputs["mechanism_yaml"] = _text(setup.mechanism_path.read_text(encoding="utf-8"))
            f["species"] = _text(list(result.species))
            f["reactions"] = _text(list(result.reactions))
            f["stoichiometry"] = setup.compiled.stoichiometry
            f["time_s"] = result.times_s
            f["densities_m3"] = result.densities_m3
            f["gas_temperature_K"] = (np.full(result.times_s.size, setup.T_gas_K)
                                      if result.gas_temperature_K is None else result.gas_temperature_K)
            f["E_N_Td"] = result.E_N_Td
            f["electron_density_m3"] = result.electron_density_m3
            f["mean_electron_energy_eV"] = result.mean_energy_eV
            f["expansion_factor"] = result.expansion_factor
            f["zone"] = result.zone
            f["in_pulse"] = result.in_pulse.astype(np.int8)
            rates = f.create_group("integrated_rates")
            rates["discharge_m3"] = result.integrated_rates_parcel_m3
            rates["downstream_m3"] = result.integrated_rates_downstream_m3
            rates["surface_net_m3"] = result.surface_net_parcel_m3
            eedf = f.create_group("eedf")
            for k, (label, en, energy, values) in enumerate(result.eedf_samples):
                g = eedf.create_group(str(k))
                g.attrs["label"] = label
                g.attrs["E_N_Td"] = float(en)
                g["energy_eV"] = energy
                g["eedf_eV_m3_2"] = values
            f["summary_json"] = _text(json.dumps(summary, default=_json_default))
            f["bed_feed_json"] = _text(json.dumps(bed_feed, default=_json_default))
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def _json_default(value):
    if isinstance(value, (np.floating, np.integer)):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    return str(value)


def read_result(path):
    """Read a result file into a plain dict of arrays and parsed JSON (no plasmazero objects)."""
    path = Path(path)
    try:
        f = h5py.File(path, "r")
    except FileNotFoundError:
        raise InputError([format_problem(path, None, "file not found")]) from None
    except OSError as exc:
        raise InputError([format_problem(path, None, f"not an HDF5 file ({exc})")]) from None
    with f:
        if f.attrs.get("format") != FORMAT:
            raise InputError([format_problem(path, "format", f"not a plasmazero discharge result (expected {FORMAT})")])
        out = {key: f.attrs[key] for key in f.attrs}
        for name in ("time_s", "densities_m3", "gas_temperature_K", "E_N_Td", "electron_density_m3",
                     "mean_electron_energy_eV", "expansion_factor", "zone", "in_pulse", "stoichiometry"):
            out[name] = f[name][()]
        out["species"] = [s.decode() if isinstance(s, bytes) else s for s in f["species"][()]]
        out["reactions"] = [s.decode() if isinstance(s, bytes) else s for s in f["reactions"][()]]
        out["integrated_rates_discharge_m3"] = f["integrated_rates/discharge_m3"][()]
        out["integrated_rates_downstream_m3"] = f["integrated_rates/downstream_m3"][()]
        out["surface_net_m3"] = f["integrated_rates/surface_net_m3"][()]
        out["eedf"] = [(f[f"eedf/{k}"].attrs["label"], float(f[f"eedf/{k}"].attrs["E_N_Td"]),
                        f[f"eedf/{k}/energy_eV"][()], f[f"eedf/{k}/eedf_eV_m3_2"][()])
                       for k in sorted(f["eedf"], key=int)]
        out["summary"] = json.loads(_str(f["summary_json"][()]))
        out["bed_feed"] = json.loads(_str(f["bed_feed_json"][()]))
        out["scenario_yaml"] = _str(f["inputs/scenario_yaml"][()])
        out["mechanism_yaml"] = _str(f["inputs/mechanism_yaml"][()])
    return out


def _str(value):
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)
