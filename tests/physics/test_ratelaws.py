"""Rate-law kernels against the published closed form of each law.

Every expected value is computed in the test itself from the formula of the publication
named beside it (never through plasmazero), or is a tabulated value named with its source.
Tolerances: 1e-12 relative where the kernel and the test evaluate the same closed form
(round-off only); the rounding of the table where a tabulated value is compared.
"""

import math

import numpy as np
import pytest
import scipy.constants as sc

from plasmazero.data.shipped import shipped_root
from plasmazero.physics import ratelaws as rl
from plasmazero.physics.compiled import evaluate_rate_coefficients, load_compiled_mechanism

LIBRARY = shipped_root() / "thermo" / "nasa7.yaml"
TEMPERATURES_K = (200.0, 298.15, 300.0, 700.0, 1500.0, 3000.0)
# Te = (2/3) <eps> / k_B with CODATA constants from scipy (independent of plasmazero)
EV_K = sc.e / sc.k


def _mechanism(tmp_path, species, reactions, units="{rate_coefficient: cm^3/s, activation: K}",
               extra=""):
    text = f"""
name: test
units: {units}
elements: [O, H, Ar, E]
thermo_library: {LIBRARY}
{extra}
species:
{species}
reactions:
{reactions}
"""
    path = tmp_path / "m.yaml"
    path.write_text(text)
    return load_compiled_mechanism(path)


SPECIES = """
  - {name: e, composition: {E: 1}, charge: -1}
  - {name: Ar, composition: {Ar: 1}}
  - {name: O, composition: {O: 1}}
  - {name: O2, composition: {O: 2}}
  - {name: O3, composition: {O: 3}}
  - {name: H, composition: {H: 1}}
  - {name: H2, composition: {H: 2}}
  - {name: OH, composition: {O: 1, H: 1}}
  - {name: H2O, composition: {O: 1, H: 2}}
  - {name: O2(a), state_of: O2, energy_eV: 0.98}
"""


def _k(mech, T, **kw):
    k, dk = evaluate_rate_coefficients(mech, T, **kw)
    return k, dk


# --------------------------------------------------------------------------- Arrhenius


def test_arrhenius_closed_form_at_several_temperatures(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, """
  - equation: O + O3 => O2 + O2
    rate: {arrhenius: {A: 8.0e-12, b: 0.7, Ea: 2060}}
    source: test
  - equation: H + O2 + M => OH + O + M
    rate: {arrhenius: {A: 1.0e-32, b: -1.3, Ea: -150}}
    source: test
""")
    for T in TEMPERATURES_K:
        k, dk = _k(mech, T)
        # modified Arrhenius form, reference 300 K (plasma-chemistry convention, common
        # practice, no source); cm^3/s -> m^3/s is 1e-6, cm^6/s -> m^6/s is 1e-12
        assert k[0] == pytest.approx(8.0e-12 * 1e-6 * (T / 300) ** 0.7 * math.exp(-2060 / T), rel=1e-12)
        assert k[1] == pytest.approx(1.0e-32 * 1e-12 * (T / 300) ** -1.3 * math.exp(150 / T), rel=1e-12)
        assert np.all(dk == 0.0)


@pytest.mark.parametrize("A, Ea_K, k298", [
    # O + O3 -> 2 O2: k = 8.0e-12 exp(-2060/T), k(298 K) = 8.0e-15 cm^3/s
    # (value from memory of Atkinson et al. 2004, Atmos. Chem. Phys. 4, 1461, Ox data sheets)
    (8.0e-12, 2060.0, 8.0e-15),
    # OH + H2 -> H2O + H: k = 7.7e-12 exp(-2100/T), k(298 K) = 6.7e-15 cm^3/s
    # (value from memory of Atkinson et al. 2004, Atmos. Chem. Phys. 4, 1461, HOx data sheets)
    (7.7e-12, 2100.0, 6.7e-15),
])
def test_recommended_arrhenius_expression_reproduces_its_tabulated_298K_value(tmp_path, A, Ea_K, k298):
    eq = "O + O3 => O2 + O2" if Ea_K == 2060.0 else "OH + H2 => H2O + H"
    mech = _mechanism(tmp_path, SPECIES, f"""
  - equation: {eq}
    rate: {{arrhenius: {{A: {A}, b: 0, Ea: {Ea_K}}}}}
    source: test
""")
    k, _ = _k(mech, 298.0)
    # the table gives two significant figures: 1 % covers its rounding
    assert k[0] == pytest.approx(k298 * 1e-6, rel=0.01)


