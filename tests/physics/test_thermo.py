"""NASA-7 thermochemistry (physics/thermo.py) and the shipped thermo library (data/thermo_library.py).

Outside references, each named beside its check:
- NIST-JANAF tables (Chase 1998, J. Phys. Chem. Ref. Data Monograph 9), recalled from memory;
- the ``chemicals`` package (general-purpose property library, test extra): its JANAF 1998
  and ATcT 1.112 formation enthalpies, JANAF and NIST WebBook entropies, JANAF heat-capacity
  tables and NIST WebBook Shomate fits;
- the Saha equation with ionization energies and electron affinities recalled from memory
  of NIST atomic spectra data and photodetachment measurements;
- numerical quadrature (scipy) for the polynomial relations.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from chemicals import heat_capacity as chem_cp
from chemicals.reaction import Hfg, S0g
from scipy.integrate import quad

from plasmazero.data.errors import InputError
from plasmazero.data.thermo_library import (
    ThermoRecord,
    load_thermo_library,
    parse_nasa7,
    shipped_thermo_library,
)
from plasmazero.data.yamlio import parse_yaml
from plasmazero.physics import thermo as th
from plasmazero.physics.constants import BOLTZMANN_J_K, ELECTRON_MASS_KG, ELEMENTARY_CHARGE_C

R = 8.314462618  # J/(mol K), CODATA 2018 (k_B N_A, exact constants), common practice
PLANCK_J_S = 6.62607015e-34  # CODATA 2018, exact
LIGHT_M_S = 299792458.0  # exact
AMU_KG = 1.66053906660e-27  # CODATA 2018


@pytest.fixture(scope="module")
def lib():
    return load_thermo_library(shipped_thermo_library())


@pytest.fixture(scope="module")
def arrays(lib):
    names = list(lib)
    return names, th.species_arrays(lib, names)


def _props(arrays, name, T):
    names, arr = arrays
    cp, h, s = th.species_thermo_SI(T, arr)
    i = names.index(name)
    return cp[i], h[i], s[i]


def _nu(names, **coeffs):
    nu = np.zeros(len(names))
    for key, value in coeffs.items():
        nu[names.index(key.replace("_plus", "+").replace("_minus", "-"))] = value
    return nu


# ------------------------------------------------------------------ the shipped library

NEEDED = ("e Ar Ar+ O2 O O3 O2+ O- O2- CO2 CO C H2 H H2O OH HO2 H2O2 HCO CH2O CH3O CH2OH "
          "CH3OH CH4 CH3 CH2 CH H+ H3O+ OH- H- N2 He").split()
# Needed by the mechanisms but absent from BURCAT_THR.xml as shipped in thermochem 0.9.0
# (searched by elemental composition and charge); documented in mechanisms/thermo/README.md.
ABSENT = "Ar2+ O+ O3- O4+ CO+ CO2+ CO3- CO4- H2+ H3+ H2O+".split()


def test_library_has_the_needed_species_and_says_where_they_come_from(lib):
    for name in NEEDED:
        assert name in lib, name
    for name in ABSENT:
        assert name not in lib, f"{name}: where do its coefficients come from? update README and this test"
    for rec in lib.values():
        assert isinstance(rec, ThermoRecord)
        assert rec.provenance == "taken"
        assert rec.source.startswith("Burcat, A. & Ruscic, B. (2005)")
        assert rec.charge == -rec.composition.get("E", 0)
        assert rec.nasa7_T_K[1] == 1000.0


# ------------------------------------------------------------------ NIST-JANAF, from memory

# (Delta_f H(298.15) kJ/mol, S(298.15) J/(mol K), Cp(298.15) J/(mol K),
#  H(1000)-H(298.15) kJ/mol, S(1000), Cp(1000)) -- all values from memory of NIST-JANAF, Chase 1998.
JANAF = {
    "CO2": (-393.522, 213.795, 37.129, 33.397, 269.299, 54.308),
    "CO": (-110.527, 197.653, 29.142, 21.686, 234.538, 33.183),
    "O2": (0.0, 205.147, 29.376, 22.703, 243.578, 34.870),
    "O": (249.173, 161.059, 21.911, 14.860, 186.790, 20.915),
    "H2": (0.0, 130.680, 28.836, 20.680, 166.227, 30.205),
    "H": (217.999, 114.716, 20.786, 14.589, 139.871, 20.786),
    "OH": (38.987, 183.708, 29.886, 20.93, 219.73, 30.68),
    "H2O": (-241.826, 188.834, 33.587, 26.000, 232.738, 41.268),
    "O3": (142.674, 238.932, 39.238, None, None, None),
}
# O3 at 1000 K is not recalled reliably enough to serve here; the chemicals-based test
# below checks it against the JANAF 1998 table.
# Tolerance on Delta_f H(298.15), kJ/mol. The database takes OH from the Active
# Thermochemical Tables (Ruscic et al. 2002, J. Phys. Chem. A 106, 2727), 37.30 kJ/mol,
# 1.7 kJ/mol below JANAF's 38.99; its O3 (Gurvich 1989) is 0.9 kJ/mol below JANAF. The
# others agree within 0.02 kJ/mol; 0.1 covers memory rounding.
DHF_TOL_KJ = {"OH": 2.0, "O3": 1.2}


@pytest.mark.parametrize("name", sorted(JANAF))
def test_298K_against_janaf_from_memory(arrays, name):
    dHf, S, Cp = JANAF[name][:3]  # values from memory of NIST-JANAF, Chase 1998
    cp, h, s = _props(arrays, name, 298.15)
    # h of the NASA-7 convention at 298.15 K is the standard enthalpy of formation
    assert h / 1e3 == pytest.approx(dHf, abs=DHF_TOL_KJ.get(name, 0.1))
    # S and Cp: Gurvich-based entries (O3) differ from JANAF by up to 0.08 and 0.14 J/(mol K)
    assert s == pytest.approx(S, abs=0.15)
    assert cp == pytest.approx(Cp, abs=0.2)


@pytest.mark.parametrize("name", sorted(n for n in JANAF if JANAF[n][3] is not None))
def test_1000K_against_janaf_from_memory(arrays, name):
    dH, S, Cp = JANAF[name][3:]  # values from memory of NIST-JANAF, Chase 1998
    _, h0, _ = _props(arrays, name, 298.15)
    cp, h, s = _props(arrays, name, 1000.0)
    # the increment H(T) - H(298.15) removes the database's choice of Delta_f H; the
    # OH and O3 increments are recalled to three figures only, hence 0.1 kJ/mol
    assert (h - h0) / 1e3 == pytest.approx(dH, abs=0.1)
    assert s == pytest.approx(S, abs=0.15)
    assert cp == pytest.approx(Cp, abs=0.15)


# ------------------------------------------------------------------ chemicals package

CAS = {"CO2": "124-38-9", "CO": "630-08-0", "O2": "7782-44-7", "O": "17778-80-2",
       "H2": "1333-74-0", "H": "12385-13-6", "OH": "3352-57-6", "H2O": "7732-18-5",
       "O3": "10028-15-6"}


@pytest.mark.parametrize("name", sorted(CAS))
def test_formation_enthalpy_and_entropy_against_chemicals(arrays, name):
    cas = CAS[name]
    _, h, s = _props(arrays, name, 298.15)
    # ATcT 1.112 as shipped in chemicals (Ruscic's Active Thermochemical Tables): the
    # database's values are ATcT-era for OH and O3; all nine agree within 0.21 kJ/mol.
    assert h == pytest.approx(Hfg(cas, method="ATCT_G"), abs=250.0)
    # JANAF 1998 as shipped in chemicals (elements O2, H2 are zero by definition there)
    if name not in ("O2", "H2"):
        assert h == pytest.approx(Hfg(cas, method="JANAF"), abs=1e3 * DHF_TOL_KJ.get(name, 0.1))
    # entropy: JANAF 1998 in chemicals, NIST WebBook for O2 and H2; differences up to
    # 0.08 J/(mol K) (O3) between the underlying tables
    method = "WEBBOOK" if name in ("O2", "H2") else "JANAF"
    assert s == pytest.approx(S0g(cas, method=method), abs=0.15)


# O3 is the exception: the database's entry (Gurvich 1989) includes anharmonicity and
# low-lying electronic states that JANAF's does not; at 1000 K its cp is 1.8 % above
# JANAF's (56.03 against 55.02 J/(mol K)), and the increment 298.15 -> 1000 K is 340 J/mol
# and 0.47 J/(mol K) larger (measured; far larger above 1500 K, see the README).
CP_1000_REL = {"O3": 0.025}
INCREMENT_ABS = {"O3": (500.0, 0.6)}


@pytest.mark.parametrize("name", sorted(CAS))
def test_heat_capacity_and_increments_against_chemicals(arrays, name):
    cas = CAS[name]
    cp298, h298, s298 = _props(arrays, name, 298.15)
    cp1000, h1000, s1000 = _props(arrays, name, 1000.0)
    rel1000 = CP_1000_REL.get(name, 5e-3)
    table = chem_cp.Cp_dict_JANAF_gas.get(cas)  # JANAF 1998 Cp tables in chemicals
    if table is not None:
        T, Cp = table
        # 0.5 %: the database quotes least-squares fit errors of its polynomials up to
        # 0.4 % in cp (CO2), and its sources (Gurvich, ATcT) differ from JANAF by up to
        # 0.3 % (OH at 298 K: 29.886 against the table's 29.986)
        assert cp298 == pytest.approx(Cp[T.index(298.15)], rel=5e-3)
        assert cp1000 == pytest.approx(Cp[T.index(1000.0)], rel=rel1000)
    model = chem_cp.WebBook_Shomate_gases.get(cas)  # NIST WebBook Shomate fits in chemicals
    if model is not None and model.Tmin <= 298.15:
        assert cp298 == pytest.approx(model.calculate(298.15), rel=5e-3)
        assert cp1000 == pytest.approx(model.calculate(1000.0), rel=rel1000)
        # enthalpy and entropy increments 298.15 -> 1000 K: the Shomate fits and the
        # NASA-7 fits of (slightly different) tables agree within 17 J/mol, 0.04 J/(mol K)
        dh_tol, ds_tol = INCREMENT_ABS.get(name, (50.0, 0.1))
        assert h1000 - h298 == pytest.approx(model.calculate_integral(298.15, 1000.0), abs=dh_tol)
        assert s1000 - s298 == pytest.approx(model.calculate_integral_over_T(298.15, 1000.0), abs=ds_tol)
    assert table is not None or model is not None


# (CAS, charge) of ions that chemicals has in both its JANAF 1998 and ATcT 1.112 tables
IONS = {"Ar+": ("14791-69-6", 1), "H+": ("12408-02-5", 1), "H-": ("12184-88-2", -1),
        "O-": ("14337-01-0", -1), "C+": ("14067-05-1", 1), "HCO+": ("17030-74-9", 1)}


@pytest.mark.parametrize("name", sorted(IONS))
def test_ion_enthalpies_use_the_thermal_electron_convention(arrays, name):
    cas, charge = IONS[name]
    _, h, _ = _props(arrays, name, 298.15)
    # JANAF (Chase 1998) uses the thermal electron convention, like the library: the
    # entries agree within 0.03 kJ/mol, O- (from Gurvich 1989) within 0.18 kJ/mol
    assert h == pytest.approx(Hfg(cas, method="JANAF"), abs=250.0)
    # ATcT tabulates ions in the stationary electron (ion) convention, where the electron
    # carries no enthalpy: Delta_f H(TEC) = Delta_f H(ion) + charge * 5/2 R 298.15 (Lias et
    # al. 1988, J. Phys. Chem. Ref. Data 17 Suppl. 1, from memory). Measured remainders:
    # 0.01 (Ar+, H+, H-) to 0.39 kJ/mol (HCO+), from the ATcT updates.
    shift = charge * 2.5 * R * 298.15
    assert h == pytest.approx(Hfg(cas, method="ATCT_G") + shift, abs=500.0)
    assert abs(h - Hfg(cas, method="ATCT_G")) > 5e3  # the two conventions are told apart


# ------------------------------------------------------------------ equilibrium constants


def test_co2_dissociation_Kp_against_janaf_from_memory(arrays):
    names, arr = arrays
    nu = _nu(names, CO2=-1, CO=1, O2=0.5)
    # CO2 <=> CO + 1/2 O2: Delta_r G = Delta_f G(CO) - Delta_f G(CO2) (O2 is the element
    # reference, Delta_f G = 0), Kp = exp(-Delta_r G / RT). Delta_f G in kJ/mol, values from
    # memory of NIST-JANAF, Chase 1998:
    #   2000 K: CO -286.034, CO2 -396.333 -> Delta_r G = 110.299 kJ/mol, Kp = 1.316e-3
    #   3000 K: CO -367.816, CO2 -396.062 -> Delta_r G =  28.246 kJ/mol, Kp = 0.322
    # Tolerance 1 kJ/mol on Delta_r G: at 2000 K the difference is 0.08 kJ/mol; the 3000 K
    # entries are the less certain memory (the chemicals-based check below is tighter).
    for T, dG_janaf in ((2000.0, 110.299e3), (3000.0, 28.246e3)):
        Kp = th.equilibrium_constant_Kp(nu, T, arr)
        assert -R * T * math.log(Kp) == pytest.approx(dG_janaf, abs=1e3)


def test_co2_dissociation_Kp_against_chemicals(arrays):
    names, arr = arrays
    nu = _nu(names, CO2=-1, CO=1, O2=0.5)
    # Independent computation with chemicals: Delta_r H(298.15) from JANAF 1998 Hfg, S(298.15)
    # from JANAF (WebBook for O2), increments from the NIST WebBook Shomate fits;
    # Delta_r G(T) = Delta_r H(T) - T Delta_r S(T).
    species = (("CO2", -1.0), ("CO", 1.0), ("O2", 0.5))
    for T in (2000.0, 3000.0):
        dH = dS = 0.0
        for name, v in species:
            cas = CAS[name]
            hf = 0.0 if name == "O2" else Hfg(cas, method="JANAF")
            s0 = S0g(cas, method="WEBBOOK" if name == "O2" else "JANAF")
            model = chem_cp.WebBook_Shomate_gases[cas]
            dH += v * (hf + model.calculate_integral(298.15, T))
            dS += v * (s0 + model.calculate_integral_over_T(298.15, T))
        Kp_ref = math.exp(-(dH - T * dS) / (R * T))
        # measured: 0.11 kJ/mol (2000 K) and 0.18 kJ/mol (3000 K) in Delta_r G, from the
        # 14 J/mol Delta_f H of CO2 and the fits; 0.3 kJ/mol is 1.8 % (2000 K) in Kp
        Kp = th.equilibrium_constant_Kp(nu, T, arr)
        assert math.log(Kp) == pytest.approx(math.log(Kp_ref), abs=300.0 / (R * T))


def test_kc_is_kp_times_standard_density_to_the_delta_nu(arrays):
    names, arr = arrays
    p0 = 1e5  # Pa, standard pressure of the tables (common practice, no source)
    kB = 1.380649e-23  # J/K, CODATA 2018 exact
    cases = (
        _nu(names, CO2=-1, CO=1, O2=0.5),  # delta nu = +1/2
        _nu(names, O=-1, O2=-1, O3=1),  # delta nu = -1
        _nu(names, H=-1, O2=-1, OH=1, O=1),  # delta nu = 0
    )
    for nu in cases:
        for T in (300.0, 1500.0, 4000.0):
            Kp = th.equilibrium_constant_Kp(nu, T, arr)
            Kc = th.equilibrium_constant_Kc(nu, T, arr)
            assert Kc == pytest.approx(Kp * (p0 / (kB * T)) ** nu.sum(), rel=1e-12)
    T = np.array([400.0, 800.0])
    Kc = th.equilibrium_constant_Kc(cases[1], T, arr)
    assert Kc.shape == (2,)
    assert Kc[1] == pytest.approx(th.equilibrium_constant_Kc(cases[1], 800.0, arr), rel=1e-14)


def _saha_m3(T, g_ratio, m_ratio, energy_eV):
    """n_products / n_reactants (m^-3) for A <=> A+ + e: the Saha equation (Saha 1920,
    Phil. Mag. 40, 472), (2 g+/g0)(m+/m0)^(3/2)(2 pi m_e k T/h^2)^(3/2) exp(-E/kT)."""
    lam = (2 * math.pi * ELECTRON_MASS_KG * BOLTZMANN_J_K * T / PLANCK_J_S**2) ** 1.5
    return 2 * g_ratio * m_ratio**1.5 * lam * math.exp(-energy_eV * ELEMENTARY_CHARGE_C / (BOLTZMANN_J_K * T))


@pytest.mark.parametrize("T", [3000.0, 5000.0])
def test_ionization_equilibria_obey_saha_thermal_electron_convention(arrays, T):
    """Kc of ionization against the Saha equation. A table in the ion convention (electron
    enthalpy zero) would be off by exp(5/2 R 298.15 / (R T)), 16 % at 5000 K."""
    names, arr = arrays
    m_e_amu = ELECTRON_MASS_KG / AMU_KG
    # Ar: IE 15.759610 eV; Ar+ 2P1/2 at 1431.58 cm-1 above 2P3/2 (values from memory of the
    # NIST Atomic Spectra Database); Ar excited states (11.5 eV) are negligible here.
    dE = 1431.58e2 * PLANCK_J_S * LIGHT_M_S / (BOLTZMANN_J_K * T)
    g_ar_ion = 4 + 2 * math.exp(-dE)
    ref = _saha_m3(T, g_ar_ion / 1, 1 - m_e_amu / 39.948, 15.759610)
    Kc = th.equilibrium_constant_Kc(_nu(names, Ar=-1, Ar_plus=1, e=1), T, arr)
    assert Kc == pytest.approx(ref, rel=5e-3)  # measured 1.1e-3
    # H: IE 13.598434 eV (value from memory of the NIST Atomic Spectra Database); g(H) = 2, g(H+) = 1
    ref = _saha_m3(T, 1 / 2, 1 - m_e_amu / 1.00794, 13.598434)
    Kc = th.equilibrium_constant_Kc(_nu(names, H=-1, H_plus=1, e=1), T, arr)
    assert Kc == pytest.approx(ref, rel=5e-3)
    # H- <=> H + e with EA(H) = 0.754195 eV (value from memory of Lykke, Murray & Lineberger
    # 1991, Phys. Rev. A 43, 6104); g(H-) = 1, g(H) = 2
    ref = _saha_m3(T, 2 / 1, 1 / (1 + m_e_amu / 1.00794), 0.754195)
    Kc = th.equilibrium_constant_Kc(_nu(names, H_minus=-1, H=1, e=1), T, arr)
    assert Kc == pytest.approx(ref, rel=5e-3)


def test_negative_ion_enthalpy_follows_thermal_electron_convention(arrays):
    """O + e -> O-: Delta_r H(298.15) = -EA + [H298-H0](O-) - [H298-H0](O) - 5/2 R T in the
    thermal electron convention (Gurvich-based entry of the database)."""
    names, arr = arrays
    T = 298.15
    c = PLANCK_J_S * LIGHT_M_S * 100 / BOLTZMANN_J_K  # K per cm-1

    def thermal_J_mol(levels):  # 5/2 RT + mean fine-structure energy, levels (g, E_cm1)
        z = sum(g * math.exp(-e * c / T) for g, e in levels)
        return 2.5 * R * T + R * sum(g * e * c * math.exp(-e * c / T) for g, e in levels) / z

    # O 3P2, 3P1, 3P0 at 0, 158.265, 226.977 cm-1; O- 2P3/2, 2P1/2 at 0, 177.08 cm-1;
    # EA(O) = 1.461112 eV (values from memory of the NIST Atomic Spectra Database and of
    # Blondel et al. 1989, Phys. Rev. A 40, 3698)
    h_O = thermal_J_mol([(5, 0.0), (3, 158.265), (1, 226.977)])
    h_Om = thermal_J_mol([(4, 0.0), (2, 177.08)])
    expected = -1.461112 * th.EV_J_MOL + h_Om - h_O - 2.5 * R * T
    dH = th.reaction_enthalpy_J_mol(_nu(names, O=-1, e=-1, O_minus=1), T, arr)
    assert dH == pytest.approx(expected, abs=500.0)  # measured 0.18 kJ/mol; the other convention is 6.2 kJ/mol off


# ------------------------------------------------------------------ polynomial relations


def _one(rec):
    return (np.ascontiguousarray(rec.nasa7_coeffs[None]), np.ascontiguousarray(rec.nasa7_T_K[None]),
            np.zeros(1))


def test_h_and_s_are_integrals_of_cp_for_every_species(lib):
    out = np.empty(1)
    for rec in lib.values():
        c, T_lim, shift = _one(rec)

        def cp(T):
            th.cp_R(c, T_lim, T, out)
            return out[0] * R

        def h(T):
            th.h_RT(c, T_lim, shift, T, out)
            return out[0] * R * T

        def s(T):
            th.s_R(c, T_lim, T, out)
            return out[0] * R

        lo, mid, hi = rec.nasa7_T_K
        for a, b in ((lo, mid), (mid * (1 + 1e-15) + 1e-12, hi)):  # each range on its own
            dh = quad(cp, a, b, epsabs=0, epsrel=1e-13)[0]
            ds = quad(lambda T: cp(T) / T, a, b, epsabs=0, epsrel=1e-13)[0]
            assert h(b) - h(a) == pytest.approx(dh, rel=1e-10, abs=1e-6), rec.name
            assert s(b) - s(a) == pytest.approx(ds, rel=1e-10, abs=1e-10), rec.name


def test_g_is_h_minus_Ts(arrays):
    names, (c, T_lim, _) = arrays
    shift = np.linspace(0.0, 3e5, len(names))  # arbitrary shifts exercise the shift term too
    n = len(names)
    h, s, g = np.empty(n), np.empty(n), np.empty(n)
    for T in (250.0, 298.15, 999.0, 1000.0, 1001.0, 2500.0, 5500.0):
        th.h_RT(c, T_lim, shift, T, h)
        th.s_R(c, T_lim, T, s)
        th.g_RT(c, T_lim, shift, T, g)
        scale = np.maximum(np.abs(h), np.abs(s))
        assert np.all(np.abs(g - (h - s)) <= 1e-12 * scale)


def test_continuity_at_T_mid_for_every_species(lib):
    # the largest jumps in the shipped entries, as the database has them: cp/R 5.7e-7
    # (HCO+), h/RT 7.4e-7 (CH), s/R 4.7e-7 (C); tolerance 2e-6
    out = np.empty(1)
    for rec in lib.values():
        c, T_lim, shift = _one(rec)
        T_mid = rec.nasa7_T_K[1]
        for kernel, args in ((th.cp_R, ()), (th.h_RT, (shift,)), (th.s_R, ())):
            kernel(c, T_lim, *args, T_mid, out)
            below = out[0]
            kernel(c, T_lim, *args, float(np.nextafter(T_mid, np.inf)), out)
            assert abs(out[0] - below) < 2e-6, (rec.name, kernel.__name__)


def test_kernels_match_the_published_polynomials_in_and_outside_the_ranges(lib):
    rec = lib["CO2"]
    c, T_lim, shift = _one(rec)
    out = np.empty(1)
    # 100 K and 7000 K lie outside [200, 6000]: the nearest range's polynomial is used
    for T, row in ((100.0, 0), (500.0, 0), (1000.0, 0), (1000.5, 1), (3000.0, 1), (7000.0, 1)):
        a = rec.nasa7_coeffs[row]
        # the NASA 7-coefficient forms, McBride, Zehe & Gordon 2002 (NASA/TP-2002-211556)
        cp = sum(a[k] * T**k for k in range(5))
        h = sum(a[k] * T**k / (k + 1) for k in range(5)) + a[5] / T
        s = a[0] * math.log(T) + sum(a[k] * T**k / k for k in range(1, 5)) + a[6]
        th.cp_R(c, T_lim, T, out)
        assert out[0] == pytest.approx(cp, rel=1e-13)
        th.h_RT(c, T_lim, shift, T, out)
        assert out[0] == pytest.approx(h, rel=1e-12)
        th.s_R(c, T_lim, T, out)
        assert out[0] == pytest.approx(s, rel=1e-13)
    assert list(th.out_of_range(100.0, (c, T_lim, shift))) == [True]
    assert list(th.out_of_range(300.0, (c, T_lim, shift))) == [False]


def test_excited_state_is_parent_plus_excitation_energy(lib):
    # an excited state takes its parent's thermo shifted by its excitation energy (common
    # practice, no source); 0.977 eV is only a number here
    E_eV = 0.977
    arr = th.species_arrays(lib, ["O2", "O2"], energy_shift_eV=[0.0, E_eV])
    assert arr[2][1] == pytest.approx(E_eV * 1.602176634e-19 * 6.02214076e23, rel=1e-15)  # CODATA 2018 exact
    for T in (300.0, 1200.0):
        cp, h, s = th.species_thermo_SI(T, arr)
        assert cp[1] == cp[0] and s[1] == s[0]
        assert h[1] - h[0] == pytest.approx(E_eV * th.EV_J_MOL, rel=1e-12)
        # O2 <=> O2*: with equal entropies the equilibrium ratio is the Boltzmann factor
        # exp(-E/kT) (common practice, no source), and Delta nu = 0 so Kc = Kp
        nu = np.array([-1.0, 1.0])
        boltzmann = math.exp(-E_eV * ELEMENTARY_CHARGE_C / (BOLTZMANN_J_K * T))
        assert th.equilibrium_constant_Kp(nu, T, arr) == pytest.approx(boltzmann, rel=1e-10)
        assert th.equilibrium_constant_Kc(nu, T, arr) == pytest.approx(boltzmann, rel=1e-10)
        assert th.reaction_enthalpy_J_mol(nu, T, arr) == pytest.approx(E_eV * th.EV_J_MOL, rel=1e-10)
    by_index = th.species_arrays(lib, ["O2", "O2"], energy_shift_eV={1: E_eV})
    assert np.array_equal(by_index[2], arr[2])
    # records may also be the (coeffs, T_K) pairs that parse_nasa7 returns
    pairs = {"O2": (lib["O2"].nasa7_coeffs, lib["O2"].nasa7_T_K)}
    from_pairs = th.species_arrays(pairs, ["O2", "O2"], energy_shift_eV=[0.0, E_eV])
    assert all(np.array_equal(a, b) for a, b in zip(from_pairs, arr))


def test_species_without_thermo_are_nan_and_helpers_refuse_them(lib):
    arr = th.species_arrays(lib, ["O2", "X_no_thermo", "O"])
    assert np.all(np.isnan(arr[0][1])) and np.all(np.isnan(arr[1][1]))
    out = np.empty(3)
    th.g_RT(*arr, 1000.0, out)
    assert np.isnan(out[1]) and np.isfinite(out[0]) and np.isfinite(out[2])
    # a reaction that does not involve the species is fine ...
    assert th.reaction_enthalpy_J_mol(np.array([-1.0, 0.0, 2.0]), 298.15, arr) > 0
    # ... one that needs it is refused
    with pytest.raises(ValueError, match="no thermo data for species at index"):
        th.equilibrium_constant_Kc(np.array([-1.0, 1.0, 0.0]), 1000.0, arr)


def test_reaction_enthalpy_of_o2_dissociation(arrays):
    names, arr = arrays
    # O2 -> 2 O at 298.15 K: 2 x 249.17 kJ/mol (value from memory of NIST-JANAF, Chase 1998,
    # Delta_f H(O) = 249.173 kJ/mol); temperatures as an array give an array
    dH = th.reaction_enthalpy_J_mol(_nu(names, O2=-1, O=2), np.array([298.15, 298.15]), arr)
    assert dH.shape == (2,)
    assert dH[0] == pytest.approx(2 * 249.173e3, abs=100.0)


# ------------------------------------------------------------------ validation errors


def _block(text):
    return parse_yaml(text, file="m.yaml")


GOOD = """\
T_ranges_K: [200.0, 1000.0, 6000.0]
low: [2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491]
high: [2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491]
"""


def test_parse_nasa7_accepts_a_good_block():
    coeffs, T_K = parse_nasa7(_block(GOOD), "m.yaml", "Ar", 7)
    assert coeffs.shape == (2, 7) and T_K.tolist() == [200.0, 1000.0, 6000.0]
    assert coeffs[1, 5] == -745.375


@pytest.mark.parametrize("text, line, words", [
    ("[1, 2, 3]", 7, "must be a mapping"),
    (GOOD + "mid: 3\n", 4, "unknown key 'mid'"),
    ("T_ranges_K: [200.0, 1000.0, 6000.0]\nlow: [2.5, 0, 0, 0, 0, -745.375, 4.3]\n", 7, "missing high"),
    (GOOD.replace("[200.0, 1000.0, 6000.0]", "[200.0, 6000.0]"), 1, "three finite numbers"),
    (GOOD.replace("[200.0, 1000.0, 6000.0]", "[200.0, 1000.0, .inf]"), 1, "three finite numbers"),
    (GOOD.replace("[200.0, 1000.0, 6000.0]", "[200.0, cold, 6000.0]"), 1, "three finite numbers"),
    (GOOD.replace("[200.0, 1000.0, 6000.0]", "[-200.0, 1000.0, 6000.0]"), 1, "positive temperatures"),
    (GOOD.replace("[200.0, 1000.0, 6000.0]", "[200.0, 6000.0, 1000.0]"), 1, "strictly increasing"),
    (GOOD.replace("low: [2.5, 0.0,", "low: [2.5,"), 2, "7 coefficients a1..a7, got 6"),
    (GOOD.replace("high: [2.5, 0.0,", "high: [2.5, .nan,"), 3, "coefficient nan is not a finite number"),
    (GOOD.replace("high: [2.5, 0.0,", "high: [2.5, x,"), 3, "is not a finite number"),
    (GOOD.replace("high: [2.5", "high: [4.5"), 7, "disagree at T_mid = 1000 K"),  # cp/R jumps by 2
])
def test_parse_nasa7_reports_each_problem_with_file_line_and_entry(text, line, words):
    with pytest.raises(InputError) as err:
        parse_nasa7(_block(text), "m.yaml", "Ar", 7)
    msg = str(err.value)
    assert f"m.yaml:{line}: Ar: " in msg, msg
    assert words in msg, msg
    assert len(msg.splitlines()) == 1


ENTRY = """\
  - name: Ar
    composition: {Ar: 1}
    charge: 0
    nasa7:
      T_ranges_K: [200.0, 1000.0, 6000.0]
      low: [2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491]
      high: [2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491]
    source: "a publication"
    provenance: taken
