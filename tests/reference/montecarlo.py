"""Null-collision Monte Carlo electron swarm: an independent reference for the Boltzmann solver.

Test-only code (never imported by the package). An ensemble of electrons moves in a
uniform electric field through a gas of number density ``N``; collisions are chosen by the
null-collision method (Skullerud 1968), so that free flights are exact parabolas and no
time step enters the physics. The swarm is unbounded in space, so the conditions are those
of a time-of-flight (temporal growth) experiment.

Collision model
---------------
* The cross sections are functions of the centre-of-mass energy ``0.5 * mu * g**2`` (``g``
  the relative speed, ``mu`` the reduced mass). For a target at rest this differs from the
  laboratory electron energy by the factor ``M / (m + M)`` (1.4e-4 for a 4 amu gas).
* Gas at rest (``T_gas_K = 0``) or thermal: the target velocity of every candidate collision
  is drawn from a Maxwellian at ``T_gas_K`` and the collision is accepted with probability
  ``N * sigma(g) * g / nu_max`` (the usual extension of the null-collision method to a
  moving target).
* Elastic: isotropic scattering in the centre-of-mass frame, exact recoil.
* Excitation: isotropic in the centre-of-mass frame, the relative kinetic energy reduced by
  the threshold.
* Ionization: the centre-of-mass energy minus the threshold is shared between the
  scattered and the ejected electron, equally or all to one; each leaves isotropically with
  speed ``sqrt(2 share / mu)`` relative to the centre of mass (the ion takes the momentum
  balance: the three-body kinematics are not resolved). The ejected electron joins the
  ensemble at the position and time of the collision.
* Attachment: the electron is removed.

Majorant of the collision frequency
-----------------------------------
Candidate collisions are drawn at a rate ``nu_b`` that bounds the true total collision
frequency. For a gas at rest the bound is energy dependent: it is the largest tabulated
frequency below ``1.2 eps + 0.002 e_max`` (``eps`` the energy at the start of the flight),
and a flight that reaches that energy before its candidate collision is stopped there and
continued with a new bound, which is exact because the exponential waiting time has no
memory. For a thermal gas the bound is the global maximum of the table.

Constant ensemble size
----------------------
The ensemble is resampled to its nominal size at the end of every time step: surplus
electrons (from ionization) are dropped and missing ones (after attachment) replaced by
copies of electrons chosen uniformly at random. Uniform random resampling leaves the
expectation of every *normalised* quantity of the swarm unchanged (the energy and velocity
distribution, the centroid of the cloud), so

* the mean energy, the flux drift velocity ``<v_z>`` and the rate coefficients (collision
  counts divided by the electron exposure time) are those of the growing or decaying swarm;
* the bulk drift velocity ``d<z>/dt`` of the resampled cloud includes the shift of the
  centroid by creation at the front and loss at the back of the cloud, i.e. it is the bulk
  (centroid) velocity of the real swarm, which differs from the flux velocity where
  ionization or attachment matter (Robson 1991, Aust. J. Phys. 44, 685, for the distinction);
* the population growth itself is not followed: the net ionization frequency is obtained
  from the collision counts.

References
----------
H. R. Skullerud, "The stochastic computer simulation of ion motion in a gas subjected to a
constant electric field", J. Phys. D 1, 1567 (1968).
S. L. Lin and J. N. Bardsley, "Monte Carlo simulation of ion motion in drift tubes",
J. Chem. Phys. 66, 435 (1977) (target velocities for a thermal gas in the null-collision
method).
"""

from __future__ import annotations

from dataclasses import dataclass

import numba
import numpy as np

from plasmazero.data.cross_sections import CrossSectionSet

#: physical constants (CODATA 2018), SI
ELECTRON_MASS_KG = 9.1093837015e-31
ELEMENTARY_CHARGE_C = 1.602176634e-19
AMU_KG = 1.66053906660e-27
BOLTZMANN_J_K = 1.380649e-23
TD_V_M2 = 1e-21