def test_activation_energy_units_convert_to_kelvin(tmp_path):
    # Ea_K = Ea / R (J/mol) or Ea e / k_B (eV), CODATA values from scipy.constants;
    # 1 kcal = 4184 J (thermochemical calorie, common practice, no source)
    cases = {"kJ/mol": 1e3 / sc.R, "J/mol": 1.0 / sc.R, "kcal/mol": 4184.0 / sc.R,
             "cal/mol": 4.184 / sc.R, "eV": EV_K, "K": 1.0}
    for unit, factor in cases.items():
        mech = _mechanism(tmp_path, SPECIES, """
  - equation: O + O3 => O2 + O2
    rate: {arrhenius: {A: 1.0, b: 0, Ea: 2.5}}
    source: test
""", units=f"{{rate_coefficient: m^3/s, activation: {unit}}}")
        k, _ = _k(mech, 800.0)
        assert k[0] == pytest.approx(math.exp(-2.5 * factor / 800.0), rel=1e-12), unit


@pytest.mark.parametrize("units, n_reactants, factor", [
    # bimolecular cm^3/s -> m^3/s: 1e-6 (common practice, no source)
    ("{rate_coefficient: cm^3/s}", 2, 1e-6),
    ("{density: cm^-3}", 2, 1e-6),
    # termolecular cm^6/s -> m^6/s: 1e-12
    ("{rate_coefficient: cm^3/s}", 3, 1e-12),
    # unimolecular s^-1 unchanged
    ("{rate_coefficient: cm^3/s}", 1, 1.0),
    # per mole: cm^3/(mol s) -> m^3/s is 1e-6 / N_A (N_A from scipy.constants, CODATA)
    ("{rate_coefficient: cm^3/(mol s)}", 2, 1e-6 / sc.N_A),
    ("{density: mol/cm^3}", 3, (1e-6 / sc.N_A) ** 2),
    ("{rate_coefficient: m^3/(mol s)}", 2, 1.0 / sc.N_A),
    ("{rate_coefficient: m^3/s}", 3, 1.0),
])
def test_rate_coefficient_units_convert_by_molecularity(tmp_path, units, n_reactants, factor):
    eq = {1: "O3 => O2 + O", 2: "O + O3 => O2 + O2", 3: "O + O2 + M => O3 + M"}[n_reactants]
    mech = _mechanism(tmp_path, SPECIES, f"""
  - equation: {eq}
    rate: {{arrhenius: {{A: 2.0, b: 0, Ea: 0}}}}
    source: test
""", units=units)
    k, _ = _k(mech, 300.0)
    assert k[0] == pytest.approx(2.0 * factor, rel=1e-12)


# --------------------------------------------------------------------------- electron temperature


def test_electron_arrhenius_uses_te_from_mean_energy(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, """
  - equation: e + O2 => O + O + e
    rate: {electron_arrhenius: {A: 2.0e-9, b: 0.5, Ea: 60000}}
    source: test
""")
    for eps in (0.3, 1.0, 4.0, 12.0):
        Te = 2.0 / 3.0 * eps * EV_K  # Maxwellian temperature of the mean energy (common practice, no source)
        k, _ = _k(mech, 400.0, mean_energy_eV=eps)
        assert k[0] == pytest.approx(2.0e-15 * (Te / 300) ** 0.5 * math.exp(-60000 / Te), rel=1e-12)
    # without a mean energy, Te_K is used as given
    k, _ = _k(mech, 400.0, Te_K=25000.0)
    assert k[0] == pytest.approx(2.0e-15 * (25000 / 300) ** 0.5 * math.exp(-60000 / 25000), rel=1e-12)


def test_expression_law_sees_the_same_state_as_closed_forms(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, """
  - equation: O + O3 => O2 + O2
    rate: {expression: "8.0e-12 * (Tg/300)**0.7 * exp(-2060/Tg)"}
    source: test
  - equation: e + O2 => O + O + e
    rate: {expression: "2.0e-9 * sqrt(Te/300) * exp(-60000/Te) + 0 * E_N_Td * mean_energy_eV"}
    source: test
  - equation: e + H2 => H + H + e
    rate: {expression: "1e-9 * E_N_Td / 100 * mean_energy_eV"}
    source: test
""")
    for T, eps, en in ((300.0, 1.0, 50.0), (1200.0, 5.0, 300.0)):
        Te = 2.0 / 3.0 * eps * EV_K
        k, _ = _k(mech, T, mean_energy_eV=eps, E_N_Td=en)
        assert k[0] == pytest.approx(8.0e-18 * (T / 300) ** 0.7 * math.exp(-2060 / T), rel=1e-12)
        assert k[1] == pytest.approx(2.0e-15 * (Te / 300) ** 0.5 * math.exp(-60000 / Te), rel=1e-12)
        assert k[2] == pytest.approx(1e-15 * en / 100 * eps, rel=1e-12)