"""
HEAD = "title: test library\nspecies:\n"  # entry lines start at line 3


def _load(tmp_path, text):
    path = tmp_path / "lib.yaml"
    path.write_text(text, encoding="utf-8")
    return path, load_thermo_library(path)


def test_loader_reads_a_good_file_and_file_defaults(tmp_path):
    text = 'source: "default publication"\nprovenance: recalled\nspecies:\n' + \
        ENTRY.replace('    source: "a publication"\n', "").replace("    provenance: taken\n", "")
    _, recs = _load(tmp_path, text)
    rec = recs["Ar"]
    assert rec.source == "default publication" and rec.provenance == "recalled"
    assert rec.composition == {"Ar": 1} and rec.charge == 0 and rec.line == 4


@pytest.mark.parametrize("edit, line, entry, words", [
    (lambda t: t.replace("title: test library", "titel: x"), 1, "titel", "unknown key"),
    (lambda t: t.replace("provenance: taken", "provenance: guessed"), 11, "Ar", "provenance 'guessed' must be one of"),
    (lambda t: t.replace("    provenance: taken\n", ""), 3, "Ar", "missing provenance"),
    (lambda t: t.replace('    source: "a publication"\n', ""), 3, "Ar", "missing source"),
    (lambda t: t.replace("  - name: Ar\n", "  - name: ''\n"), 3, "species[0]", "missing name"),
    (lambda t: t + ENTRY, 12, "Ar", "duplicate species (first at line 3)"),
    (lambda t: t.replace("charge: 0", "charge: 0\n    phase: gas"), 6, "Ar", "unknown key 'phase'"),
    (lambda t: t.replace("    composition: {Ar: 1}\n", ""), 3, "Ar", "missing composition"),
    (lambda t: t.replace("{Ar: 1}", "{AR: 1}"), 4, "Ar", "'AR' is not an element symbol"),
    (lambda t: t.replace("{Ar: 1}", "{Ar: 1.5}"), 4, "Ar", "must be a non-zero integer"),
    (lambda t: t.replace("{Ar: 1}", "{Ar: -1}"), 4, "Ar", "count of Ar must be positive"),
    (lambda t: t.replace("{Ar: 1}", "[Ar]"), 4, "Ar", "composition must be a mapping"),
    (lambda t: t.replace("    charge: 0\n", ""), 3, "Ar", "missing charge"),
    (lambda t: t.replace("charge: 0", "charge: plus"), 5, "Ar", "charge must be an integer"),
    (lambda t: t.replace("charge: 0", "charge: 1"), 5, "Ar", "charge 1 does not match composition"),
    (lambda t: t.replace("{Ar: 1}", "{Ar: 1, E: -1}"), 5, "Ar", "charge 0 does not match composition (E: -1 means charge 1)"),
    (lambda t: t.split("    nasa7:")[0] + "    source: x\n    provenance: taken\n", 3, "Ar", "missing nasa7"),
    (lambda t: t.replace("low: [2.5, 0.0,", "low: [2.5,"), 8, "Ar", "got 6 values"),
    (lambda t: t.replace("6000.0]", "600.0]"), 7, "Ar", "strictly increasing"),
    (lambda t: t.replace("    provenance: taken\n", "    provenance: taken\n    note: [a]\n"), 12, "Ar", "note must be text"),
])
def test_loader_reports_each_problem_with_file_line_and_entry(tmp_path, edit, line, entry, words):
    path = tmp_path / "lib.yaml"
    path.write_text(edit(HEAD + ENTRY), encoding="utf-8")
    with pytest.raises(InputError) as err:
        load_thermo_library(path)
    msg = str(err.value)
    assert f"{path}:{line}: {entry}: " in msg, msg
    assert words in msg, msg


@pytest.mark.parametrize("text, words", [
    ("- just a list\n", "expected a mapping with a species list"),
    ("title: x\n", "species: missing or empty list"),
    ("provenance: guessed\nspecies:\n" + ENTRY, "provenance: must be one of taken, recalled, fitted"),
    ("species:\n  - 3\n", "species[0]: expected a mapping"),
])
def test_loader_reports_file_level_problems(tmp_path, text, words):
    path = tmp_path / "lib.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as err:
        load_thermo_library(path)
    assert str(path) in str(err.value) and words in str(err.value), str(err.value)


def test_loader_collects_problems_of_several_entries_and_missing_files(tmp_path):
    text = HEAD + ENTRY.replace("charge: 0", "charge: 2") + ENTRY.replace("name: Ar", "name: Ar2").replace("{Ar: 1}", "{Ar: 0}")
    path = tmp_path / "lib.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as err:
        load_thermo_library(path)
    assert len(err.value.problems) == 2
    assert f"{path}:5: Ar: charge 2" in err.value.problems[0]
    assert f"{path}:13: Ar2: composition: count of Ar" in err.value.problems[1]
    with pytest.raises(InputError, match="file not found"):
        load_thermo_library(tmp_path / "absent.yaml")
