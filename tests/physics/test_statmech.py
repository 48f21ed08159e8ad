"""Ideal-gas thermo from molecular constants (physics/statmech.py) and the fitted ion library.

Outside references, each named beside its check:
- analytic limits of the partition functions (Einstein and two-level functions, the
  Sackur-Tetrode entropy of argon in the shipped Burcat entry);
- independent computation: direct sums over rigid-rotor levels (numpy, in this file);
- the shipped Burcat & Ruscic (2005) entries of O2, CO, CO2, H2O, OH, O2+, H2
  (``mechanisms/thermo/nasa7.yaml``, copied from BURCAT_THR.xml), reproduced from their
  molecular constants (Huber & Herzberg 1979 and the NIST CCCBDB, see MOLECULES);
- the ``chemicals`` package (test extra): JANAF 1998 heat capacities and entropies of
  H2+ and O+, ATcT 1.112 enthalpies of formation of O+, CO+, CO2+, H2+, H3+, H2O+, O3-.

MOLECULES holds the molecular constants from which ``mechanisms/thermo/nasa7_fitted.yaml``
was fitted (the same numbers are listed in each entry's ``note``); ``ION_RECIPES`` the
published energies that give each ion's enthalpy of formation. Re-fitting from them must
reproduce the file.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from chemicals import heat_capacity as chem_cp
from chemicals.reaction import Hfg, S0g

from plasmazero.data.thermo_library import load_thermo_library, shipped_root, shipped_thermo_library
from plasmazero.physics import statmech as sm
from plasmazero.physics.statmech import RRHOModel, ion_mass_amu
from plasmazero.physics.thermo import EV_J_MOL, R_J_MOL_K

FITTED = shipped_root() / "thermo" / "nasa7_fitted.yaml"

# Standard atomic weights (IUPAC, common practice) for the translational masses; isotopic
# masses of 16O, 12C, 40Ar (Audi-Wapstra atomic mass evaluation, recalled) where a
# geometry gives the rotational constants.
H, C, O, AR = 1.00794, 12.0107, 15.9994, 39.948
O16, C12, AR40 = 15.9949146, 12.0, 39.9623831


def _linear(mass, B, sigma, vib, levels, weights=()):
    return RRHOModel(mass, (B,), sigma, tuple(vib), tuple(levels), tuple(weights))


def _rectangle_xyz(r_angstrom, d_angstrom):
    """Planar D2h X2.X2: two parallel X2 units of bond length r, centres d apart."""
    return np.array([[d_angstrom / 2, r_angstrom / 2, 0.0], [d_angstrom / 2, -r_angstrom / 2, 0.0],
                     [-d_angstrom / 2, r_angstrom / 2, 0.0], [-d_angstrom / 2, -r_angstrom / 2, 0.0]])


def _co3_xyz(r_angstrom):
    """Planar D3h XY3: C at the origin, three O at 120 degrees."""
    angles = np.radians([90.0, 210.0, 330.0])
    return np.vstack([[0.0, 0.0, 0.0]] + [[r_angstrom * math.cos(a), r_angstrom * math.sin(a), 0.0]
                                          for a in angles])


# Molecular constants, cm^-1 unless noted. Diatomics: fundamental Delta G(1/2) = we - 2 wexe
# and B0 = Be - ae/2 from Huber & Herzberg (1979), Constants of Diatomic Molecules (values
# from memory of it). "CCCBDB" = NIST Computational Chemistry Comparison and Benchmark
# Database, Release 22 (2022), experimental listings (taken from a stored copy of its pages).
MOLECULES = {
    # --- neutrals and library ions, for the validation and the 298.15 K increments
    # O2 X3Sg- (g 3), a1Dg 7918.1 (g 2), b1Sg+ 13195.1 (g 1); we 1580.19, wexe 11.98,
    # Be 1.44563, ae 0.0159 (Huber & Herzberg 1979, recalled)
    "O2": _linear(2 * O, 1.4377, 2, [(1556.2, 1)], [(0.0, 3), (7918.1, 2), (13195.1, 1)]),
    # CO X1S+: we 2169.81, wexe 13.29, Be 1.93128, ae 0.01750 (Huber & Herzberg, recalled)
    "CO": _linear(C + O, 1.92253, 1, [(2143.27, 1)], [(0.0, 1)]),
    # CO2: nu 1333, 667 (x2), 2349; B 0.39021 (CCCBDB, citing Herzberg 1945/1966; taken)
    "CO2": _linear(C + 2 * O, 0.39021, 2, [(1333.0, 1), (667.0, 2), (2349.0, 1)], [(0.0, 1)]),
    # H2O: nu 3657, 1595, 3756; A, B, C 27.877, 14.512, 9.285 (CCCBDB; taken)
    "H2O": RRHOModel(2 * H + O, (27.877, 14.512, 9.285), 2, ((3657.0, 1), (1595.0, 1), (3756.0, 1)),
                     ((0.0, 1),)),
    # OH X2Pi inverted: 2Pi3/2 (g 2), 2Pi1/2 at 139.2 (g 2); we 3737.76, wexe 84.88,
    # Be 18.911, ae 0.7242 (Huber & Herzberg, recalled)
    "OH": _linear(H + O, 18.55, 1, [(3568.0, 1)], [(0.0, 2), (139.2, 2)]),
    # O2+ X2Pig regular: 2Pi1/2 (g 2), 2Pi3/2 at 200.3 (g 2); a4Piu at 32964 (g 8);
    # we 1904.7, wexe 16.26, Be 1.6913, ae 0.0198 (Huber & Herzberg, recalled)
    "O2+": _linear(ion_mass_amu(2 * O, 1), 1.6814, 2, [(1872.2, 1)],
                   [(0.0, 2), (200.3, 2), (32964.0, 8)]),
    # H2 X1Sg+: we 4401.21, wexe 121.34, Be 60.853, ae 3.062 (Huber & Herzberg, recalled);
    # nuclear-spin weights 1 (even J), 3 (odd J) (McQuarrie 1976, section 6-5)
    "H2": _linear(2 * H, 59.322, 2, [(4161.17, 1)], [(0.0, 1)], (1, 3)),
    # O 3P2 (g 5), 3P1 158.265 (g 3), 3P0 226.977 (g 1), 1D2 15867.862 (g 5), 1S0
    # 33792.583 (g 1) (Moore 1976, NSRDS-NBS 3 sec. 7; NIST Atomic Spectra Database; recalled)
    "O": RRHOModel(O, (), 1, (), ((0.0, 5), (158.265, 3), (226.977, 1), (15867.862, 5),
                                  (33792.583, 1))),
    # O- 2P3/2 (g 4), 2P1/2 at 177.08 (g 2) (Neumark, Lykke, Andersen & Lineberger 1985,
    # Phys. Rev. A 32, 1890; recalled)
    "O-": RRHOModel(ion_mass_amu(O, -1), (), 1, (), ((0.0, 4), (177.08, 2))),
    # O3: nu 1103.14, 700.93, 1042.08; A, B, C 3.5537, 0.4453, 0.3948 (Herzberg 1966,
    # Electronic Spectra of Polyatomic Molecules, and later microwave work; recalled)
    "O3": RRHOModel(3 * O, (3.5537, 0.4453, 0.3948), 2, ((1103.14, 1), (700.93, 1), (1042.08, 1)),
                    ((0.0, 1),)),
    "Ar": RRHOModel(AR),
    # Ar+ 2P3/2 (g 4), 2P1/2 at 1431.58 (g 2) (NIST Atomic Spectra Database; recalled)
    "Ar+": RRHOModel(ion_mass_amu(AR, 1), (), 1, (), ((0.0, 4), (1431.58, 2))),
    # --- the fitted ions
    # O+ 4S3/2 (g 4), 2D5/2 26810.55 (g 6), 2D3/2 26830.57 (g 4), 2P3/2 40468.01 (g 4),
    # 2P1/2 40470.00 (g 2) (Moore 1976; NIST Atomic Spectra Database; recalled)
    "O+": RRHOModel(ion_mass_amu(O, 1), (), 1, (), ((0.0, 4), (26810.55, 6), (26830.57, 4),
                                                  (40468.01, 4), (40470.00, 2))),
    # CO+ X2S+: we 2214.24, wexe 15.16, Be 1.97720, ae 0.01896; A2Pi Te 20733.3 (g 4);
    # B2S+ Te 45876.7 (g 2) (Huber & Herzberg 1979, recalled)
    "CO+": _linear(ion_mass_amu(C + O, 1), 1.96772, 1, [(2183.9, 1)],
                   [(0.0, 2), (20733.3, 4), (45876.7, 2)]),
    # CO2+ X2Pig inverted: 2Pi3/2g (g 2), 2Pi1/2g at 159.5 (g 2); nu1 1244.3, nu2 511.4
    # (x2, Renner-Teller split, taken as one doubly degenerate bend), nu3 1423.08 (Jacox
    # 2003, J. Phys. Chem. Ref. Data 32, 1, recalled); B0 0.38195 (recalled); A2Piu at
    # 28500 (g 4) and B2Su+ at 34690 (g 2) from the photoelectron band origins 17.31 and
    # 18.08 eV above the neutral (Turner, Baker, Baker & Brundle 1970, Molecular
    # Photoelectron Spectroscopy, Wiley; recalled)
    "CO2+": _linear(ion_mass_amu(C + 2 * O, 1), 0.38195, 2, [(1244.3, 1), (511.4, 2), (1423.08, 1)],
                    [(0.0, 2), (159.5, 2), (28500.0, 4), (34690.0, 2)]),
    # H2+ X2Sg+: we 2321.7, wexe 66.2, Be 30.21, ae 1.68 (Huber & Herzberg 1979, recalled);
    # nuclear-spin weights 1 (even J), 3 (odd J) (McQuarrie 1976, section 6-5)
    "H2+": _linear(ion_mass_amu(2 * H, 1), 29.37, 2, [(2191.2, 1)], [(0.0, 2)], (1, 3)),
    # H3+ D3h, sigma 6: nu1 3178.3, nu2 2521.3 (x2); B0 43.56, C0 20.71 (Oka 1980, Phys.
    # Rev. Lett. 45, 531 for nu2; Lindsay & McCall 2001, J. Mol. Spectrosc. 210, 60; recalled)
    "H3+": RRHOModel(ion_mass_amu(3 * H, 1), (43.56, 43.56, 20.71), 6, ((3178.3, 1), (2521.3, 2)),
                     ((0.0, 1),)),
    # H2O+ X2B1: nu 3213, 1408, 3259 (CCCBDB, citing the NIST WebBook compilation of
    # Jacox); A, B, C 29.03590, 12.42298, 8.46921 (B0 of Huet, Pursell, Ho, Dinelli & Oka
    # 1992, J. Chem. Phys. 97, 5977, via CCCBDB; taken)
    "H2O+": RRHOModel(ion_mass_amu(2 * H + O, 1), (29.03590, 12.42298, 8.46921), 2,
                      ((3213.0, 1), (1408.0, 1), (3259.0, 1)), ((0.0, 2),)),
    # O3- X2B1: nu1 982, nu2 550 (Novick, Engelking, Jones, Futrell & Lineberger 1979, J.
    # Chem. Phys. 70, 2652; taken from its abstract), nu3 796 (neon matrix; gas phase below
    # 810; Lugez, Thompson & Jacox 1996, J. Chem. Phys.; taken from its abstract); geometry
    # r = 1.35 A, angle 116 deg (Franck-Condon analysis of Arnold, Xu, Kim & Neumark 1994,
    # J. Chem. Phys. 101, 912; recalled to about 0.02 A and 2 deg)
    "O3-": RRHOModel(ion_mass_amu(3 * O, -1),
                     sm.rotational_constants_cm1([O16] * 3, sm.bent_triatomic_xyz(1.35, 1.35, 116.0)), 2,
                     ((982.0, 1), (550.0, 1), (796.0, 1)), ((0.0, 2),)),
    # CO3-: planar D3h, sigma 6, r(CO) = 1.28 A (recalled, approximate). No gas-phase set
    # of fundamentals was at hand: the free carbonate dianion's nu1 1063, nu2 879, nu3
    # 1415 (x2), nu4 680 (x2) stand in (Nakamoto 1997, Infrared and Raman Spectra of
    # Inorganic and Coordination Compounds, 5th ed., Wiley; recalled). Ground state g 2.
    "CO3-": RRHOModel(ion_mass_amu(C + 3 * O, -1),
                      sm.rotational_constants_cm1([C12, O16, O16, O16], _co3_xyz(1.28)), 6,
                      ((1063.0, 1), (879.0, 1), (1415.0, 2), (680.0, 2)), ((0.0, 2),)),
    # Ar2+ I(1/2u) (X2Su+), g 2: we 307.0, wexe 2.05 (Signorell, Wuest & Merkt 1997, J. Chem.
    # Phys. 107, 10819; taken from its abstract); re = 2.42 A (Rupper & Merkt 2002, J. Chem.
    # Phys. 117, 4264; recalled)
    "Ar2+": _linear(ion_mass_amu(2 * AR, 1), sm.rotational_constants_cm1([AR40] * 2, [[0, 0, 0], [2.42, 0, 0]])[0],
                    2, [(302.9, 1)], [(0.0, 2)]),
    # O4+ rectangular D2h, sigma 4, quartet (g 4): the form of Peel 1991 (J. Chem. Phys. 94,
    # 5774) and of the neon-matrix assignment of Jacox & Thompson 1994 (J. Chem. Phys. 100,
    # 750), nearly isoenergetic with the trans form in Lindh & Barnes 1994 (stored abstracts).
    # Geometry ESTIMATED: r 1.165 A (mean of O2 and O2+, Huber & Herzberg, recalled), units
    # 2.3 A apart. O-O stretches 1320 (Jacox & Thompson 1994, taken from the abstract) and
    # 1629 = 2949 - 1320 (their combination band, our inference); the four intermolecular
    # modes as one wavenumber, 82, FITTED to the measured Delta_r S(293 K) = -20.6 cal/(mol K)
    # of O2+ + O2 -> O4+ (O4_ASSOCIATION below; test_o4_plus_association_entropy).
    "O4+": RRHOModel(ion_mass_amu(4 * O, 1), sm.rotational_constants_cm1([O16] * 4, _rectangle_xyz(1.165, 2.3)),
                     4, ((1629.0, 1), (1320.0, 1), (82.0, 4)), ((0.0, 4),)),
}

# The O2+ - O2 bond: van't Hoff plot of the equilibrium constant of O2+ + O2 = O4+ near
# 293 K, 'Bonding in ion clusters. I. O4+', J. Chem. Phys. (authors and year recalled as
# Yang & Conway 1964, J. Chem. Phys. 40, 1729): bond energy 0.42 eV and Delta_r S(293 K) =
# -20.6 cal/(mol K) (standard state 1 atm), both taken from the stored abstract. The bond
# energy is used as the dissociation enthalpy at 298.15 K.
O4_ASSOCIATION = {"bond_energy_eV": 0.42, "dS_cal_mol_K": -20.6, "T_K": 293.0}

# How each ion's enthalpy of formation at 298.15 K follows from published energies and the
# shipped (Burcat, taken) enthalpies of formation of its partners, thermal electron
# convention (mechanisms/thermo/README.md): (kind, energy, partners)
#   "ionization": M -> M+ + e, energy = adiabatic ionization energy;
#   "attachment": M + e -> M-, energy = electron affinity;
#   "association": A + B -> AB, energy = D0 (0 K bond energy);
#   "enthalpy": the reaction enthalpy at 298.15 K is given (H2 + H+ -> H3+: minus the
#   proton affinity).
ION_RECIPES = {
    # IE(O) = 109837.02 cm^-1 (NIST Atomic Spectra Database; recalled)
    "O+": ("ionization", 109837.02 * sm.CM1_TO_J_MOL, ("O",)),
    # IE(CO) = 14.0139 eV (NIST WebBook evaluated ion energetics, Lias; recalled)
    "CO+": ("ionization", 14.0139 * EV_J_MOL, ("CO",)),
    # IE(CO2) = 13.777 eV (NIST WebBook evaluated ion energetics, Lias; recalled)
    "CO2+": ("ionization", 13.777 * EV_J_MOL, ("CO2",)),
    # IE(H2) = 124417.49 cm^-1 (Liu, Salumbides, Hollenstein, Koelemeij, Eikema, Ubachs &
    # Merkt 2009, J. Chem. Phys. 130, 174306; recalled)
    "H2+": ("ionization", 124417.49 * sm.CM1_TO_J_MOL, ("H2",)),
    # IE(H2O) = 12.621 eV (NIST WebBook evaluated ion energetics, Lias; taken from a
    # stored copy of the page)
    "H2O+": ("ionization", 12.621 * EV_J_MOL, ("H2O",)),
    # EA(O3) = 2.1028 eV (Novick et al. 1979, J. Chem. Phys. 70, 2652; taken from its abstract)
    "O3-": ("attachment", 2.1028 * EV_J_MOL, ("O3",)),
    # D0(O- - CO2) = 2.79 eV (J. Chem. Phys. 124, 174302 (2006), doi 10.1063/1.2183303;
    # taken from its abstract; about 0.5 eV above the earlier values)
    "CO3-": ("association", 2.79 * EV_J_MOL, ("O-", "CO2")),
    # D0(Ar2+) = 10601.2 cm^-1 (Signorell, Wuest & Merkt 1997; taken from its abstract)
    "Ar2+": ("association", 10601.2 * sm.CM1_TO_J_MOL, ("Ar+", "Ar")),
    # proton affinity of H2, 422.3 kJ/mol at 298.15 K (Hunter & Lias 1998, J. Phys. Chem.
    # Ref. Data 27, 413; recalled)
    "H3+": ("enthalpy", -422.3e3, ("H2", "H+")),
    # O2+ + O2 -> O4+: minus the measured bond enthalpy (O4_ASSOCIATION)
    "O4+": ("enthalpy", -O4_ASSOCIATION["bond_energy_eV"] * EV_J_MOL, ("O2+", "O2")),
}

CHARGE = {"O+": 1, "CO+": 1, "CO2+": 1, "H2+": 1, "H2O+": 1, "O3-": -1, "CO3-": -1, "Ar2+": 1,
          "H3+": 1, "O4+": 1}
COMPOSITION = {"O+": {"O": 1}, "CO+": {"C": 1, "O": 1}, "CO2+": {"C": 1, "O": 2}, "H2+": {"H": 2},
               "H2O+": {"H": 2, "O": 1}, "O3-": {"O": 3}, "CO3-": {"C": 1, "O": 3},
               "Ar2+": {"Ar": 2}, "H3+": {"H": 3}, "O4+": {"O": 4}}


@pytest.fixture(scope="module")
def burcat():
    return load_thermo_library(shipped_thermo_library())


def burcat_h298(lib, name):
    """Delta_f H(298.15) of a shipped (Burcat & Ruscic 2005) entry, J/mol."""
    rec = lib[name]
    return float(sm.nasa7_evaluate(rec.nasa7_coeffs, rec.nasa7_T_K[1], np.array([298.15]))[1][0])


def ion_formation_enthalpy(name, lib):
    """Delta_f H(298.15) of a fitted ion from ION_RECIPES, J/mol (thermal electron convention)."""
    kind, energy, partners = ION_RECIPES[name]
    inc = sm.enthalpy_increment_J_mol
    if kind == "enthalpy":
        dH = energy
    elif kind == "ionization":
        (m,) = partners
        dH = sm.reaction_enthalpy_298_J_mol(energy, [(-1, inc(MOLECULES[m])), (1, inc(MOLECULES[name])),
                                                    (1, sm.ELECTRON_INCREMENT_J_MOL)])
    elif kind == "attachment":
        (m,) = partners
        dH = sm.reaction_enthalpy_298_J_mol(-energy, [(-1, inc(MOLECULES[m])), (-1, sm.ELECTRON_INCREMENT_J_MOL),
                                                     (1, inc(MOLECULES[name]))])
    else:
        dH = sm.reaction_enthalpy_298_J_mol(-energy, [(-1, inc(MOLECULES[p])) for p in partners]
                                            + [(1, inc(MOLECULES[name]))])
    others = [(-1, burcat_h298(lib, p)) for p in partners]
    if kind == "ionization":
        others.append((1, 0.0))          # the electron, zero enthalpy of formation
    elif kind == "attachment":
        others.append((-1, 0.0))
    return sm.formation_enthalpy_298_J_mol(dH, others)


def _props(model, T):
    cp, dh, s = sm.rrho_thermo(model, T)
    return float(cp) * R_J_MOL_K, float(s) * R_J_MOL_K


def _nasa(rec, T):
    cp, h, s = sm.nasa7_evaluate(rec.nasa7_coeffs, rec.nasa7_T_K[1], np.array([T]))
    return float(cp[0]) * R_J_MOL_K, float(h[0]), float(s[0]) * R_J_MOL_K


# ------------------------------------------------------------------ analytic limits


def test_oscillator_and_two_level_functions_are_analytic():
    # Einstein function (common practice, no source): one oscillator with theta = T gives
    # cp_vib/R = x^2 e^x / (e^x - 1)^2 at x = 1, i.e. 0.920674; the two-level (Schottky)
    # heat capacity of levels (0, g0), (E, g1) is (g1/g0) x^2 e^-x / (1 + (g1/g0) e^-x)^2.
    T = 1000.0
    nu = T / sm.CM1_TO_K
    atom = RRHOModel(10.0)
    osc = RRHOModel(10.0, (), 1, ((nu, 1),), ((0.0, 1),))
    cp0, _, _ = sm.rrho_thermo(atom, T)
    cp1, dh1, s1 = sm.rrho_thermo(osc, T)
    assert float(cp1 - cp0) == pytest.approx(math.e / (math.e - 1) ** 2, rel=1e-12)
    assert float(cp1 - cp0) == pytest.approx(0.920674, abs=1e-6)
    two = RRHOModel(10.0, (), 1, (), ((0.0, 2), (nu, 6)))
    cp2, dh2, s2 = sm.rrho_thermo(two, T)
    r = 3.0 * math.exp(-1.0)
    assert float(cp2 - cp0) == pytest.approx(r / (1 + r) ** 2, rel=1e-12)
    assert float(dh2 - 2.5) == pytest.approx(r / (1 + r), rel=1e-12)


def test_translation_reproduces_the_noble_gas_entries(burcat):
    # Sackur-Tetrode at 1 bar against the shipped Burcat entries of Ar and He (McBride et
    # al. 1963 / Moore 1971 via BURCAT_THR.xml): s(298.15) 154.845 and 126.153 J/(mol K)
    # from the entries themselves; standard atomic weights 39.948 and 4.002602 (IUPAC).
    for name, mass in (("Ar", AR), ("He", 4.002602)):
        cp, s = _props(RRHOModel(mass), 298.15)
        bcp, _, bs = _nasa(burcat[name], 298.15)
        assert cp == pytest.approx(bcp, rel=1e-9)
        assert s == pytest.approx(bs, abs=0.01)
    # the electron: spin degeneracy 2, s(298.15) = 20.98 J/(mol K) (README, JANAF convention)
    _, s_e = _props(RRHOModel(sm.ELECTRON_MASS_AMU, (), 1, (), ((0.0, 2),)), 298.15)
    assert s_e == pytest.approx(_nasa(burcat["e"], 298.15)[2], abs=0.01)


# ------------------------------------------------------------------ rotor expansions


def _level_sum(energies_K, weights, T):
    """ln q, T dlnq/dT and d(T^2 dlnq/dT)/dT from a direct sum over levels (independent)."""
    x = energies_K / T
    w = weights * np.exp(-x)
    q = w.sum()
    m1 = (w * x).sum() / q
    m2 = (w * x * x).sum() / q
    return math.log(q), m1, m2 - m1 * m1


@pytest.mark.parametrize("B_cm1, T", [(1.92253, 200.0), (18.55, 200.0), (18.55, 1000.0), (59.3, 300.0)])
def test_linear_rotor_expansion_against_level_sum(B_cm1, T):
    # Independent computation: sum over J of (2J+1) exp(-B J(J+1) hc/kT) for a
    # heteronuclear rigid rotor, against the expansion of Mulholland (1928) used by
    # statmech. Measured: 1e-9 (CO at 200 K) to 2.6e-4 (cp/R at T/Theta = 3.5, H2-like).
    J = np.arange(0, 3000)
    ref = _level_sum(B_cm1 * sm.CM1_TO_K * J * (J + 1.0), 2 * J + 1.0, T)
    got = sm._linear_rotor(B_cm1 * sm.CM1_TO_K, 1, np.array([T]))
    for a, b in zip(got, ref):
        assert float(a[0]) == pytest.approx(b, abs=5e-4)


@pytest.mark.parametrize("T", [200.0, 298.15, 1000.0])
def test_symmetric_top_correction_against_level_sum(T):
    # Independent computation: oblate symmetric top E = B J(J+1) + (C - B) K^2, weights
    # (2J+1)(2 - delta_K0), divided by sigma = 6, with the H3+ constants (rigid, no
    # nuclear-spin restrictions), against the Stripp & Kirkwood (1951) expansion.
    # Measured at 200, 298.15, 1000 K: ln q off by 2.4e-3, 1.1e-3, 1e-4 and T dlnq/dT and
    # cp_rot/R by 4.7e-3, 2.2e-3, 2e-4 (the next term of the expansion).
    B, Cc = 43.56, 20.71
    J = np.arange(0, 120)
    e, w = [], []
    for j in J:
        for k in range(0, j + 1):
            e.append((B * j * (j + 1) + (Cc - B) * k * k) * sm.CM1_TO_K)
            w.append((2 * j + 1) * (1 if k == 0 else 2) / 6.0)
    ref = _level_sum(np.array(e), np.array(w), T)
    got = sm._nonlinear_rotor(tuple(b * sm.CM1_TO_K for b in (B, B, Cc)), 6, np.array([T]))
    for a, b in zip(got, ref):
        assert float(a[0]) == pytest.approx(b, abs=6e-3)
    # without the correction the classical value would be off by much more at 200 K
    if T == 200.0:
        classical = 0.5 * math.log(math.pi) - math.log(6) + 1.5 * math.log(T) - 0.5 * math.log(
            (B * sm.CM1_TO_K) ** 2 * Cc * sm.CM1_TO_K)
        assert abs(classical - ref[0]) > 10 * abs(float(got[0][0]) - ref[0])


def test_homonuclear_level_sum_matches_sigma_two_at_high_temperature():
    # Analytic limit (McQuarrie 1976, section 6-5): for T >> Theta_rot an equilibrium
    # ortho-para mixture with weights (1, 3), divided by 4, equals the sigma = 2 rotor.
    T = np.array([2000.0])
    a = sm._linear_rotor_sum(29.37, (1, 3), T)
    b = sm._linear_rotor(29.37 * sm.CM1_TO_K, 2, T)
    for x, y in zip(a, b):
        assert float(x[0]) == pytest.approx(float(y[0]), abs=1e-5)


# ------------------------------------------------------------------ Burcat entries


# RRHO against the shipped Burcat entries (which include anharmonicity and coupling):
# tolerances hold what RRHO can do, measured: cp at 298.15 K within 0.35 % (H2O -0.32 %,
# H2 -0.31 %), at 1000 K within 1.1 % (H2 -1.02 %, OH -0.67 %); s at 298.15 K within
# 0.11 J/(mol K), at 1000 K within 0.33 J/(mol K) (H2).
BURCAT_CHECKS = ("O2", "CO", "CO2", "H2O", "OH", "O2+", "H2")


@pytest.mark.parametrize("name", BURCAT_CHECKS)
def test_rrho_reproduces_burcat_entries(burcat, name):
    model = MOLECULES[name]
    for T, cp_rel, s_abs in ((298.15, 4e-3, 0.15), (1000.0, 1.2e-2, 0.4)):
        cp, s = _props(model, T)
        bcp, _, bs = _nasa(burcat[name], T)   # Burcat & Ruscic (2005), shipped nasa7.yaml
        assert cp == pytest.approx(bcp, rel=cp_rel), (name, T)
        assert s == pytest.approx(bs, abs=s_abs), (name, T)
    # enthalpy increment 298.15 -> 1000 K: measured 0.06 % (CO2) to 0.39 % (H2O) low, H2
    # 0.73 % low (anharmonicity and centrifugal stretching)
    dh = sm.enthalpy_increment_J_mol(model, 1000.0) - sm.enthalpy_increment_J_mol(model, 298.15)
    bdh = _nasa(burcat[name], 1000.0)[1] - _nasa(burcat[name], 298.15)[1]
    assert dh == pytest.approx(bdh, rel=1e-2 if name == "H2" else 5e-3)


def test_anharmonicity_shows_at_high_temperature(burcat):
    # The limit of the model, stated in the module docstring: at 3000 K RRHO cp of H2O is
    # 4.9 % below the Burcat entry (measured), far above the fit errors.
    cp, _ = _props(MOLECULES["H2O"], 3000.0)
    bcp = _nasa(burcat["H2O"], 3000.0)[0]
    assert 0.02 < 1 - cp / bcp < 0.08


# ------------------------------------------------------------------ ions against chemicals

JANAF_IONS = {"H2+": "12184-90-6", "O+": "14581-93-2"}   # CAS numbers in chemicals


@pytest.mark.parametrize("name", sorted(JANAF_IONS))
def test_ions_against_janaf_in_chemicals(name):
    cas = JANAF_IONS[name]
    T_tab, cp_tab = chem_cp.Cp_dict_JANAF_gas[cas]   # JANAF 1998 (Chase 1998) via chemicals
    model = MOLECULES[name]
    # cp of O+: an atom, levels only: equal to the table's digits (measured < 0.001 %).
    # cp of H2+ is where RRHO fails: measured -0.55 % at 298.15 K (centrifugal stretching,
    # about 4 kT D/B^2 in cp_rot/R with D = 0.02 cm^-1), -2.75 % at 1000 K, -7 % at 2000 K
    # and -15 % at 4000 K (anharmonicity: D0 is only 2.65 eV). Stated in the README.
    tolerances = {"H2+": ((298.15, 8e-3), (1000.0, 3.5e-2)), "O+": ((298.15, 1e-4), (4000.0, 1e-4))}
    for T, tol in tolerances[name]:
        cp, _ = _props(model, T)
        assert cp == pytest.approx(cp_tab[T_tab.index(T)], rel=tol), (name, T)
    if name == "H2+":
        cp, _ = _props(model, 4000.0)
        assert 0.1 < 1 - cp / cp_tab[T_tab.index(4000.0)] < 0.2
    # entropy at 298.15 K: JANAF 1998 in chemicals, 142.37 (H2+) and 154.959 (O+) J/(mol K);
    # measured differences -0.21 and 0.001 J/(mol K)
    _, s = _props(model, 298.15)
    assert s == pytest.approx(S0g(cas, method="JANAF"), abs=0.3 if name == "H2+" else 0.01)


# ATcT 1.112 as shipped in chemicals (stationary electron convention); CAS numbers
ATCT_IONS = {"O+": "14581-93-2", "CO+": "12144-04-6", "CO2+": "12181-61-2", "H2+": "12184-90-6",
             "H3+": "28132-48-1", "H2O+": "56583-62-1", "O3-": "12596-80-4"}
# measured |ours - ATcT - charge x 5/2 R T|: O+ 0.06, CO+ 0.02, CO2+ 0.07, H2+ 0.01, H2O+
# 0.32, O3- 0.13, H3+ 1.04 kJ/mol (H3+ rests on the 1998 proton affinity of H2)
ATCT_TOL_J_MOL = {"H3+": 1.5e3, "H2O+": 0.5e3}


@pytest.mark.parametrize("name", sorted(ATCT_IONS))
def test_ion_formation_enthalpies_against_atct(burcat, name):
    h = ion_formation_enthalpy(name, burcat)
    shift = CHARGE[name] * sm.ELECTRON_INCREMENT_J_MOL     # README: thermal electron convention
    assert h == pytest.approx(Hfg(ATCT_IONS[name], method="ATCT_G") + shift,
                              abs=ATCT_TOL_J_MOL.get(name, 0.2e3))


def test_formation_enthalpy_route_reproduces_library_ions(burcat):
    # The same route applied to ions the library has (Burcat, taken): Ar+ from IE(Ar) =
    # 127109.84 cm^-1 (NIST Atomic Spectra Database, recalled) and O- from EA(O) =
    # 11784.676 cm^-1 (Blondel et al. 2001, recalled). Measured: Ar+ 0.008, O- 0.18 kJ/mol
    # (the O- entry is Gurvich 1989's older value).
    inc = sm.enthalpy_increment_J_mol
    e = sm.ELECTRON_INCREMENT_J_MOL
    dH = sm.reaction_enthalpy_298_J_mol(127109.84 * sm.CM1_TO_J_MOL,
                                        [(-1, inc(MOLECULES["Ar"])), (1, inc(MOLECULES["Ar+"])), (1, e)])
    assert sm.formation_enthalpy_298_J_mol(dH, [(-1, 0.0), (1, 0.0)]) == pytest.approx(
        burcat_h298(burcat, "Ar+"), abs=50.0)
    dH = sm.reaction_enthalpy_298_J_mol(-11784.676 * sm.CM1_TO_J_MOL,
                                        [(-1, inc(MOLECULES["O"])), (-1, e), (1, inc(MOLECULES["O-"]))])
    assert sm.formation_enthalpy_298_J_mol(dH, [(-1, burcat_h298(burcat, "O")), (-1, 0.0)]) == pytest.approx(
        burcat_h298(burcat, "O-"), abs=400.0)


# ------------------------------------------------------------------ fitting


def test_fit_recovers_a_polynomial_table(burcat):
    # Internal consistency: a table made from one smooth set of coefficients (the low
    # range of the Burcat CO2 entry, used over 200-6000 K) is reproduced to round-off.
    a = burcat["CO2"].nasa7_coeffs[0]
    coeffs = np.array([a, a])
    T = sm.default_fit_grid()
    cp, h, s = sm.nasa7_evaluate(coeffs, 1000.0, T)
    fit = sm.fit_nasa7(T, cp, h, s, minimax_iterations=0)
    pcp, ph, ps = sm.nasa7_evaluate(fit, 1000.0, T)
    assert np.max(np.abs(pcp / cp - 1)) < 1e-8
    assert np.max(np.abs(ph - h)) < 1e-3
    assert np.max(np.abs(ps - s)) < 1e-9


@pytest.fixture(scope="module")
def fitted():
    return load_thermo_library(FITTED)


# Largest fit errors against the RRHO table over 200-6000 K (measured when the file was
# written; a NASA-7 pair cannot follow these tables closer: see mechanisms/thermo/README.md)
FIT_LIMITS = {"O+": (1.0e-3, 3.0), "Ar2+": (3.0e-3, 3.5)}
FIT_LIMIT_DEFAULT = (9.0e-3, 50.0)


@pytest.mark.parametrize("name", sorted(ION_RECIPES))
def test_fitted_entries_reproduce_their_molecular_data(burcat, fitted, name):
    rec = fitted[name]
    assert rec.provenance == "fitted"
    assert rec.charge == CHARGE[name]
    assert {k: v for k, v in rec.composition.items() if k != "E"} == COMPOSITION[name]
    assert rec.composition.get("E", 0) == -CHARGE[name]
    assert list(rec.nasa7_T_K) == [200.0, 1000.0, 6000.0]
    model = MOLECULES[name]
    h298 = ion_formation_enthalpy(name, burcat)
    # h(298.15 K) is the enthalpy of formation, to the printed digits
    assert _nasa(rec, 298.15)[1] == pytest.approx(h298, abs=0.05)
    # the file's polynomials equal a re-fit from MOLECULES and ION_RECIPES
    coeffs, errors = sm.nasa7_from_rrho(model, h298)
    T = np.arange(200.0, 6000.1, 50.0)
    a = sm.nasa7_evaluate(rec.nasa7_coeffs, 1000.0, T)
    b = sm.nasa7_evaluate(coeffs, 1000.0, T)
    assert np.max(np.abs(a[0] / b[0] - 1)) < 1e-6
    assert np.max(np.abs(a[1] - b[1])) < 0.1
    # fit errors against the RRHO table
    cp_lim, h_lim = FIT_LIMITS.get(name, FIT_LIMIT_DEFAULT)
    errors = sm.nasa7_fit_errors(rec.nasa7_coeffs, rec.nasa7_T_K, model, h298)
    assert errors["cp_rel"] < cp_lim and errors["h_J_mol"] < h_lim, errors
    assert errors["s_J_mol_K"] < 0.05


def _numbers(text):
    return {float(x) for x in re.findall(r"(?<![\w.])-?\d+(?:\.\d+)?(?:e-?\d+)?", text)}


@pytest.mark.parametrize("name", sorted(ION_RECIPES))
def test_fitted_notes_list_every_constant(fitted, name):
    # provenance rule: the note records every molecular constant of the fit
    rec = fitted[name]
    found = _numbers(rec.note)
    model = MOLECULES[name]
    wanted = [nu for nu, _ in model.vibrations_cm1] + [e for e, _ in model.electronic_levels_cm1[1:]]
    if name not in ("O3-", "CO3-", "Ar2+", "O4+"):        # these give a geometry instead
        wanted += list(model.rotational_constants_cm1)
    wanted.append(model.symmetry_number)
    for value in wanted:
        assert any(abs(v - value) < 1e-9 * max(1.0, abs(value)) for v in found), (name, value)
    assert "recalled" in rec.note or "taken" in rec.note
    assert "statmech" in rec.source or "statmech" in rec.note


# ------------------------------------------------------------------ O4+ (the O2+ - O2 cluster)


def test_o4_plus_reproduces_its_stated_formation_enthalpy(burcat, fitted):
    # The entry's note states Delta_f H(298.15) to 1 J/mol; the polynomials must give it, and
    # it must follow from the published bond energy and the Burcat O2+ and O2 entries
    # (Delta_f H(O2+) + Delta_f H(O2) - 0.42 eV, Hess's law, common practice).
    rec = fitted["O4+"]
    stated = re.search(r"Delta_f H\(298\.15\) = (-?\d+\.\d+) kJ/mol", rec.note)
    assert stated, rec.note
    h = _nasa(rec, 298.15)[1]
    assert h == pytest.approx(float(stated.group(1)) * 1e3, abs=0.5)
    expected = (burcat_h298(burcat, "O2+") + burcat_h298(burcat, "O2")
                - O4_ASSOCIATION["bond_energy_eV"] * EV_J_MOL)
    assert h == pytest.approx(expected, abs=1.0)


def test_o4_plus_dissociation_enthalpy_is_the_published_bond_energy(burcat, fitted):
    # O4+ -> O2+ + O2 at 298.15 K from the polynomials (O2+ and O2: Burcat & Ruscic 2005 in
    # nasa7.yaml) against the measured O2+ - O2 bond energy, 0.42 eV (van't Hoff plot near
    # 293 K, 'Bonding in ion clusters. I. O4+', taken from the stored abstract). The 0.05 eV
    # of the check is the spread expected between such measurements (the later pulsed
    # high-pressure mass spectrometry of Hiraoka 1988, J. Chem. Phys. 89, 3190, re-measured
    # the equilibrium; its number is not at hand).
    dH = _nasa(burcat["O2+"], 298.15)[1] + _nasa(burcat["O2"], 298.15)[1] - _nasa(fitted["O4+"], 298.15)[1]
    assert dH / EV_J_MOL == pytest.approx(O4_ASSOCIATION["bond_energy_eV"], abs=0.05)
    # and it stays near the van't Hoff value over 250-350 K (measured: 0.416-0.424 eV),
    # as a van't Hoff enthalpy should over the range of such a plot
    for T in (250.0, 350.0):
        dH = _nasa(burcat["O2+"], T)[1] + _nasa(burcat["O2"], T)[1] - _nasa(fitted["O4+"], T)[1]
        assert dH / EV_J_MOL == pytest.approx(O4_ASSOCIATION["bond_energy_eV"], abs=0.01)


def test_o4_plus_association_entropy(burcat, fitted):
    # Delta_r S(293 K) of O2+ + O2 -> O4+ = -20.6 cal/(mol K) at 1 atm (same abstract), i.e.
    # -86.30 J/(mol K) at 1 bar (Delta n = -1: minus R ln(1.01325)). The four intermolecular
    # wavenumbers were FITTED to this value, so this checks the fit and the standard-state
    # conversion, not the model; the independent check of the entropy is the Kossyi et al.
    # rate pair in tests/mechanisms/test_argon_oxygen.py.
    T = O4_ASSOCIATION["T_K"]
    target = O4_ASSOCIATION["dS_cal_mol_K"] * 4.184 - R_J_MOL_K * math.log(1.01325)
    dS = _nasa(fitted["O4+"], T)[2] - _nasa(burcat["O2+"], T)[2] - _nasa(burcat["O2"], T)[2]
    assert dS == pytest.approx(target, abs=0.5)
    # a rigid complex with intermolecular modes near 200 cm^-1 would miss it by far
    # (measured -114.9 J/(mol K)): the measurement asks for a loose complex
    stiff = RRHOModel(MOLECULES["O4+"].mass_amu, MOLECULES["O4+"].rotational_constants_cm1, 4,
                      ((1629.0, 1), (1320.0, 1), (200.0, 4)), ((0.0, 4),))
    dS_stiff = _props(stiff, T)[1] - _nasa(burcat["O2+"], T)[2] - _nasa(burcat["O2"], T)[2]
    assert dS_stiff < target - 20.0