# --------------------------------------------------------------------------- falloff


def _troe_F(T, Pr, alpha, T3, T1, T2):
    """Broadening factor, Gilbert, Luther & Troe 1983, Ber. Bunsenges. Phys. Chem. 87, 169
    (the form as recalled from memory of that paper; written out here independently)."""
    Fcent = (1 - alpha) * math.exp(-T / T3) + alpha * math.exp(-T / T1)
    if T2 is not None:
        Fcent += math.exp(-T2 / T)
    c = -0.4 - 0.67 * math.log10(Fcent)
    n = 0.75 - 1.27 * math.log10(Fcent)
    d = 0.14
    x = math.log10(Pr)
    return 10 ** (math.log10(Fcent) / (1 + ((x + c) / (n - d * (x + c))) ** 2))


FALLOFF = """
  - equation: O + O2 (+M) => O3 (+M)
    rate:
      falloff:
        low: {A: 6.0e-34, b: -2.5, Ea: 0}
        high: {A: 3.0e-11, b: 0.2, Ea: 50}
    source: test
  - equation: H + O2 (+M) => OH + O (+M)
    rate:
      falloff:
        low: {A: 6.0e-34, b: -2.5, Ea: 0}
        high: {A: 3.0e-11, b: 0.2, Ea: 50}
        troe: {alpha: 0.6, T3: 100, T1: 1500, T2: 5000}
    source: test
  - equation: H + H (+M) => H2 (+M)
    rate:
      falloff:
        low: {A: 2.0e-31, b: -1.0, Ea: 0}
        high: {A: 1.0e-10, b: 0, Ea: 0}
        troe: {alpha: 0.3, T3: 200, T1: 900}
    source: test
"""


def test_lindemann_and_troe_against_gilbert_luther_troe_1983(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, FALLOFF)
    for T in (250.0, 300.0, 800.0, 2000.0):
        for nM in (1e18, 1e22, 2.5e25, 1e28):
            k, _ = _k(mech, T, n_M_m3=nM)
            # Lindemann 1922 (Trans. Faraday Soc. 17, 598): k = k_inf Pr/(1+Pr), Pr = k0 [M]/k_inf
            k0 = 6.0e-34 * 1e-12 * (T / 300) ** -2.5
            kinf = 3.0e-11 * 1e-6 * (T / 300) ** 0.2 * math.exp(-50 / T)
            Pr = k0 * nM / kinf
            assert k[0] == pytest.approx(kinf * Pr / (1 + Pr), rel=1e-12)
            assert k[1] == pytest.approx(kinf * Pr / (1 + Pr) * _troe_F(T, Pr, 0.6, 100, 1500, 5000), rel=1e-12)
            k0 = 2.0e-31 * 1e-12 * (T / 300) ** -1.0
            kinf = 1.0e-10 * 1e-6
            Pr = k0 * nM / kinf
            assert k[2] == pytest.approx(kinf * Pr / (1 + Pr) * _troe_F(T, Pr, 0.3, 200, 900, None), rel=1e-12)


def test_falloff_limits(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, FALLOFF)
    T = 300.0
    k0 = np.array([6.0e-46, 6.0e-46, 2.0e-43])
    kinf = np.array([3.0e-17 * math.exp(-50 / T), 3.0e-17 * math.exp(-50 / T), 1.0e-16])
    # low-pressure limit: k -> k0 [M] F(Pr -> 0) with log10 F -> log10 Fcent / (1 + 1/d^2)
    # (limit of the Gilbert et al. 1983 form, derived in this comment: f -> -1/d)
    nM = 1e10
    k, dk = _k(mech, T, n_M_m3=nM)
    Fc1 = 0.4 * math.exp(-T / 100) + 0.6 * math.exp(-T / 1500) + math.exp(-5000 / T)
    Fc2 = 0.7 * math.exp(-T / 200) + 0.3 * math.exp(-T / 900)
    F0 = np.array([1.0, Fc1 ** (1 / (1 + 1 / 0.14 ** 2)), Fc2 ** (1 / (1 + 1 / 0.14 ** 2))])
    assert k == pytest.approx(k0 * nM * F0, rel=1e-6)
    assert dk == pytest.approx(k0 * F0, rel=1e-6)
    # high-pressure limit of the Lindemann form: k -> k_inf
    k, _ = _k(mech, T, n_M_m3=1e40)
    assert k[0] == pytest.approx(kinf[0], rel=1e-12)
    # at zero density the kernel gives k = 0 and the limiting slope
    k, dk = _k(mech, T, n_M_m3=0.0)
    assert np.all(k == 0.0)
    assert dk == pytest.approx(k0 * F0, rel=1e-12)


