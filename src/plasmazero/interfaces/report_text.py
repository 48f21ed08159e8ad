"""Plain-text reports of a discharge run: summary, bed feed, pathways (units in every header)."""

from __future__ import annotations



def _pct(x):
    return f"{100.0 * x:6.2f} %"


def summary_text(s):
    """The summary dict of :func:`plasmazero.workflows.analysis.summary` as text."""
    lines = []
    head = s.get("scenario") or "discharge run"
    if s.get("invented_scenario"):
        head += "  [invented scenario: its operating numbers are not from a real reactor]"
    lines.append(f"== {head}")
    lines.append(f"mechanism {s['mechanism']}; power {s['power_W']:.4g} W; SEI {s['sei_kJ_L']:.4g} kJ/L "
                 f"= {s['sei_eV_per_molecule']:.4g} eV/molecule; residence time {s['residence_time_s']:.4g} s; "
                 f"{s['pressure_Pa'] / 1e5:.4g} bar, {s['gas_temperature_K']:.4g} K; filaments {s['pulses']}")
    if s.get("gas_temperature_mode") == "energy_equation":
        lines.append(f"gas temperature (energy equation): inlet {s['gas_temperature_K']:.4g} K, "
                     f"exit {s['gas_temperature_exit_K']:.4g} K, highest {s['gas_temperature_max_K']:.4g} K")
    lines.append("conversion: " + ", ".join(f"{k} {_pct(v).strip()}" for k, v in s["conversion"].items()))
    for el, sel in s["selectivity"].items():
        top = list(sel.items())[:5]
        lines.append(f"selectivity ({el} basis): " + ", ".join(f"{k} {_pct(v).strip()}" for k, v in top))
    eta = s["energy_efficiency"]
    lines.append(f"energy efficiency: {_pct(eta).strip() if eta == eta else 'n/a (missing thermo)'}; "
                 "energy cost: " + ", ".join(f"{k} {v:.4g} eV/molecule converted"
                                             for k, v in s["energy_cost_eV_per_converted_molecule"].items()))
    lines.append("electron energy went to: " + ", ".join(
        f"{k} {_pct(v).strip()}" for k, v in s["energy_split_fraction"].items() if abs(v) > 5e-4))
    if eta == eta:
        # first law: what the products do not store as chemical enthalpy (at the inlet
        # temperature) was released as heat, conducted away or warming the gas
        lines.append(f"deposited energy ended as: chemical enthalpy {_pct(eta).strip()}, "
                     f"gas heating {_pct(1.0 - eta).strip()}")
    p = s["plasma"]
    lines.append(f"filaments: E/N {p['E_N_in_pulses_Td']:.4g} Td (breakdown {p['breakdown_E_N_Td']:.4g} Td), "
                 f"mean electron energy {p['mean_electron_energy_in_pulses_eV']:.3g} eV, electron density peak "
                 f"{p['peak_electron_density_m3']:.3g} m^-3, mean {p['mean_electron_density_in_pulses_m3']:.3g} m^-3")
    lines.append(f"checks: element balance error {s['element_balance_error']:.2e}, quasi-neutrality "
                 f"{s['quasi_neutrality']:.2e} (afterglow), energy deposited / input "
                 f"{s['energy_deposited_J_m3'] / s['energy_input_J_m3'] if s['energy_input_J_m3'] else 0:.6f}, "
                 f"gas expansion {s['expansion_factor']:.4f}; wall time {s['wall_time_s']:.1f} s")
    return "\n".join(lines)


def bed_feed_text(bed, top=15, min_fraction=1e-12):
    """The bed feed as an aligned table."""
    lines = [f"== bed feed: {bed['where']} ({bed['pressure_Pa'] / 1e5:.4g} bar, {bed['temperature_K']:.4g} K)"]
    lines.append(f"{'species':>12} {'mole fraction':>14} {'p (Pa)':>11} {'n (m^-3)':>11} {'flux (m^-2 s^-1)':>17}")
    for row in [r for r in bed["rows"] if r["mole_fraction"] >= min_fraction][:top]:
        lines.append(f"{row['species']:>12} {row['mole_fraction']:14.4e} {row['partial_pressure_Pa']:11.4e} "
                     f"{row['density_m3']:11.4e} {row['flux_m2_s']:17.4e}")
    tv = bed.get("vibrational_temperatures_K") or {}
    if tv:
        lines.append("vibrational temperatures: " + ", ".join(f"{k} {v:.0f} K" for k, v in tv.items()))
    return "\n".join(lines)


def pathways_text(p):
    """Production and consumption pathways of one species."""
    lines = [f"== pathways of {p['species']} ({p['zone']} zone)"]
    for kind in ("production", "consumption"):
        total = p[f"{kind}_total_m3"]
        lines.append(f"  {kind} ({total:.3e} per m^3 of inlet gas):")
        for row in p[kind]:
            lines.append(f"    {row['percent']:6.2f} %  {row['reaction']}")
    return "\n".join(lines)


def full_report(summary, bed, paths):
    """Summary, bed feed and pathways, separated by blank lines."""
    parts = [summary_text(summary), bed_feed_text(bed)] + [pathways_text(p) for p in paths]
    return "\n\n".join(parts)
