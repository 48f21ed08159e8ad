"""Dielectric-barrier discharge scenario: from operating conditions to the gas the bed sees.

Model
-----
A parcel of feed gas is followed through the discharge zone as a plug (Lagrangian,
constant pressure, so it expands when reactions change the number of molecules: Pinhao
et al. 2016, Int. J. Hydrogen Energy 41, 9245) for the residence time
tau = V_gas / Q (V_gas the gap volume times the bed porosity, Q the actual flow at inlet
conditions). The specific energy it receives is u = P / Q (J per m^3 of inlet gas), with
P the absorbed power: given, from the specific energy input, or from the applied voltage
by Manley's equation.

``filaments``: the parcel is crossed by ``pulses`` microdischarges, periodic (one in the
middle of each of ``pulses`` equal intervals) or at random times (uniform, seeded), each of
``pulse_duration_s`` with the chosen shape, each depositing u / pulses. ``uniform``: the
power is spread evenly over tau. During a pulse the reduced field is E/N (given, or the
self-sustaining field of the feed, below) and the electron density is the one that the
deposited power density requires, P(t) = e n_e(t) w E (w the drift velocity from the
Boltzmann solver at E/N for the current composition): the electron density is prescribed,
the heavy species follow the kinetics. Between pulses the field is zero and the electrons
follow the kinetics (recombination, attachment), cooling to the gas temperature.

Self-sustaining field: the E/N at which the Townsend breakdown criterion of the gap holds,
(alpha - eta) d = ln(1 + 1/gamma) (Townsend; see Raizer 1991, Gas Discharge Physics,
Springer, ch. 7), with alpha/N and eta/N from the Boltzmann solver for the feed and the
secondary emission coefficient gamma = 0.01. In strongly attaching gases at atmospheric
pressure it lies just above the critical field where ionization equals attachment.

The electron tables follow the composition: before each pulse, if any collision
partner's mole fraction has moved by more than ``TABLE_DRIFT`` (absolute) since the table
was built, it is rebuilt (:mod:`plasmazero.workflows.electron_tables`).

Packed bed: species with a sticking probability are lost to the pellet surfaces at the
Chantry (1987) rate in the bed's voids, with the given products.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from plasmazero.data.errors import InputError, format_problem
from plasmazero.data.mechanism import load_mechanism
from plasmazero.data.shipped import shipped_root
from plasmazero.numerics.field import FieldProfile
from plasmazero.numerics.integrate import integrate
from plasmazero.physics.compiled import compile_mechanism
from plasmazero.physics.constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, EV_K
from plasmazero.physics.thermo import cp_R
from plasmazero.physics.expression import compile_expression

from . import electron_tables as et
from . import reactor as rx

#: absolute drift of a partner mole fraction that triggers a new electron table
TABLE_DRIFT = 0.02
#: change of the gas temperature (K) that triggers a new electron table with the energy
#: equation: the gas temperature enters the EEDF through elastic recoil and the thermal
#: populations of the excited levels. Measured with the shipped CO2 set, 300 K against
#: 325 K: the electron rate coefficients change by 1.4 % (median) and at most 25 % (rows
#: of the superelastic and low-threshold processes) at 100 Td, 0.7 % and 17 % at 150 Td;
#: 10 K keeps the median change well under 1 % (a choice of this code)
TABLE_DRIFT_K = 10.0
#: integration chunks of uniform mode (the electron table may be rebuilt between chunks)
UNIFORM_CHUNKS = 20
#: nodes of the piecewise-linear Gaussian pulse shape (over 6 standard deviations)
GAUSSIAN_NODES = 13
#: value of a pulse shape at its edges, relative to its peak (see pulse_shape)
PULSE_EDGE_FRACTION = 1e-3
#: energy categories of the electron power, in report order
ENERGY_CATEGORIES = ("vibrational", "electronic", "dissociation", "ionization", "attachment",
                     "elastic", "superelastic", "growth")


@dataclass(frozen=True)
class DischargeSetup:
    """Everything a run needs, derived from a scenario (SI)."""

    scenario: dict
    file: Path | None
    mechanism_path: Path
    loaded: object
    compiled: object
    partners: dict
    T_gas_K: float
    gas_density_m3: float
    residence_time_s: float
    power_W: float
    sei_kJ_L: float
    sei_eV_per_molecule: float
    energy_density_J_m3: float
    E_N_Td: float
    breakdown_E_N_Td: float
    pulse_starts_s: np.ndarray
    pulse_duration_s: float
    y0_m3: np.ndarray
    loss_frequency_s: np.ndarray | None
    loss_products: np.ndarray | None
    category: dict = field(default_factory=dict)
    #: electron table and Boltzmann table of the feed, with the filament field on the grid
    feed_tables: tuple = ()
    #: gas energy equation (isobaric parcel) or fixed temperature, and its wall heat loss
    energy_equation: bool = False
    heat_loss_W_m3_K: float = 0.0
    wall_temperature_K: float = math.nan
    thermal_conductivity_W_m_K: float = math.nan


@dataclass(frozen=True)
class DischargeResult:
    """What a discharge run produced (SI; per-parcel quantities per m^3 of inlet gas)."""

    setup: DischargeSetup
    species: tuple
    reactions: tuple
    times_s: np.ndarray
    densities_m3: np.ndarray
    E_N_Td: np.ndarray
    mean_energy_eV: np.ndarray
    electron_density_m3: np.ndarray
    expansion_factor: np.ndarray
    zone: np.ndarray                       # 0 discharge zone, 1 downstream transit
    in_pulse: np.ndarray                   # bool: inside a filament (field on)
    integrated_rates_parcel_m3: np.ndarray  # (n_r,) over the discharge zone, per inlet m^3
    integrated_rates_downstream_m3: np.ndarray
    surface_net_parcel_m3: np.ndarray      # (n_s,) net made (+) or lost (-) on the packing
    energy_deposited_J_m3: float
    energy_split_J_m3: dict
    eedf_samples: tuple                    # ((label, E_N_Td, energy_eV, eedf_eV_m3_2), ...)
    table_rebuilds: int
    quasi_neutrality: float                # max |sum q n| / charge density, afterglow phases
    wall_time_s: float
    counters: dict
    gas_temperature_K: np.ndarray = None   # (n_t,) at the output times


def resolve_mechanism(name_or_path, file=None):
    """Path of a shipped mechanism name or of a mechanism file path."""
    p = Path(name_or_path)
    if p.suffix in (".yaml", ".yml") or len(p.parts) > 1:
        base = Path(file).parent if file is not None else Path.cwd()
        return p if p.is_absolute() else base / p
    candidate = shipped_root() / name_or_path / "mechanism.yaml"
    if not candidate.is_file():
        shipped = sorted(d.name for d in shipped_root().iterdir() if (d / "mechanism.yaml").is_file())
        raise InputError([format_problem(file, "mechanism", f"no shipped mechanism {name_or_path!r} "
                                         f"(shipped: {', '.join(shipped)})")])
    return candidate


def _check_expression(text, file, entry, line):
    compile_expression(text, file=file, entry=entry, line=line)


def load_mechanism_pair(path):
    """(loaded records, compiled arrays) of a mechanism file."""
    loaded = load_mechanism(path, check_expression=_check_expression)
    return loaded, compile_mechanism(loaded)


def reaction_labels(loaded, compiled):
    """Equation of every compiled row; electron-impact rows name their process, ``[id]``,
    since several processes may share one equation (two dissociating states of CO2)."""
    labels = []
    for j, text in enumerate(compiled.reactions):
        rec = loaded.reactions[int(compiled.file_reaction[j])]
        if rec.rate.kind == "electron_impact":
            text = f"{text} [{rec.rate.params['process']}]"
        labels.append(text)
    return tuple(labels)


def _categories(loaded, compiled):
    """Energy category of every electron process id (see ENERGY_CATEGORIES)."""
    heavy = {sp.name for sp in loaded.species if sp.name != loaded.electron}
    cat = {}
    kinds = {}
    thresholds = {}
    for xs in compiled.cross_sections:
        for p in xs.processes:
            kinds[p.id] = p.kind
            thresholds[p.id] = p.threshold_eV
    breaks = {}
    for r in loaded.reactions:
        if r.rate.kind == "electron_impact":
            n_in = sum(c for s, c in r.reactants if s in heavy)
            n_out = sum(c for s, c in r.products if s in heavy)
            breaks[r.rate.params["process"]] = n_out > n_in
    for pid, kind in kinds.items():
        if kind in ("momentum_transfer", "total_momentum_transfer"):
            cat[pid] = "elastic"
        elif kind == "ionization":
            cat[pid] = "ionization"
        elif kind == "attachment":
            cat[pid] = "attachment"
        elif breaks.get(pid):
            cat[pid] = "dissociation"
        elif thresholds[pid] < 3.0:
            cat[pid] = "vibrational"
        else:
            cat[pid] = "electronic"
        cat[pid + ":reverse"] = "superelastic"
    cat["elastic"] = "elastic"
    cat["growth"] = "growth"
    return cat


def _thermalise_states(y, loaded, compiled, pmap, T_K):
    """Put the feed's excited states at their Boltzmann populations at the inlet temperature.

    n_k = n_parent g_k exp(-E_k / k T) / Z, g_k the state's ``statistical_weight`` (the
    same number its thermo carries, so that the kinetics starts in its own equilibrium; the
    feed is in thermal equilibrium; the total of each parent is kept).
    """
    index = {s: i for i, s in enumerate(compiled.species)}
    states = {}
    for sp in loaded.species:
        if sp.state_of and y[index[sp.state_of]] > 0:
            states.setdefault(sp.state_of, []).append((index[sp.name], sp.energy_eV, sp.statistical_weight))
    for parent, members in states.items():
        total = y[index[parent]]
        w = np.array([g * math.exp(-e_eV * EV_K / T_K) for i, e_eV, g in members])
        z = 1.0 + w.sum()
        y[index[parent]] = total / z
        for (i, _, _), wi in zip(members, w):
            y[i] = total * wi / z


def self_sustaining_field_Td(swarm, gas_density_m3, gap_m, gamma=rx.DEFAULT_SECONDARY_EMISSION):
    """E/N, Td, at which (alpha - eta) d = ln(1 + 1/gamma) (Townsend breakdown criterion).

    ``swarm`` is a SwarmTable over increasing E/N; linear interpolation of
    (alpha - eta)/N between its points. Returns NaN when the criterion is not reached.
    """
    target = math.log(1.0 + 1.0 / gamma) / (gas_density_m3 * gap_m)
    net = np.asarray(swarm.townsend_ionization_m2) - np.asarray(swarm.townsend_attachment_m2)
    en = np.asarray(swarm.E_N_Td)
    above = np.nonzero((net[1:] >= target) & (net[:-1] < target))[0]
    if above.size == 0:
        return math.nan
    i = above[0]
    f = (target - net[i]) / (net[i + 1] - net[i])
    return float(en[i] + f * (en[i + 1] - en[i]))


def prepare(scenario, file=None):
    """Derive the run's inputs from a validated scenario (see the module docstring).

    Raises
    ------
    InputError
        Feed species missing from the mechanism, a field that cannot be found, and other
        problems that need the mechanism or the Boltzmann solver to be seen.
    """
    mech_path = resolve_mechanism(scenario["mechanism"], file)
    loaded, compiled = load_mechanism_pair(mech_path)
    species = compiled.species
    index = {s: i for i, s in enumerate(species)}
    feed = scenario["feed"]
    problems = []
    for name in feed["mole_fractions"]:
        if name not in index:
            problems.append(format_problem(file, f"feed.mole_fractions.{name}",
                                           f"species not in mechanism {loaded.name!r}"))
    if problems:
        raise InputError(problems)
    T = scenario["gas_temperature"].get("temperature_K", feed["temperature_K"])
    energy = scenario["gas_temperature"]["mode"] == "energy_equation"
    G, lam, T_wall = 0.0, math.nan, math.nan
    if energy:
        missing = [s for s, ok in zip(species, compiled.has_thermo) if not ok]
        if missing:
            raise InputError([format_problem(file, "gas_temperature.mode",
                                             f"energy_equation needs thermo for every species of "
                                             f"mechanism {loaded.name!r}; missing: {', '.join(missing)}")])
        cp = np.empty(len(species))
        cp_R(compiled.nasa7_coeffs, compiled.nasa7_T_K, float(T), cp)
        comps = {sp.name: sp.composition for sp in loaded.species}
        G, lam = rx.heat_loss_coefficient(scenario, comps, {g: cp[index[g]] * BOLTZMANN_J_K
                                                            for g in feed["mole_fractions"]}, T)
        T_wall = float(scenario["gas_temperature"]["wall_temperature_K"])
    N = rx.gas_density_m3(feed["pressure_Pa"], T)
    y0 = np.zeros(len(species))
    for name, x in feed["mole_fractions"].items():
        y0[index[name]] = x * N
    pmap = et.partner_map(loaded, compiled)
    _thermalise_states(y0, loaded, compiled, pmap, T)
    if not pmap["gases"]:
        raise InputError([format_problem(mech_path, "cross_sections", "no cross-section gas is a species of the mechanism")])
    fractions, excited, _ = et.partner_fractions(pmap, y0)
    table, swarm = et.build_table(pmap, compiled, fractions, excited, T)
    breakdown = self_sustaining_field_Td(swarm, N, scenario["reactor"]["gap_m"])
    dis = scenario["discharge"]
    if dis["E_N_Td"] == "self_sustaining":
        if not math.isfinite(breakdown):
            raise InputError([format_problem(file, "discharge.E_N_Td",
                                             f"the feed does not break down below {swarm.E_N_Td[-1]:g} Td: give E_N_Td")])
        E_N = breakdown
    else:
        E_N = float(dis["E_N_Td"])
    if not np.any(swarm.E_N_Td == E_N):
        table, swarm = et.build_table(pmap, compiled, fractions, excited, T, extra_E_N_Td=(E_N,))
    power = rx.absorbed_power_W(scenario, breakdown if math.isfinite(breakdown) else None, file)
    kJ_L, eV = rx.sei(power, feed)
    tau = rx.residence_time_s(scenario)
    u = power / rx.actual_flow_m3_s(feed)
    if dis["mode"] == "filaments":
        d = dis["pulse_duration_s"]
        n_p = dis["pulses"]
        period = tau / n_p
        if d >= period:
            raise InputError([format_problem(file, "discharge.pulse_duration_s",
                                             f"{d:g} s is not shorter than the interval between pulses "
                                             f"({period:g} s = residence time / pulses)")])
        if dis["arrival"] == "periodic":
            starts = (np.arange(n_p) + 0.5) * period - 0.5 * d
        else:
            rng = np.random.default_rng(dis["seed"])
            starts = np.sort(rng.uniform(0.0, tau - d, n_p))
            # keep pulses apart: a pulse cannot start inside the previous one
            for i in range(1, n_p):
                starts[i] = max(starts[i], starts[i - 1] + d * 1.0001)
            if starts[-1] + d > tau:
                raise InputError([format_problem(file, "discharge.pulses", "too many pulses to fit in the residence time")])
    else:
        d = tau
        starts = np.array([0.0])
    nu, prod = rx.surface_loss_terms(scenario, species,
                                     {sp.name: sp.composition for sp in loaded.species}, T, file)
    return DischargeSetup(
        scenario=scenario, file=None if file is None else Path(file), mechanism_path=Path(mech_path),
        loaded=loaded, compiled=compiled, partners=pmap, T_gas_K=T, gas_density_m3=N,
        residence_time_s=tau, power_W=power, sei_kJ_L=kJ_L, sei_eV_per_molecule=eV,
        energy_density_J_m3=u, E_N_Td=E_N, breakdown_E_N_Td=breakdown, pulse_starts_s=starts,
        pulse_duration_s=d, y0_m3=y0, loss_frequency_s=nu, loss_products=prod,
        category=_categories(loaded, compiled), feed_tables=(table, swarm),
        energy_equation=energy, heat_loss_W_m3_K=G, wall_temperature_K=T_wall,
        thermal_conductivity_W_m_K=lam)


def pulse_shape(shape, duration_s, n_nodes=GAUSSIAN_NODES):
    """Nodes (t/duration in [0, 1], value/s) of a pulse shape whose integral over t is 1.

    Piecewise linear between nodes; values are normalised so that the trapezoid integral
    (exact for the piecewise-linear shape) over [0, duration] equals 1.
    """
    if shape == "square":
        s = np.array([0.0, 1.0])
        v = np.array([1.0, 1.0])
    elif shape == "triangle":
        s = np.array([0.0, 0.5, 1.0])
        v = np.array([0.0, 1.0, 0.0])
    else:  # gaussian over +-3 sigma
        s = np.linspace(0.0, 1.0, n_nodes)
        v = np.exp(-0.5 * ((s - 0.5) * 6.0) ** 2)
    # a floor of 1e-3 of the peak keeps the prescribed electron density positive at the
    # edges (an exact zero there invites round-off negatives); it is inside the normalisation
    v = np.maximum(v, PULSE_EDGE_FRACTION * v.max())
    v = v / np.trapezoid(v, s)
    return s, v / duration_s


def run(setup, *, rate_multipliers=None, progress=None, max_steps=2_000_000):
    """Integrate the scenario prepared by :func:`prepare`.

    Parameters
    ----------
    setup : DischargeSetup
    rate_multipliers : array (n_r,) or None
        Factors on every rate coefficient (sensitivity and uncertainty analysis).
    progress : callable or None
        ``progress(t_done_s, t_total_s)`` after each pulse (or chunk in uniform mode).

    Returns
    -------
    DischargeResult
    """
    t_wall = time.perf_counter()
    sc = setup.scenario
    mech = setup.compiled
    pmap = setup.partners
    T = setup.T_gas_K
    N = setup.gas_density_m3
    E_V_m = setup.E_N_Td * 1e-21 * N
    tau = setup.residence_time_s
    dis = sc["discharge"]
    n_r = len(mech.reactions)
    solver = sc["solver"]
    atol = max(solver["atol_floor_m3"], 1e-20 * N)
    y = setup.y0_m3.copy()
    table, swarm = setup.feed_tables
    rebuilds = 1
    i_pulse_en = int(np.argmin(np.abs(swarm.E_N_Td - setup.E_N_Td)))
    eedf_samples = [("pulse (feed composition)", setup.E_N_Td, swarm.energy_eV[i_pulse_en].copy(),
                     swarm.eedf_eV_m3_2[i_pulse_en].copy()),
                    ("afterglow (feed composition)", 0.0, swarm.energy_eV[0].copy(), swarm.eedf_eV_m3_2[0].copy())]
    # EEDFs kept: feed pulse, afterglow, each rebuilt table (up to the cap), exit
    max_samples = max(3, sc["output"]["eedf_samples"]) - 1
    d = setup.pulse_duration_s
    if dis["mode"] == "filaments":
        shape_s, shape_v = pulse_shape(dis["pulse_shape"], d)
        starts = setup.pulse_starts_s
        ends = np.concatenate([starts[1:], [tau]])
        u_pulse = setup.energy_density_J_m3 / len(starts)
    else:
        chunks = UNIFORM_CHUNKS
        bounds = np.linspace(0.0, tau, chunks + 1)
        starts, ends = bounds[:-1], bounds[1:]
        d = tau / chunks
        shape_s, shape_v = pulse_shape("square", d)
        u_pulse = setup.energy_density_J_m3 / chunks
    charge = np.asarray(mech.charge, dtype=float)
    e_idx = int(mech.electron_index)
    pieces = []
    phi = 1.0
    R_parcel = np.zeros(n_r)
    L_parcel = np.zeros(len(mech.species))
    energy_split = dict.fromkeys(ENERGY_CATEGORIES, 0.0)
    deposited = 0.0
    qn = 0.0
    n_done, growth_guess = 0, 1.0
    counters = {"n_steps": 0, "n_rejected": 0, "n_rhs": 0, "n_jac": 0, "n_lu": 0}
    common = dict(electron_table=None, loss_frequency_s=setup.loss_frequency_s,
                  loss_products=setup.loss_products, rtol=solver["rtol"], atol_m3=atol,
                  max_steps=solver.get("max_steps", max_steps), constant_total_density=True,
                  rate_multipliers=rate_multipliers, method=solver.get("method", "rodas4"))
    if setup.energy_equation:
        common.update(energy_equation="isobaric", heat_loss_W_m3_K=setup.heat_loss_W_m3_K,
                      wall_temperature_K=setup.wall_temperature_K)
    T_now = T          # gas temperature at the end of the last piece
    T_table = T        # gas temperature the electron table was built for

    def solve(y, t0, t1, field, profile):
        """Integrate [t0, t1] in local time (from 0: nanosecond steps stay resolved late in the run)."""
        if field is not None:
            field = FieldProfile(field.times_s - t0, field.E_N_Td)
        if profile is not None:
            profile = (profile[0] - t0, profile[1])
        return integrate(mech, y, (0.0, t1 - t0), field=field, electron_density_profile=profile,
                         T_gas_K=T_now, **{**common, "electron_table": table})

    def keep(res, t0, in_pulse):
        """Book a finished piece: rates, expansion, counters; returns its final state."""
        nonlocal phi, R_parcel, L_parcel, qn, T_now
        T_now = float(res.T_gas_K[-1])
        R_parcel = R_parcel + phi * res.integrated_rates_parcel_m3[-1]
        L_parcel = L_parcel + phi * res.integrated_linear_m3[-1]
        pieces.append((res, phi, 0, in_pulse, t0))
        phi *= float(res.expansion_factor[-1])
        if not in_pulse:   # with prescribed electrons the pulses are not neutral by design
            qn = max(qn, res.quasi_neutrality)
        for key in counters:
            counters[key] += getattr(res.counters, key)
        return res.densities_m3[-1].copy()

    def step(y, t0, t1, field, profile, in_pulse):
        res = solve(y, t0, t1, field, profile)
        return res, keep(res, t0, in_pulse)

    if starts[0] > 0.0:   # afterglow-free gas before the first filament
        _, y = step(y, 0.0, starts[0], None, None, False)
    for a, t_e in zip(starts, ends):
        x_now, exc_now, _ = et.partner_fractions(pmap, y)
        if (et.partner_drift(table.mole_fractions, x_now) > TABLE_DRIFT
                or abs(T_now - T_table) > TABLE_DRIFT_K):
            table, swarm = et.build_table(pmap, mech, x_now, exc_now, T_now, extra_E_N_Td=(setup.E_N_Td,))
            T_table = T_now
            rebuilds += 1
            if len(eedf_samples) < max_samples:
                k = int(np.argmin(np.abs(swarm.E_N_Td - setup.E_N_Td)))
                eedf_samples.append((f"pulse at t = {a:.4g} s (composition then)", setup.E_N_Td,
                                     swarm.energy_eV[k].copy(), swarm.eedf_eV_m3_2[k].copy()))
        _, _, w = table.at(setup.E_N_Td)
        phi_pulse = phi   # the parcel's expansion at the pulse (electron density per current volume)
        # energy still owed to the parcel up to this pulse, and the expansion expected within
        # the pulse (from the previous one): the total deposited matches u to round-off
        target = max(0.0, u_pulse * (n_done + 1) - deposited)
        if target <= 1e-12 * u_pulse:
            target = 0.0     # round-off of the previous pulses (zero power: no electrons)
        if setup.energy_equation:   # E = (E/N) N with the density of the heated gas
            E_V_m = setup.E_N_Td * 1e-21 * float(np.sum(y))
        scale = target / (ELEMENTARY_CHARGE_C * w * E_V_m * phi_pulse * growth_guess)
        field = FieldProfile(np.array([a, a + d]), np.array([setup.E_N_Td, setup.E_N_Td]))
        last = n_done == len(starts) - 1
        for attempt in range(3 if last else 1):
            res = solve(y, a, a + d, field, (a + shape_s * d, shape_v * scale))
            # energy per m^3 of inlet gas: e w E int n_e phi dt, phi taken as the mean of the
            # pulse's start and end (its change within one pulse is small; error O(dphi^2))
            phi_mean = phi_pulse * 0.5 * (1.0 + float(res.expansion_factor[-1]))
            u_dep = ELEMENTARY_CHARGE_C * w * E_V_m * phi_mean * float(res.integrated_electron_density_s_m3[-1])
            if setup.energy_equation:   # the integrator's own quadrature of e n_e w E phi dt
                u_dep = phi_pulse * float(res.electron_energy_J_m3[-1])
            if target <= 0 or u_dep <= 0 or abs(u_dep - target) <= 1e-9 * setup.energy_density_J_m3:
                break
            scale *= target / u_dep   # the last pulse has no successor to correct it: redo it
        growth_guess = phi_mean / phi_pulse
        y = keep(res, a, True)
        deposited += u_dep
        n_done += 1
        i_en = int(np.argmin(np.abs(swarm.E_N_Td - setup.E_N_Td)))
        for pid, frac in swarm.power_fractions.items():
            cat = setup.category.get(pid) or setup.category.get(pid.split("/")[-1], "electronic")
            energy_split[cat] += u_dep * float(frac[i_en])
        if e_idx >= 0:
            # hand the electrons back to the kinetics with the charge of the ions: the
            # prescribed profile removed electrons without their ions
            y[e_idx] = max(0.0, float(charge @ y - charge[e_idx] * y[e_idx]))
        if t_e > a + d:
            _, y = step(y, a + d, t_e, None, None, False)
        if progress is not None:
            progress(t_e, tau)
    k = int(np.argmin(np.abs(swarm.E_N_Td - setup.E_N_Td)))
    eedf_samples.append(("pulse (exit composition)", setup.E_N_Td, swarm.energy_eV[k].copy(),
                         swarm.eedf_eV_m3_2[k].copy()))
    # downstream transit to a catalyst bed: afterglow without power or surface losses of the packing
    transit = sc["bed"]["downstream_transit_s"]
    R_down = np.zeros(n_r)
    if transit > 0:
        res = integrate(mech, y, (0.0, transit), T_gas_K=T_now, field=None, electron_table=table,
                        rtol=solver["rtol"], atol_m3=atol, max_steps=solver.get("max_steps", max_steps),
                        constant_total_density=True, rate_multipliers=rate_multipliers,
                        method=common["method"],
                        **({k: common[k] for k in ("energy_equation", "heat_loss_W_m3_K",
                                                   "wall_temperature_K")}
                           if setup.energy_equation else {}))
        R_down = phi * res.integrated_rates_parcel_m3[-1]
        pieces.append((res, phi, 1, False, tau))
        phi *= float(res.expansion_factor[-1])
        qn = max(qn, res.quasi_neutrality)
    # stitch the pieces (drop each piece's first row but the first: it repeats the previous last)
    times, dens, en, mean, ne, exp_f, zone, pulse, temp = [], [], [], [], [], [], [], [], []
    for j, (res, phi0, zone_id, in_pulse, t_offset) in enumerate(pieces):
        s = slice(0 if j == 0 else 1, None)
        t = res.times_s[s] + t_offset
        times.append(t)
        dens.append(res.densities_m3[s])
        en.append(res.E_N_Td[s])
        mean.append(res.mean_energy_eV[s])
        ne.append(res.electron_density_m3[s])
        exp_f.append(phi0 * res.expansion_factor[s])
        zone.append(np.full(t.size, zone_id, dtype=np.int8))
        pulse.append(np.full(t.size, in_pulse))
        temp.append(res.T_gas_K[s])
    return DischargeResult(
        setup=setup, species=tuple(mech.species), reactions=reaction_labels(setup.loaded, mech),
        times_s=np.concatenate(times), densities_m3=np.concatenate(dens), E_N_Td=np.concatenate(en),
        mean_energy_eV=np.concatenate(mean), electron_density_m3=np.concatenate(ne),
        expansion_factor=np.concatenate(exp_f), zone=np.concatenate(zone), in_pulse=np.concatenate(pulse),
        integrated_rates_parcel_m3=R_parcel, integrated_rates_downstream_m3=R_down,
        surface_net_parcel_m3=L_parcel,
        energy_deposited_J_m3=deposited, energy_split_J_m3=energy_split, eedf_samples=tuple(eedf_samples),
        table_rebuilds=rebuilds, quasi_neutrality=qn, wall_time_s=time.perf_counter() - t_wall,
        counters=counters, gas_temperature_K=np.concatenate(temp))