KIND_CODES = {
    "momentum_transfer": 0,
    "excitation": 1,
    "ionization": 2,
    "attachment": 3,
}
#: gas density used inside the simulation; every reported quantity scales out of it
GAS_DENSITY_M3 = 1e24


@dataclass(frozen=True)
class McGas:
    """Collision data of one target gas tabulated for the Monte Carlo kernel.

    ``rate_m3_s[j, i]`` is ``sigma_j(eps_i) * sqrt(2 eps_i / mu)`` at the centre-of-mass
    energy ``eps_i = i * de_eV`` (m3/s), interpolated linearly by the kernel.
    """

    mass_amu: float
    ids: tuple
    kinds: np.ndarray          # int codes, see KIND_CODES
    threshold_eV: np.ndarray
    de_eV: float
    rate_m3_s: np.ndarray      # shape (n_processes, n_grid)

    @property
    def e_max_eV(self):
        """Upper end of the tabulated energy range (eV)."""
        return self.de_eV * (self.rate_m3_s.shape[1] - 1)


@dataclass(frozen=True)
class McResult:
    """Swarm averages with their one-sigma statistical errors (batch means)."""

    E_N_Td: float
    T_gas_K: float
    mean_energy_eV: float
    mean_energy_err_eV: float
    flux_drift_m_s: float
    flux_drift_err_m_s: float
    bulk_drift_m_s: float
    bulk_drift_err_m_s: float
    rate_coefficients_m3_s: dict     # process id -> k (m3/s)
    rate_errors_m3_s: dict           # process id -> one-sigma error
    n_electrons: int
    n_real_collisions: int           # during the sampling period
    n_null_collisions: int           # during the sampling period
    n_batches: int

    def rate_of_kind(self, gas, kind):
        """Sum of the rate coefficients of all processes of ``kind`` and its error (m3/s)."""
        k = sum(self.rate_coefficients_m3_s[i] for i, c in zip(gas.ids, gas.kinds)
                if c == KIND_CODES[kind])
        e2 = sum(self.rate_errors_m3_s[i] ** 2 for i, c in zip(gas.ids, gas.kinds)
                 if c == KIND_CODES[kind])
        return float(k), float(np.sqrt(e2))


def _reduced_mass_kg(mass_amu):
    big = mass_amu * AMU_KG
    return ELECTRON_MASS_KG * big / (ELECTRON_MASS_KG + big)


def gas_from_cross_sections(xs: CrossSectionSet, e_max_eV, n_grid=20001):
    """Tabulate a :class:`CrossSectionSet` for the kernel on a uniform energy grid.

    ``total_momentum_transfer`` is converted to the elastic momentum transfer by
    subtracting the inelastic cross sections (common practice, no source). With isotropic
    scattering the momentum-transfer cross section is the total elastic cross section.
    """
    mu = _reduced_mass_kg(xs.mass_amu)
    eps = np.linspace(0.0, e_max_eV, n_grid)
    speed = np.sqrt(2.0 * eps * ELEMENTARY_CHARGE_C / mu)
    ids, kinds, thr, rates = [], [], [], []
    inelastic_sum = np.zeros_like(eps)
    total_mt = None
    for p in xs.processes:
        sigma = p.sigma_m2(eps)
        if p.kind == "total_momentum_transfer":
            total_mt = (p.id, sigma)
            continue
        if p.kind != "momentum_transfer":
            inelastic_sum += sigma
        ids.append(p.id)
        kinds.append(KIND_CODES[p.kind])
        thr.append(p.threshold_eV)
        rates.append(sigma * speed)
    if total_mt is not None:
        elastic = np.clip(total_mt[1] - inelastic_sum, 0.0, None)
        ids.insert(0, total_mt[0])
        kinds.insert(0, 0)
        thr.insert(0, 0.0)
        rates.insert(0, elastic * speed)
    return McGas(mass_amu=float(xs.mass_amu), ids=tuple(ids), kinds=np.array(kinds, dtype=np.int64),
                 threshold_eV=np.array(thr, dtype=float), de_eV=float(eps[1] - eps[0]),
                 rate_m3_s=np.array(rates, dtype=float))


