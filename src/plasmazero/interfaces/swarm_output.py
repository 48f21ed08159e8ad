"""Writing swarm tables: a readable text table, one JSON document, an HDF5 file.

The HDF5 file holds one dataset per quantity, named with its unit (``mean_energy_eV``,
``eedf_eV_m3_2`` ...) and carrying a ``units`` attribute; rate coefficients and power
fractions are two-dimensional datasets (points x processes) whose column names are in the
attribute ``columns``. The file is written to a temporary file in the destination folder
and renamed over the destination only when complete, so a reader never sees half a file.
"""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path

import numpy as np

from plasmazero import __version__
from plasmazero.data.errors import InputError, format_problem

#: scalar columns of the table: (field of SwarmTable, header, unit)
COLUMNS = (
    ("E_N_Td", "E/N", "Td"),
    ("mean_energy_eV", "mean energy", "eV"),
    ("drift_velocity_m_s", "drift velocity", "m/s"),
    ("reduced_mobility_1_mVs", "mu*N", "1/(m V s)"),
    ("reduced_diffusion_1_ms", "D*N", "1/(m s)"),
    ("characteristic_energy_eV", "D/mu", "eV"),
    ("townsend_ionization_m2", "alpha/N", "m2"),
    ("townsend_attachment_m2", "eta/N", "m2"),
)
_UNITS = {
    "E_N_Td": "Td", "energy_eV": "eV", "eedf_eV_m3_2": "eV^-3/2", "max_energy_eV": "eV",
    "tail_decades": "1", "mean_energy_eV": "eV", "drift_velocity_m_s": "m/s",
    "reduced_mobility_1_mVs": "1/(m V s)", "reduced_diffusion_1_ms": "1/(m s)",
    "characteristic_energy_eV": "eV", "townsend_ionization_m2": "m2",
    "townsend_attachment_m2": "m2", "net_production_m3_s": "m3/s",
    "field_power_eV_m3_s": "eV m3/s", "power_balance_residual": "1",
    "rate_coefficients_m3_s": "m3/s", "power_fractions": "1",
}


def _fmt(value, width):
    return f"{value:>{width}.4e}" if np.isfinite(value) else f"{'nan':>{width}}"


def format_table(table, inputs):
    """The swarm table as readable text: inputs, transport, rate coefficients, power fractions.

    Parameters
    ----------
    table : plasmazero.boltzmann.SwarmTable
    inputs : dict
        The ``inputs`` block of :func:`json_document`.
    """
    lines = []
    gas_list = ", ".join(f"{g} {x:g}" for g, x in zip(inputs["gases"], inputs["fractions"]))
    lines.append(f"# gas: {gas_list}; T_gas = {inputs['T_gas_K']:g} K; {inputs['cells']} cells; "
                 f"growth {inputs['growth']}, ionization sharing {inputs['sharing']}")
    for f in inputs["files"]:
        lines.append(f"# cross sections: {f}")

    def block(title, heads, rows):
        widths = [max(12, len(h) + 1) for h in heads]
        out = [f"# {title}", "".join(f"{h:>{w}}" for h, w in zip(heads, widths))]
        for row in rows:
            out.append("".join(_fmt(v, w) for v, w in zip(row, widths)))
        return out

    heads = [f"{h} ({u})" for _, h, u in COLUMNS]
    rows = [[float(getattr(table, k)[i]) for k, _, _ in COLUMNS] for i in range(len(table))]
    lines += block("transport and Townsend coefficients", heads, rows)
    ids = list(table.process_ids)
    if ids:
        heads = ["E/N (Td)"] + [f"k {pid} (m3/s)" for pid in ids]
        rows = [[float(table.E_N_Td[i])] + [float(table.rate_coefficients_m3_s[p][i]) for p in ids]
                for i in range(len(table))]
        lines += block("rate coefficients", heads, rows)
    keys = list(table.power_fractions)
    heads = ["E/N (Td)"] + [f"{k} (1)" for k in keys] + ["residual (1)"]
    rows = [[float(table.E_N_Td[i])] + [float(table.power_fractions[k][i]) for k in keys]
            + [float(table.power_balance_residual[i])] for i in range(len(table))]
    lines += block("power fractions (of the power gained from the field)", heads, rows)
    return "\n".join(lines) + "\n"


def json_document(table, inputs):
    """The JSON document of the CLI: ``{"inputs": {...}, "points": [...]}`` (plain Python types)."""
    return {"inputs": inputs, "points": [table.point(i) for i in range(len(table))]}


def dump_json(doc):
    """Serialise ``doc``; non-finite numbers become null (strict JSON)."""
    def clean(x):
        if isinstance(x, float) and not np.isfinite(x):
            return None
        if isinstance(x, dict):
            return {k: clean(v) for k, v in x.items()}
        if isinstance(x, list):
            return [clean(v) for v in x]
        return x
    return json.dumps(clean(doc), indent=2, allow_nan=False)


def write_hdf5(path, table, inputs):
    """Write the full table with EEDFs to ``path`` (HDF5, atomic replace).

    Raises
    ------
    InputError
        When the destination folder does not exist or cannot be written.
    """
    import h5py

    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError([format_problem(path, None, f"folder {str(folder)!r} does not exist")])
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise InputError([format_problem(path, None, f"cannot write in {str(folder)!r} ({exc.strerror})")]) from None
    os.close(fd)
    try:
        with h5py.File(tmp, "w") as h5:
            h5.attrs["plasmazero_version"] = __version__
            h5.attrs["T_gas_K"] = float(inputs["T_gas_K"])
            h5.attrs["cells"] = int(inputs["cells"])
            h5.attrs["growth"] = inputs["growth"]
            h5.attrs["sharing"] = inputs["sharing"]
            h5.attrs["gases"] = [str(g) for g in inputs["gases"]]
            h5.attrs["fractions"] = np.asarray(inputs["fractions"], dtype=float)
            h5.attrs["files"] = [str(f) for f in inputs["files"]]
            for name in ("E_N_Td", "energy_eV", "eedf_eV_m3_2", "max_energy_eV", "tail_decades",
                         "mean_energy_eV", "drift_velocity_m_s", "reduced_mobility_1_mVs",
                         "reduced_diffusion_1_ms", "characteristic_energy_eV",
                         "townsend_ionization_m2", "townsend_attachment_m2", "net_production_m3_s",
                         "field_power_eV_m3_s", "power_balance_residual"):
                ds = h5.create_dataset(name, data=np.asarray(getattr(table, name), dtype=float))
                ds.attrs["units"] = _UNITS[name]
            ids = list(table.process_ids)
            rates = np.array([table.rate_coefficients_m3_s[p] for p in ids], dtype=float).reshape(len(ids), -1).T
            ds = h5.create_dataset("rate_coefficients_m3_s", data=rates)
            ds.attrs["units"] = "m3/s"
            ds.attrs["columns"] = ids
            keys = list(table.power_fractions)
            ds = h5.create_dataset("power_fractions", data=np.array([table.power_fractions[k] for k in keys]).T)
            ds.attrs["units"] = "1"
            ds.attrs["columns"] = keys
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
