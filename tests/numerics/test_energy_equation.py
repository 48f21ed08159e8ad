"""The gas energy equation of the integrator (isobaric and isochoric).

References outside the project:
* Newton's law of cooling with a constant heat capacity (argon, c_p = 5/2 k and
  c_v = 3/2 k for a monatomic ideal gas; any kinetic-theory text): closed forms below.
* Adiabatic temperature rise of ozone decomposition in oxygen against an enthalpy balance
  computed with the data of the ``chemicals`` library (its ideal-gas heat capacities of
  the TRC correlations and its standard enthalpies of formation), independent of the
  project's NASA-7 tables.
* Energy conservation of a CO2 filament pulse: the enthalpy of the parcel rises by the
  electron energy e n_e w E dt that the integrator reports (first law; common practice,
  no source) -- a consistency check of the bookkeeping, not a reference.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from chemicals import heat_capacity as hc
from chemicals.reaction import Hfg

from plasmazero.data.shipped import shipped_root
from plasmazero.numerics import FieldProfile, integrate
from plasmazero.numerics.integrate import build_model
from plasmazero.numerics.kinetics import JACOBIAN, RHS, evaluate, heat_arrays, temperature_column
from plasmazero.physics.compiled import load_compiled_mechanism
from plasmazero.physics.thermo import h_RT
from plasmazero.workflows import dbd, electron_tables as et

K_B = 1.380649e-23          # J/K (CODATA 2018, exact)
N_A = 6.02214076e23         # 1/mol (CODATA 2018, exact)
P_ATM = 101325.0            # Pa

# A small O2/O3/Ar mechanism for the tests; the rate coefficients are those of the
# shipped oxygen mechanism (IUPAC, Atkinson et al. 2004, as recalled there); the test
# only needs them to be fast at 700 K. O + O + M is left out on purpose (slow, and the
# reference balance below takes the final composition as it is).
MINI = """
name: ozone-test
units: {density: cm^-3, rate_coefficient: cm^3/s, activation: K}
elements: [O, Ar]
thermo_library: [THERMO]
species:
  - {name: O2, composition: {O: 2}}
  - {name: O, composition: {O: 1}}
  - {name: O3, composition: {O: 3}}
  - {name: Ar, composition: {Ar: 1}}
reactions:
  - equation: O + O2 + M <=> O3 + M
    rate: {arrhenius: {A: 6.0e-34, b: -2.6}}
    source: "Atkinson et al. (2004), Atmos. Chem. Phys. 4, 1461 (IUPAC), as in mechanisms/oxygen"
    provenance: recalled
  - equation: O + O3 => O2 + O2
    rate: {arrhenius: {A: 8.0e-12, Ea: 2060.0}}
    source: "Atkinson et al. (2004), Atmos. Chem. Phys. 4, 1461 (IUPAC), as in mechanisms/oxygen"
    provenance: recalled