def test_falloff_derivative_against_finite_differences(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, FALLOFF)
    rng = np.random.default_rng(1)
    for T, nM in zip(rng.uniform(200, 3000, 30), 10 ** rng.uniform(18, 28, 30)):
        _, dk = _k(mech, T, n_M_m3=nM)
        h = nM * 1e-6
        kp, _ = _k(mech, T, n_M_m3=nM + h)
        km, _ = _k(mech, T, n_M_m3=nM - h)
        # central difference, truncation error O(h^2) ~ 1e-12 relative
        assert dk == pytest.approx((kp - km) / (2 * h), rel=1e-6)


# --------------------------------------------------------------------------- Landau-Teller, ladder


def test_landau_teller_closed_form_and_ladder(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, """
  - equation: O2(a) + Ar => O2 + Ar
    rate: {landau_teller: {A: 1.0e-10, B: 150.0, C: -20.0}}
    source: test
  - equation: O2(a) + O2 => O2 + O2
    rate: {landau_teller: {A: 1.0e-10, B: 150.0, C: -20.0, ladder: {level: 5, anharmonicity: 0.0076}}}
    source: test
  - equation: O2(a) + O => O2 + O
    rate: {landau_teller: {A: 1.0e-10, B: 150.0, ladder: {level: 3}}}
    source: test
""")
    for T in TEMPERATURES_K:
        k, _ = _k(mech, T)
        # Landau & Teller 1936 (Phys. Z. Sowjetunion 10, 34): ln k linear in T^(-1/3)
        k1 = 1.0e-16 * math.exp(-150.0 * T ** (-1 / 3) - 20.0 * T ** (-2 / 3))
        assert k[0] == pytest.approx(k1, rel=1e-12)
        # first-order SSH scaling with the anharmonic factor, k_n = n (1-x)/(1-n x) k_1
        # (Schwartz, Slawsky & Herzfeld 1952, J. Chem. Phys. 20, 1591; anharmonic factor
        # from memory of Capitelli et al. 2000, Plasma Kinetics in Atmospheric Gases)
        assert k[1] == pytest.approx(5 * (1 - 0.0076) / (1 - 5 * 0.0076) * k1, rel=1e-12)
        # harmonic limit: k_n = n k_1
        assert k[2] == pytest.approx(3 * 1.0e-16 * math.exp(-150.0 * T ** (-1 / 3)), rel=1e-12)
    assert rl.ladder_factor(1, 0.01) == 1.0


# --------------------------------------------------------------------------- electron impact


def test_electron_impact_takes_its_column_times_scale(tmp_path):
    cs = tmp_path / "x.yaml"
    cs.write_text("""
gas: O2
mass_amu: 32.0
source: invented for the test, not physical data
provenance: invented
processes:
  - {id: mt, kind: momentum_transfer, data: [[0, 1e-19], [100, 1e-19]]}
  - {id: diss, kind: excitation, threshold_eV: 6.0, data: [[6, 0], [20, 1e-21]]}
  - {id: vib, kind: excitation, threshold_eV: 0.19, weight_ratio: 1.0, data: [[0.19, 0], [2, 1e-21]]}
""")
    mech = _mechanism(tmp_path, SPECIES, """
  - equation: e + O2 => e + O + O
    rate: {electron_impact: diss}
    duplicate: true
    source: test
  - equation: e + O2 => e + O2(a)
    rate: {electron_impact: vib}
    source: test
  - equation: e + O2(a) => e + O2
    rate: {electron_impact: "vib:reverse"}
    source: test
  - equation: e + O2 => e + O + O
    rate: {electron_impact: {process: diss, scale: 0.25}}
    duplicate: true
    source: test
""", extra=f"cross_sections: [{cs}]")
    assert mech.electron_processes == ("diss", "vib", "vib:reverse")
    k, dk = _k(mech, 300.0, k_electron_m3_s=np.array([3e-16, 5e-15, 7e-15]))
    assert list(k) == [3e-16, 5e-15, 7e-15, 0.25 * 3e-16]