def maxwell_model_gas(k_m3_s, mass_amu, e_max_eV=1e4, n_grid=3):
    """Elastic-only gas with a collision frequency ``N * k_m3_s`` independent of speed.

    The Maxwell model, ``sigma(eps) * v = const`` (Maxwell 1867, Phil. Trans. R. Soc. 157, 49;
    used for swarms by Wannier 1953, Bell Syst. Tech. J. 32, 170).
    """
    rate = np.full((1, n_grid), float(k_m3_s))
    return McGas(mass_amu=float(mass_amu), ids=("maxwell_elastic",), kinds=np.zeros(1, dtype=np.int64),
                 threshold_eV=np.zeros(1), de_eV=e_max_eV / (n_grid - 1), rate_m3_s=rate)


@numba.njit(cache=True, inline="always")
def _uniform(state):
    """Uniform variate in [0, 1) from the xorshift64* generator held in ``state[0]``.

    References
    ----------
    G. Marsaglia, "Xorshift RNGs", J. Stat. Softw. 8(14) (2003); S. Vigna, "An experimental
    exploration of Marsaglia's xorshift generators, scrambled", ACM Trans. Math. Softw. 42,
    30 (2016) (the multiplier of xorshift64*).
    """
    x = state[0]
    x ^= x >> numba.uint64(12)
    x ^= x << numba.uint64(25)
    x ^= x >> numba.uint64(27)
    state[0] = x
    return float((x * numba.uint64(2685821657736338717)) >> numba.uint64(11)) * (1.0 / 9007199254740992.0)


@numba.njit(cache=True, inline="always")
def _normal(state):
    """Standard normal variate (Box & Muller 1958, Ann. Math. Stat. 29, 610)."""
    u = 1.0 - _uniform(state)
    return np.sqrt(-2.0 * np.log(u)) * np.cos(2.0 * np.pi * _uniform(state))


@numba.njit(cache=True, inline="always")
def _isotropic(speed, state):
    """Random vector of length ``speed`` with isotropic direction."""
    cos_t = 2.0 * _uniform(state) - 1.0
    sin_t = np.sqrt(max(0.0, 1.0 - cos_t * cos_t))
    phi = 2.0 * np.pi * _uniform(state)
    return speed * sin_t * np.cos(phi), speed * sin_t * np.sin(phi), speed * cos_t