"""


@pytest.fixture(scope="module")
def mini(tmp_path_factory):
    path = tmp_path_factory.mktemp("mech") / "mechanism.yaml"
    thermo = (shipped_root() / "thermo" / "nasa7.yaml").as_posix()
    path.write_text(MINI.replace("THERMO", thermo))
    return load_compiled_mechanism(path)


def _state(mech, x, T_K, p_Pa=P_ATM):
    N = p_Pa / (K_B * T_K)
    y = np.zeros(len(mech.species))
    for s, v in x.items():
        y[mech.species.index(s)] = v * N
    return y


@pytest.mark.parametrize("method", ["rodas4", "bdf"])
@pytest.mark.parametrize("mode", ["isochoric", "isobaric"])
def test_newton_cooling_of_argon(mini, mode, method):
    T0, Tw = 400.0, 300.0
    y0 = _state(mini, {"Ar": 1.0}, T0)
    N0 = y0.sum()
    G = 50.0                    # W m^-3 K^-1 (invented test value)
    t = np.linspace(0.0, 0.5, 11)
    res = integrate(mini, y0, (0.0, 0.5), T_gas_K=T0, t_eval_s=t, energy_equation=mode,
                    heat_loss_W_m3_K=G, wall_temperature_K=Tw,
                    rtol=1e-9 if method == "rodas4" else 1e-10,   # BDF: global error ~10 rtol
                    constant_total_density=(mode == "isobaric"), method=method)
    if mode == "isochoric":
        # N (3/2 k) dT/dt = -G (T - Tw)
        ref = Tw + (T0 - Tw) * np.exp(-G * t / (N0 * 1.5 * K_B))
    else:
        # N = p / (k T): (p c_p / (k T)) dT/dt = -G (T - Tw), whose solution is
        # (T - Tw)/T = (T0 - Tw)/T0 exp(-G k Tw t / (p c_p)), c_p = 5/2 k
        q = (T0 - Tw) / T0 * np.exp(-G * K_B * Tw * t / (P_ATM * 2.5 * K_B))
        ref = Tw / (1.0 - q)
        # the density follows the temperature at constant pressure
        np.testing.assert_allclose(res.densities_m3[:, 3] * res.T_gas_K, N0 * T0, rtol=1e-8)
    np.testing.assert_allclose(res.T_gas_K, ref, rtol=1e-7)
    # the heat loss reported by the integrator is the parcel's energy loss
    c = 2.5 if mode == "isobaric" else 1.5
    phi = res.expansion_factor
    lost = N0 * c * K_B * (T0 - res.T_gas_K[-1])
    if mode == "isobaric":
        lost = (res.densities_m3[0].sum() * c * K_B * T0
                - res.densities_m3[-1].sum() * phi[-1] * c * K_B * res.T_gas_K[-1])
    assert res.heat_loss_J_m3[-1] == pytest.approx(lost, rel=1e-6)


def _chemicals_H_J(moles, T_K):
    """Enthalpy of a mixture (mol per species) from the chemicals library, J."""
    cas = {"O2": "7782-44-7", "O": "17778-80-2", "O3": "10028-15-6"}
    total = 0.0
    for s, n in moles.items():
        if n == 0.0 or s == "Ar":
            total += n * 2.5 * 8.314462618 * (T_K - 298.15)   # monatomic ideal gas
            continue
        row = hc.TRC_gas_data.loc[cas[s]]
        a = [float(row[f"a{i}"]) for i in range(8)]
        dH = hc.TRCCp_integral(T_K, *a) - hc.TRCCp_integral(298.15, *a)
        total += n * (Hfg(cas[s]) + dH)
    return total


def test_adiabatic_ozone_decomposition_against_chemicals(mini):
    T0 = 700.0
    y0 = _state(mini, {"O2": 0.99, "O3": 0.01}, T0)
    res = integrate(mini, y0, (0.0, 0.05), T_gas_K=T0, energy_equation="isobaric",
                    t_eval_s=np.array([0.0, 0.05]), rtol=1e-8)
    i = {s: k for k, s in enumerate(mini.species)}
    assert res.density("O3")[-1] < 0.05 * y0[i["O3"]]      # mostly decomposed
    moles0 = {s: y0[k] / N_A for s, k in i.items()}                       # per m^3 at t0
    phi = res.expansion_factor[-1]
    moles1 = {s: res.densities_m3[-1, k] * phi / N_A for s, k in i.items()}
    H0 = _chemicals_H_J(moles0, T0)
    Tf = res.T_gas_K[-1]
    from scipy.optimize import brentq
    T_ref = brentq(lambda T: _chemicals_H_J(moles1, T) - H0, T0, T0 + 200.0)
    assert Tf - T0 > 30.0                                   # 1 % ozone: tens of kelvin
    # the two thermo data sets differ by a few hundred J/mol in the ozone enthalpy of
    # formation (chemicals: 141.7 kJ/mol): 0.3 K of the ~45 K rise
    assert Tf == pytest.approx(T_ref, abs=0.5)


@pytest.fixture(scope="module")
def co2_case():
    loaded, mech = dbd.load_mechanism_pair(shipped_root() / "co2" / "mechanism.yaml")
    pmap = et.partner_map(loaded, mech)
    N = 1e5 / (K_B * 300.0)
    idx = {s: i for i, s in enumerate(mech.species)}
    y0 = np.zeros(len(mech.species))
    y0[idx["CO2"]] = N
    y0[idx["e"]] = 1e18
    y0[idx["CO2+"]] = 1e18
    x, exc, _ = et.partner_fractions(pmap, y0)
    table, _ = et.build_table(pmap, mech, x, exc, 300.0, extra_E_N_Td=(150.0,))
    field = FieldProfile(np.array([0.0, 30e-9, 30e-9, 1e-3]), np.array([150.0, 150.0, 0.0, 0.0]))
    return mech, y0, table, field


def _enthalpy_J_m3(mech, y, T):
    out = np.zeros(len(mech.species))
    h_RT(mech.kernel_args[6], mech.kernel_args[7], mech.kernel_args[8], float(T), out)
    return float(np.sum(out * K_B * T * y))


def test_filament_energy_ends_in_the_gas(co2_case):
    mech, y0, table, field = co2_case
    t = np.r_[0.0, 30e-9, 1e-6, 1e-3]
    res = integrate(mech, y0, (0.0, 1e-3), T_gas_K=300.0, field=field, electron_table=table,
                    t_eval_s=t, energy_equation="isobaric", rtol=1e-7)
    E_in = res.electron_energy_J_m3
    assert E_in[-1] > 100.0                      # J/m^3: a strong pulse
    H = [_enthalpy_J_m3(mech, res.densities_m3[k], res.T_gas_K[k]) * res.expansion_factor[k]
         for k in range(t.size)]
    # first law at constant pressure: H(t) - H(0) = electron energy in (adiabatic)
    np.testing.assert_allclose(np.array(H) - H[0], E_in, rtol=1e-5, atol=1e-6 * E_in[-1])
    assert res.T_gas_K[-1] > res.T_gas_K[0]      # some of it is heat


def test_temperature_row_and_column_against_finite_differences(co2_case):
    mech, y0, table, _ = co2_case
    idx = {s: i for i, s in enumerate(mech.species)}
    y = y0.copy()
    y[idx["CO"]] = 1e22
    y[idx["O"]] = 1e21
    y[idx["O2"]] = 5e21
    y = np.r_[y, 450.0]
    for mode in ("isobaric", "isochoric"):
        model = build_model(mech, 450.0, electron_table=table, energy_equation=mode, E_N_Td=150.0)
        n = y.size
        f = np.zeros(n)
        J = np.zeros((n, n))
        evaluate(150.0, y, model, f, J, JACOBIAN, heat_arrays(model))
        temperature_column(150.0, y, model, f, J)
        J = J.copy()
        f0 = f.copy()
        for m in (idx["CO2"], idx["e"], idx["O"], n - 1):
            d = 1e-6 * y[m]
            yp = y.copy()
            yp[m] += d
            fp = np.zeros(n)
            evaluate(150.0, yp, model, fp, np.zeros((n, n)), RHS, heat_arrays(model))
            col = (fp - f0) / (yp[m] - y[m])
            scale = np.abs(J[:, m]).max()
            np.testing.assert_allclose(J[:, m], col, rtol=1e-3, atol=1e-4 * scale)


def test_energy_equation_needs_thermo_for_every_species():
    from systems import robertson
    mech = robertson()
    with pytest.raises(ValueError, match="NASA-7 thermo"):
        integrate(mech, np.array([1.0, 0.0, 0.0]), (0.0, 1.0), T_gas_K=300.0,
                  energy_equation="isobaric")