# --------------------------------------------------------------------------- detailed balance


def _nasa7_g_RT(a, T):
    """g/(RT) of one NASA-7 row, written out from McBride, Zehe & Gordon 2002 (eqs. for
    h/RT and s/R of the 7-coefficient form), independently of plasmazero.physics.thermo."""
    h = a[0] + a[1] * T / 2 + a[2] * T ** 2 / 3 + a[3] * T ** 3 / 4 + a[4] * T ** 4 / 5 + a[5] / T
    s = a[0] * math.log(T) + a[1] * T + a[2] * T ** 2 / 2 + a[3] * T ** 3 / 3 + a[4] * T ** 4 / 4 + a[6]
    return h - s


def _Kc_independent(mech, j, T):
    """Kc of row j's forward direction from the species' polynomials (McBride et al. 2002)
    and Kc = Kp (p0 / k_B T)^dnu with p0 = 1e5 Pa, k_B from scipy.constants."""
    nu = mech.stoichiometry[:, j]
    dg = 0.0
    for s in np.flatnonzero(nu):
        row = 0 if T <= mech.nasa7_T_K[s, 1] else 1
        g = _nasa7_g_RT(mech.nasa7_coeffs[s, row], T) + mech.energy_shift_J_mol[s] / (sc.R * T)
        dg += nu[s] * g
    return math.exp(-dg) * (1e5 / (sc.k * T)) ** nu.sum()


REVERSIBLE = """
  - equation: O + O2 (+M) <=> O3 (+M)
    rate:
      falloff:
        low: {A: 6.0e-34, b: -2.5, Ea: 0}
        high: {A: 3.0e-11, b: 0, Ea: 0}
        troe: {alpha: 0.6, T3: 100, T1: 1500}
    source: test
  - equation: O + O + M <=> O2 + M
    rate: {arrhenius: {A: 5.0e-33, b: -1.0, Ea: 0}}
    efficiencies: {Ar: 0.5}
    source: test
  - equation: OH + H2 <=> H2O + H
    rate: {arrhenius: {A: 7.7e-12, b: 0, Ea: 2100}}
    source: test
  - equation: O2(a) + O <=> O + O2
    rate: {landau_teller: {A: 1e-12, B: 50}}
    source: test
  - equation: O3 <=> O + O2
    rate: {expression: "1e-3 * exp(-12000/Tg)"}
    source: test
"""


def test_reverse_over_forward_is_the_equilibrium_constant(tmp_path):
    from plasmazero.physics.thermo import equilibrium_constant_Kc

    mech = _mechanism(tmp_path, SPECIES, REVERSIBLE)
    fwd = np.flatnonzero(mech.law != rl.REVERSE)
    rev = np.flatnonzero(mech.law == rl.REVERSE)
    assert list(mech.reverse_of[rev]) == list(rev - 1) and len(rev) == 5
    arrays = (mech.nasa7_coeffs, mech.nasa7_T_K, mech.energy_shift_J_mol)
    for T in (250.0, 300.0, 999.0, 1001.0, 2500.0, 5000.0):
        k, dk = _k(mech, T, n_M_m3=1e24)
        for f in fwd:
            r = f + 1
            Kc_thermo = equilibrium_constant_Kc(mech.stoichiometry[:, f], T, arrays)
            assert k[f] / k[r] == pytest.approx(Kc_thermo, rel=1e-12)
            # and against the polynomials written out in this test (McBride et al. 2002)
            assert k[f] / k[r] == pytest.approx(_Kc_independent(mech, f, T), rel=1e-11)
        # the falloff reverse carries d k / d[M] divided by Kc as well
        assert dk[0] / dk[1] == pytest.approx(k[0] / k[1], rel=1e-12)


def test_reverse_rows_mirror_the_forward_stoichiometry(tmp_path):
    mech = _mechanism(tmp_path, SPECIES, REVERSIBLE)
    for r in np.flatnonzero(mech.law == rl.REVERSE):
        f = mech.reverse_of[r]
        assert np.array_equal(mech.stoichiometry[:, r], -mech.stoichiometry[:, f])
        assert mech.third_body[r] == mech.third_body[f]
        assert mech.multiply_M[r] == mech.multiply_M[f]
    # O + O + M <=> O2 + M: the reverse row is O2 + M => 2 O + M
    j = mech.reactions.index("O2 + M => O + O + M (reverse)")
    assert sorted(mech.reactant_index[j]) == [-1, -1, mech.species.index("O2")]
    assert mech.product_coeff[j, 0] == 2.0 and mech.multiply_M[j]