@numba.njit(cache=True)
def _advance(st, n_cur, dt, sampling, b, acc, counts, kinds, thr_J, rate, cummax, de_J, n_gas,
             nu_max, accel, m_e, mu, w_e, sigma_v_gas, sharing, state, tally):
    """Move every electron through one step of length ``dt``; return the new count.

    ``st`` holds z, vx, vy, vz, t0 (birth time in the step) and alive (1.0/0.0) in its
    rows. During sampling, exposure time, energy and displacement integrals go to
    ``acc[:, b]`` and collision counts to ``counts[b]``. ``tally`` counts real, null,
    created-or-lost collisions and overflows.
    """
    n_proc = kinds.shape[0]
    n_grid = rate.shape[1]
    capacity = st.shape[1]
    eps_top = de_J * (n_grid - 2)
    cap_min = 0.002 * eps_top
    adaptive = sigma_v_gas == 0.0 and accel > 0.0
    z, vx, vy, vz, t0, alive = st[0], st[1], st[2], st[3], st[4], st[5]
    i = 0
    while i < n_cur:          # includes electrons born during this step
        t = t0[i]
        while True:
            v2 = vx[i] * vx[i] + vy[i] * vy[i] + vz[i] * vz[i]
            nu_b = nu_max
            t_cap = np.inf
            if adaptive:
                # majorant valid up to e_cap; the flight is stopped where e_cap is reached
                e_cap = 1.2 * 0.5 * mu * v2 + cap_min
                if e_cap < eps_top:
                    nu_b = n_gas * cummax[int(e_cap / de_J) + 1] * 1.0001
                    vperp2 = vx[i] * vx[i] + vy[i] * vy[i]
                    t_cap = (np.sqrt(2.0 * e_cap / mu - vperp2) - vz[i]) / accel
            tau = -np.log(1.0 - _uniform(state)) / nu_b
            limit = min(t_cap, dt - t)
            last = tau >= limit
            if last:
                tau = limit
            if sampling:
                acc[0, b] += tau
                acc[1, b] += 0.5 * m_e * (v2 * tau + vz[i] * accel * tau * tau
                                          + accel * accel * tau * tau * tau / 3.0)
                acc[2, b] += vz[i] * tau + 0.5 * accel * tau * tau
            z[i] += vz[i] * tau + 0.5 * accel * tau * tau
            vz[i] += accel * tau
            t += tau
            if last:
                if t_cap < dt - (t - tau):
                    continue          # majorant cap reached: draw again with a higher bound
                break
            # candidate collision: target velocity, relative velocity, CM energy
            gx, gy, gz = vx[i], vy[i], vz[i]
            if sigma_v_gas > 0.0:
                gx -= sigma_v_gas * _normal(state)
                gy -= sigma_v_gas * _normal(state)
                gz -= sigma_v_gas * _normal(state)
            eps = 0.5 * mu * (gx * gx + gy * gy + gz * gz)
            x = eps / de_J
            k = int(x)
            if k >= n_grid - 1:
                tally[3] += 1
                k = n_grid - 2
                x = n_grid - 1.0
            f = x - k
            r = _uniform(state) * nu_b
            cum = 0.0
            hit = -1
            for j in range(n_proc):
                cum += n_gas * (rate[j, k] * (1.0 - f) + rate[j, k + 1] * f)
                if r < cum:
                    hit = j
                    break
            if hit < 0:
                tally[1] += 1
                continue
            kind = kinds[hit]
            eps_after = eps - thr_J[hit]
            if eps_after < 0.0:      # only by interpolation at the threshold node
                tally[1] += 1
                continue
            tally[0] += 1
            if sampling:
                counts[b, hit] += 1.0
            # centre-of-mass velocity
            cx = vx[i] - w_e * gx
            cy = vy[i] - w_e * gy
            cz = vz[i] - w_e * gz
            if kind >= 2:
                tally[2] += 1
            if kind == 3:
                alive[i] = 0.0
                break
            if kind == 2:
                e1 = 0.5 * eps_after if sharing == 0 else eps_after
                e2 = eps_after - e1
                if n_cur < capacity:
                    ax, ay, az = _isotropic(w_e * np.sqrt(2.0 * e2 / mu), state)
                    z[n_cur] = z[i]
                    vx[n_cur] = cx + ax
                    vy[n_cur] = cy + ay
                    vz[n_cur] = cz + az
                    t0[n_cur] = t
                    alive[n_cur] = 1.0
                    n_cur += 1
                else:
                    tally[3] += 1
                eps_after = e1
            gx, gy, gz = _isotropic(np.sqrt(2.0 * eps_after / mu), state)
            vx[i] = cx + w_e * gx
            vy[i] = cy + w_e * gy
            vz[i] = cz + w_e * gz
        i += 1
    return n_cur


@numba.njit(cache=True)
def _resample(st, n_cur, n_el, state):
    """Drop dead electrons, then drop or clone uniformly chosen ones back to ``n_el``.

    Returns the number alive before resampling (0: the swarm is lost).
    """
    n_live = 0
    for i in range(n_cur):
        if st[5, i] > 0.0:
            for r in range(4):
                st[r, n_live] = st[r, i]
            n_live += 1
    n_alive = n_live
    if n_live == 0:
        return 0
    while n_live > n_el:
        d = int(_uniform(state) * n_live)
        n_live -= 1
        for r in range(4):
            st[r, d] = st[r, n_live]
    while n_live < n_el:
        s = int(_uniform(state) * n_live)
        for r in range(4):
            st[r, n_live] = st[r, s]
        n_live += 1
    for i in range(n_el):
        st[4, i] = 0.0
        st[5, i] = 1.0
    return n_alive


@numba.njit(cache=True)
def _swarm_kernel(kinds, thr_J, rate, de_J, n_gas, accel, m_e, m_gas, sigma_v_gas, sharing,
                  n_el, coll_per_step, relax_coll, sample_coll, n_batches, init_speed, seed):
    """Relax, then sample the ensemble; return per-batch sums (see :func:`run_swarm`)."""
    state = np.empty(1, dtype=np.uint64)
    state[0] = numba.uint64(seed) * numba.uint64(0x9E3779B97F4A7C15) | numba.uint64(1)
    for _ in range(16):
        _uniform(state)
    n_proc = kinds.shape[0]
    n_grid = rate.shape[1]
    mu = m_e * m_gas / (m_e + m_gas)
    w_e = m_gas / (m_e + m_gas)          # electron velocity relative to CM = w_e * relative
    total = np.zeros(n_grid)
    for j in range(n_proc):
        for i in range(n_grid):
            total[i] += rate[j, i]
    nu_max = n_gas * total.max() * 1.0001
    # bound of the total rate below each grid energy, for the energy-dependent majorant
    cummax = np.zeros(n_grid)
    run = 0.0
    for i in range(n_grid):
        run = max(run, total[i])
        cummax[i] = run
    st = np.zeros((6, 4 * n_el + 16))
    for i in range(n_el):
        st[1, i], st[2, i], st[3, i] = _isotropic(init_speed, state)
        st[5, i] = 1.0
    tally = np.zeros(4, dtype=np.int64)      # real, null, created or lost, overflow
    acc = np.zeros((3, n_batches))
    counts = np.zeros((n_batches, n_proc))
    centroid = np.zeros(n_batches + 1)
    info = np.zeros(3)                       # dt, steps per batch, lost (1.0)
    dt = 1.0 / nu_max                        # first step; tuned during the relaxation
    # relaxation: tune dt to ``coll_per_step`` real collisions per electron and to at
    # most 5 % of the ensemble created or lost per step
    relax_real = 0.0
    steps = 0
    rate_real = 0.0
    while relax_real < relax_coll * n_el or steps < 20:
        before = tally.copy()
        n_cur = _advance(st, n_el, dt, False, np.int64(0), acc, counts, kinds, thr_J, rate, cummax, de_J,
                         n_gas, nu_max, accel, m_e, mu, w_e, sigma_v_gas, sharing, state, tally)
        if _resample(st, n_cur, n_el, state) == 0:
            info[2] = 1.0
            return acc, counts, centroid, tally, info
        real = float(tally[0] - before[0])
        relax_real += real
        rate_real = real / (n_el * dt)
        ratio = coll_per_step * n_el / max(1.0, real)
        events = float(tally[2] - before[2])
        if events > 0.0:
            ratio = min(ratio, max(1.0, 0.05 * n_el) / events)
        dt *= min(2.0, max(0.5, ratio))
        steps += 1
        if steps > 1000000:
            break
    steps_per_batch = max(1, int(np.ceil(sample_coll / max(rate_real * dt, 1e-300) / n_batches)))
    info[0] = dt
    info[1] = steps_per_batch
    overflow = tally[3]
    tally[:] = 0
    tally[3] = overflow                      # keep overflows of the relaxation
    centroid[0] = st[0, :n_el].mean()
    for b in range(n_batches):
        for s in range(steps_per_batch):
            n_cur = _advance(st, n_el, dt, True, b, acc, counts, kinds, thr_J, rate, cummax, de_J,
                             n_gas, nu_max, accel, m_e, mu, w_e, sigma_v_gas, sharing, state, tally)
            if _resample(st, n_cur, n_el, state) == 0:
                info[2] = 1.0
                return acc, counts, centroid, tally, info
        centroid[b + 1] = st[0, :n_el].mean()
    return acc, counts, centroid, tally, info


def run_swarm(gas: McGas, E_N_Td, T_gas_K=0.0, *, sharing="equal", n_electrons=2000,
              relax_collisions=2000.0, sample_collisions=8000.0, n_batches=16,
              collisions_per_step=20.0, init_energy_eV=1.0, seed=12345):
    """Run the swarm and return :class:`McResult`.

    Parameters
    ----------
    gas : McGas
        From :func:`gas_from_cross_sections` or :func:`maxwell_model_gas`.
    E_N_Td : float
        Reduced field in Td (1 Td = 1e-21 V m2).
    T_gas_K : float
        Gas temperature in K; 0 for a gas at rest.
    sharing : {"equal", "one_takes_all"}
        How the energy left after ionization is split.
    relax_collisions, sample_collisions : float
        Length of the relaxation and of the sampling period, in real collisions per
        electron. The resampling step is tuned during the relaxation (to
        ``collisions_per_step`` real collisions per electron, and to at most 5 % of the
        ensemble created or lost per step) and kept fixed while sampling.
    n_batches : int
        Number of batches; errors are the standard errors of the batch means.
    collisions_per_step : float
        Real collisions per electron between two resamplings of the ensemble.

    Notes
    -----
    Mean energy and flux drift are time averages over the exact free flights; rate
    coefficients are collision counts over exposure time divided by ``N``; the bulk drift
    is the centroid displacement of the resampled ensemble over time.
    """
    if sharing not in ("equal", "one_takes_all"):
        raise ValueError("sharing must be 'equal' or 'one_takes_all'")
    m_gas = gas.mass_amu * AMU_KG
    accel = ELEMENTARY_CHARGE_C * E_N_Td * TD_V_M2 * GAS_DENSITY_M3 / ELECTRON_MASS_KG
    sigma_v = np.sqrt(BOLTZMANN_J_K * T_gas_K / m_gas) if T_gas_K > 0 else 0.0
    init_speed = np.sqrt(2.0 * init_energy_eV * ELEMENTARY_CHARGE_C / ELECTRON_MASS_KG)
    acc, counts, centroid, tally, info = _swarm_kernel(
        gas.kinds, gas.threshold_eV * ELEMENTARY_CHARGE_C, gas.rate_m3_s,
        gas.de_eV * ELEMENTARY_CHARGE_C, GAS_DENSITY_M3, accel, ELECTRON_MASS_KG, m_gas,
        sigma_v, 0 if sharing == "equal" else 1, int(n_electrons), float(collisions_per_step),
        float(relax_collisions), float(sample_collisions), int(n_batches), init_speed, int(seed))
    if info[2] > 0:
        raise RuntimeError("every electron was attached: no swarm left")
    if tally[3] > 0:
        raise RuntimeError(f"{tally[3]} collisions above the tabulated {gas.e_max_eV:g} eV "
                           "or beyond the ensemble capacity: raise e_max_eV")
    exposure, e_int, d_int = acc
    dt, steps_per_batch = info[0], info[1]

    def stat(values):
        values = np.asarray(values, dtype=float)
        return float(values.mean()), float(values.std(ddof=1) / np.sqrt(values.size))

    energy, energy_err = stat(e_int / exposure / ELEMENTARY_CHARGE_C)
    flux, flux_err = stat(d_int / exposure)
    batch_time = dt * steps_per_batch
    bulk, bulk_err = stat(np.diff(centroid) / batch_time)
    rates, errors = {}, {}
    for j, pid in enumerate(gas.ids):
        k, ke = stat(counts[:, j] / exposure / GAS_DENSITY_M3)
        rates[pid] = k
        errors[pid] = ke
    return McResult(E_N_Td=float(E_N_Td), T_gas_K=float(T_gas_K), mean_energy_eV=energy,
                    mean_energy_err_eV=energy_err, flux_drift_m_s=flux, flux_drift_err_m_s=flux_err,
                    bulk_drift_m_s=bulk, bulk_drift_err_m_s=bulk_err,
                    rate_coefficients_m3_s=rates, rate_errors_m3_s=errors,
                    n_electrons=int(n_electrons), n_real_collisions=int(tally[0]),
                    n_null_collisions=int(tally[1]), n_batches=int(n_batches))
