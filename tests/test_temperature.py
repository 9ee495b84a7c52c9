"""Checks of acidscape.science.temperature against published tables (measurements by Harned and
co-workers, Bates & Acree 1943, Emerson et al. 1975, Morris 1966), against an independent
integration with scipy (with and without a heat capacity of reaction), the IAPWS-95 density of
water (iapws), and thermodynamic consistency (Gibbs-Helmholtz with numpy.gradient).

Library systems are stood in for by ``types.SimpleNamespace`` objects carrying the
``AcidSystem`` attributes used here (id, pKa_25C, dH_kJ_per_mol, temperature_model).
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from acidscape.errors import InputError, UnknownIdError
from acidscape.science.temperature import (
    FIT_RANGE_K,
    TEMPERATURE_MODELS,
    ammonium_BP49,
    carbonate_PB82,
    hypochlorous_M66,
    hypochlorous_pKa,
    log10_KH_CO2,
    molal_to_molar_note,
    molal_to_molar_offsets,
    pKa_at,
    pKa_at_with_notes,
    vant_hoff_log10_K,
    vant_hoff_pKa,
)

T25 = 298.15


def system(model, pKa, dH=None, sid="test-system"):
    if dH is None:
        dH = (None,) * len(pKa)
    return SimpleNamespace(id=sid, pKa_25C=tuple(pKa), dH_kJ_per_mol=tuple(dH), temperature_model=model)


# --- van 't Hoff -----------------------------------------------------------------------

def vant_hoff_by_quadrature(pKa_ref, dH_kJ, T, T_ref=T25):
    """ln K(T) - ln K(T_ref) = integral of dH / (R T^2) dT, by scipy.integrate.quad,
    with R from scipy.constants."""
    integral, _ = quad(lambda x: dH_kJ * 1000.0 / (sc.R * x * x), T_ref, T)
    return pKa_ref - integral / math.log(10)


@given(
    pKa=st.floats(min_value=-2.0, max_value=14.0),
    dH=st.floats(min_value=-60.0, max_value=60.0),
    t=st.floats(min_value=0.0, max_value=100.0),
)
@settings(max_examples=150, deadline=None)
def test_vant_hoff_matches_scipy_quad(pKa, dH, t):
    T = 273.15 + t
    assert vant_hoff_pKa(pKa, dH, T) == pytest.approx(vant_hoff_by_quadrature(pKa, dH, T), abs=1e-9)


def test_vant_hoff_reference_point_and_direction():
    assert vant_hoff_pKa(7.0, 20.0, T25) == 7.0
    # endothermic dissociation (dH > 0): K grows with T, pKa falls (Le Chatelier)
    assert vant_hoff_pKa(7.0, 20.0, 323.15) < 7.0
    assert vant_hoff_pKa(7.0, -20.0, 323.15) > 7.0


def test_vant_hoff_other_reference_temperature():
    assert vant_hoff_pKa(5.0, 30.0, 310.15, T_ref=283.15) == pytest.approx(
        vant_hoff_by_quadrature(5.0, 30.0, 310.15, T_ref=283.15), abs=1e-9
    )


def test_vant_hoff_reproduces_Harned_pK1_from_PB82_enthalpy():
    # With PB82's dH1(25 °C) = 9.11 kJ/mol (from memory) the constant-dH form should
    # track the measured pK1 within 0.005 at 20 and 30 °C; farther out the large heat
    # capacity of reaction of step 1 (about -370 J/(mol K)) makes it drift
    # (Harned & Davis 1943: 6.381 at 20 °C, 6.327 at 30 °C, from memory).
    assert vant_hoff_pKa(6.352, 9.11, 293.15) == pytest.approx(6.381, abs=0.005)
    assert vant_hoff_pKa(6.352, 9.11, 303.15) == pytest.approx(6.327, abs=0.005)


def test_vant_hoff_rejects_bad_input():
    with pytest.raises(InputError):
        vant_hoff_pKa(float("nan"), 10.0, T25)
    with pytest.raises(InputError):
        vant_hoff_pKa(4.0, None, T25)
    with pytest.raises(InputError) as info:
        vant_hoff_pKa(4.0, 10.0, 380.0)
    assert info.value.field == "temperature_C"
    with pytest.raises(InputError):
        vant_hoff_pKa(4.0, 10.0, T25, T_ref=0.0)


# --- carbonate, Plummer & Busenberg (1982) ---------------------------------------------

def test_PB82_values_at_25C():
    # Plummer & Busenberg (1982): pK1 6.352, pK2 10.329, pKH 1.468 at 25 °C (from memory).
    pK1, pK2 = carbonate_PB82(T25)
    assert pK1 == pytest.approx(6.352, abs=6e-4)
    assert pK2 == pytest.approx(10.329, abs=6e-4)
    assert -log10_KH_CO2(T25) == pytest.approx(1.468, abs=6e-4)


@pytest.mark.parametrize(
    "t_c, pK1",
    # Harned & Davis, J. Am. Chem. Soc. 65 (1943) 2030, doi:10.1021/ja01250a059, emf
    # measurements that PB82 fitted (from memory; printed to 3 decimals).
    [(0, 6.579), (5, 6.517), (10, 6.464), (15, 6.419), (20, 6.381), (30, 6.327),
     (40, 6.298), (50, 6.285)],
)
def test_PB82_pK1_vs_Harned_Davis(t_c, pK1):
    # half a printed digit plus the fit residual (~0.001)
    assert carbonate_PB82(273.15 + t_c)[0] == pytest.approx(pK1, abs=0.002)


@pytest.mark.parametrize(
    "t_c, pK2",
    # Harned & Scholes, J. Am. Chem. Soc. 63 (1941) 1706, doi:10.1021/ja01851a058
    # (from memory; printed to 3 decimals).
    [(0, 10.625), (5, 10.557), (10, 10.490), (20, 10.377), (30, 10.290), (40, 10.220),
     (50, 10.172)],
)
def test_PB82_pK2_vs_Harned_Scholes(t_c, pK2):
    # PB82 fitted several data sets; its residual against Harned & Scholes reaches
    # 0.004 at 0 °C, so 0.005.
    assert carbonate_PB82(273.15 + t_c)[1] == pytest.approx(pK2, abs=0.005)


@pytest.mark.parametrize(
    "t_c, pKH",
    # Harned & Davis (1943) Henry's constants as tabulated in Stumm & Morgan (1996)
    # Table 4.2 (from memory; 2 decimals).
    [(0, 1.11), (10, 1.27), (25, 1.47)],
)
def test_PB82_KH_vs_Harned_Davis(t_c, pKH):
    assert -log10_KH_CO2(273.15 + t_c) == pytest.approx(pKH, abs=0.006)


def test_PB82_Gibbs_Helmholtz_enthalpies():
    # dH = R ln10 T^2 d(log10 K)/dT, derivative by numpy.gradient on a 0.05 K grid.
    # PB82 (from memory): dH1 = 9.109 kJ/mol (2177 cal/mol), dH2 = 14.90 kJ/mol
    # (3561 cal/mol), dH of CO2(g) -> H2CO3* = -19.98 kJ/mol (-4776 cal/mol) at 25 °C.
    T = np.linspace(293.15, 303.15, 201)
    logK1 = np.array([-carbonate_PB82(x)[0] for x in T])
    logK2 = np.array([-carbonate_PB82(x)[1] for x in T])
    logKH = np.array([log10_KH_CO2(x) for x in T])
    i = int(np.argmin(abs(T - T25)))
    factor = sc.R * math.log(10) * T[i] ** 2 / 1000.0
    assert np.gradient(logK1, T)[i] * factor == pytest.approx(9.109, abs=0.05)
    assert np.gradient(logK2, T)[i] * factor == pytest.approx(14.90, abs=0.05)
    assert np.gradient(logKH, T)[i] * factor == pytest.approx(-19.98, abs=0.05)


def test_PB82_pK1_minimum_near_50C():
    # pK1 passes through a minimum at about 50 °C (Harned & Davis 1943; common
    # knowledge of the carbonate system): the PB82 fit's minimum lies in 45–60 °C.
    T = np.linspace(273.15, 373.15, 1001)
    pK1 = np.array([carbonate_PB82(x)[0] for x in T])
    assert 318.15 <= T[int(np.argmin(pK1))] <= 333.15


# --- ammonium, Bates & Pinching (1949) -------------------------------------------------

def test_ammonium_25C():
    # Bates & Pinching (1949): pKa 9.245 at 25 °C (from memory).
    assert ammonium_BP49(T25) == pytest.approx(9.245, abs=0.0015)


@pytest.mark.parametrize(
    "t_c, pH, percent_NH3",
    # Emerson, Russo, Lund & Thurston, J. Fish. Res. Board Can. 32 (1975) 2379, table of
    # percent un-ionised ammonia (from memory, 3 significant figures). Emerson wrote
    # pKa = 0.09018 + 2729.92/(273.2 + t), i.e. with 273.2 K for 0 °C, so the table is
    # compared at T = t + 273.2.
    [(20, 7.0, 0.396), (20, 8.0, 3.82), (20, 9.0, 28.4), (25, 8.0, 5.38), (25, 9.0, 36.3),
     (10, 8.0, 1.83)],
)
def test_unionised_ammonia_vs_Emerson(t_c, pH, percent_NH3):
    pKa = ammonium_BP49(t_c + 273.2)
    percent = 100.0 / (1.0 + 10.0 ** (pKa - pH))
    step = 10 ** (math.floor(math.log10(percent_NH3)) - 2)  # last printed digit
    assert percent == pytest.approx(percent_NH3, abs=0.5 * step + 1e-12)


# --- hypochlorous acid, Morris (1966) --------------------------------------------------

@pytest.mark.parametrize(
    "t_c, pKa",
    # Morris (1966) pKa of HOCl, as reprinted to 2 decimals in chlorination handbooks
    # (White, Handbook of Chlorination) (from memory).
    [(0, 7.82), (5, 7.75), (10, 7.69), (15, 7.63), (20, 7.58), (25, 7.54), (30, 7.50),
     (35, 7.46)],
)
def test_hypochlorous_vs_Morris_table(t_c, pKa):
    # half a printed digit, plus 0.001 because Morris' 0 °C value 7.825 is printed as
    # 7.82 (from memory).
    assert hypochlorous_M66(273.15 + t_c) == pytest.approx(pKa, abs=0.006)


def test_hypochlorous_25C():
    # Morris (1966): 7.537 at 25 °C (from memory).
    assert hypochlorous_M66(T25) == pytest.approx(7.537, abs=6e-4)


# --- dispatch --------------------------------------------------------------------------

def test_pKa_at_dispatches_fitted_models():
    carb = system("carbonate-PB82", (6.35, 10.33))
    assert pKa_at(carb, 283.15) == carbonate_PB82(283.15)
    nh4 = system("ammonium-BP49", (9.245,))
    assert pKa_at(nh4, 283.15) == (ammonium_BP49(283.15),)
    hocl = system("hypochlorous-M66", (7.53,))
    assert pKa_at(hocl, 283.15) == (hypochlorous_M66(283.15),)


def test_pKa_at_vant_hoff_with_and_without_enthalpy():
    # phosphoric acid: pKa 2.148, 7.198, 12.35 and dH1 = -8.0, dH2 = 3.6 kJ/mol
    # (Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data 31 (2002) 231, from memory);
    # the third enthalpy is withheld here to exercise the no-enthalpy path.
    s = system("vant-hoff", (2.148, 7.198, 12.35), (-8.0, 3.6, None), sid="phos")
    T = 313.15
    values, notes = pKa_at_with_notes(s, T)
    assert values[0] == pytest.approx(vant_hoff_by_quadrature(2.148, -8.0, T), abs=1e-9)
    assert values[1] == pytest.approx(vant_hoff_by_quadrature(7.198, 3.6, T), abs=1e-9)
    assert values[2] == 12.35
    # step 3: no enthalpy; steps 1-2: enthalpy but no heat capacity, and 40 °C is outside 15-35 °C
    assert len(notes) == 3 and all("phos" in n for n in notes)
    assert "step 3" in notes[-1] and "no reaction enthalpy" in notes[-1]
    assert all("no heat capacity" in n for n in notes[:2])
    assert pKa_at(s, T) == values
    assert len(pKa_at_with_notes(s, 303.15)[1]) == 1  # inside 15-35 °C only the missing enthalpy


def test_notes_threshold_half_kelvin():
    s = system("vant-hoff", (4.0, 6.0))
    assert pKa_at_with_notes(s, T25 + 0.4)[1] == []
    assert len(pKa_at_with_notes(s, T25 - 0.6)[1]) == 2


# --- heat capacity of reaction ---------------------------------------------------------

def vant_hoff_dCp_by_quadrature(pKa_ref, dH_kJ, dCp, T, T_ref=T25):
    """ln K(T) - ln K(T_ref) = integral of (dH + dCp (x - T_ref)) / (R x^2) dx (scipy quad)."""
    integral, _ = quad(lambda x: (dH_kJ * 1000.0 + dCp * (x - T_ref)) / (sc.R * x * x), T_ref, T)
    return pKa_ref - integral / math.log(10)


@given(
    pKa=st.floats(min_value=-2.0, max_value=14.0),
    dH=st.floats(min_value=-60.0, max_value=60.0),
    dCp=st.floats(min_value=-400.0, max_value=400.0),
    t=st.floats(min_value=0.0, max_value=100.0),
)
@settings(max_examples=150, deadline=None)
def test_vant_hoff_with_heat_capacity_matches_scipy_quad(pKa, dH, dCp, t):
    T = 273.15 + t
    got = vant_hoff_pKa(pKa, dH, T, dCp_J_per_mol_K=dCp)
    assert got == pytest.approx(vant_hoff_dCp_by_quadrature(pKa, dH, dCp, T), abs=1e-9)
    assert vant_hoff_log10_K(-pKa, dH, T, dCp) == pytest.approx(-got, abs=1e-12)


def test_library_acetic_and_phosphate_at_0C():
    # Published 0 °C values (from memory): acetic acid 4.7807 (Harned & Ehlers, J. Am. Chem. Soc.
    # 55 (1933) 652), H2PO4- 7.313 (Bates & Acree, J. Res. NBS 30 (1943) 129). With the stored dH
    # and dCp (Goldberg, Kishore & Lennen 2002) the van 't Hoff integration must land within 0.015.
    from acidscape.data import library

    acetic, notes = pKa_at_with_notes(library.get_system("acetic"), 273.15)
    assert acetic[0] == pytest.approx(4.7807, abs=0.005) and notes == []
    phosphate, notes = pKa_at_with_notes(library.get_system("phosphate"), 273.15)
    assert phosphate[1] == pytest.approx(7.313, abs=0.015) and notes == []
    # Harned & Ehlers (1933): Ka = 1.633e-5 at 50 °C, pKa 4.787 (from memory)
    assert pKa_at(library.get_system("acetic"), 323.15)[0] == pytest.approx(4.787, abs=0.005)


def test_library_steps_without_heat_capacity_are_flagged_outside_15_to_35C():
    from acidscape.data import library

    arsenite = library.get_system("arsenite")  # no enthalpy at all: the 25 °C note
    cyanide = library.get_system("cyanide")    # enthalpy, no heat capacity
    assert cyanide.dCp_J_per_mol_K == (None,) and cyanide.dH_kJ_per_mol[0] is not None
    assert pKa_at_with_notes(cyanide, 293.15)[1] == []
    notes = pKa_at_with_notes(cyanide, 283.15)[1]
    assert len(notes) == 1 and "no heat capacity" in notes[0]
    assert len(pKa_at_with_notes(arsenite, 293.15)[1]) == 1
    # the bound quoted in the note: 300 J/(mol K) at 10 °C
    bound = 300 / (sc.R * math.log(10)) * (math.log(283.15 / T25) + T25 / 283.15 - 1)
    assert f"{bound:.2f}" in notes[0]


# --- fits and their ranges ---------------------------------------------------------------

def test_emerson_fit_vs_bates_pinching_three_term_equation():
    # Bates & Pinching (1949): pKa = 2835.76/T - 0.6322 + 0.001225 T (from memory); the two-term
    # fit of Emerson et al. (1975) used by the core must stay within 0.003 of it over 0-50 °C.
    for t_c in range(0, 51, 5):
        T = 273.15 + t_c
        assert ammonium_BP49(T) == pytest.approx(2835.76 / T - 0.6322 + 0.001225 * T, abs=0.003)


def test_hypochlorous_is_not_extrapolated_above_35C():
    # Morris (1966) measured 5-35 °C (title of the paper). Above 35 °C: van 't Hoff from the fit's
    # 35 °C value with the fit's enthalpy there, dH = R ln10 (3000.00 - 0.0253 T^2).
    edge = 308.15
    dH = sc.R * math.log(10) * (3000.00 - 0.0253 * edge**2) / 1000
    assert dH == pytest.approx(11.44, abs=0.01)
    hocl = system("hypochlorous-M66", (7.537,), sid="hypochlorous")
    for t_c in (40, 60, 100):
        T = 273.15 + t_c
        values, notes = pKa_at_with_notes(hocl, T)
        assert values[0] == pytest.approx(vant_hoff_by_quadrature(hypochlorous_M66(edge), dH, T, T_ref=edge), abs=1e-9)
        assert hypochlorous_pKa(T) == values[0]
        assert len(notes) == 1 and "35" in notes[0] and "uncertain" in notes[0]
    for t_c in (5, 20, 35):
        values, notes = pKa_at_with_notes(hocl, 273.15 + t_c)
        assert values[0] == hypochlorous_M66(273.15 + t_c) and notes == []
    values, notes = pKa_at_with_notes(hocl, 273.15)
    assert values[0] == hypochlorous_M66(273.15) and len(notes) == 1 and "extrapolated" in notes[0]
    assert FIT_RANGE_K["hypochlorous-M66"] == (278.15, 308.15)


# --- molal constants used as molar ------------------------------------------------------------

@pytest.mark.parametrize("t_c", [25.0, 60.0, 90.0])
def test_molal_to_molar_offsets_vs_iapws_density(t_c):
    # IAPWS-95 liquid density at 0.101325 MPa (iapws package): Kw(molar) = Kw(molal) rho^2,
    # K_H(molar) = K_H(molal) rho, rho in kg/L (definition of the scales; common practice).
    from iapws import IAPWS95

    rho = IAPWS95(T=273.15 + t_c, P=0.101325).rho / 1000.0
    dpKw, dKH = molal_to_molar_offsets(273.15 + t_c)
    assert dpKw == pytest.approx(-2 * math.log10(rho), abs=1e-4)
    assert dKH == pytest.approx(math.log10(rho), abs=5e-5)


def test_molal_to_molar_note_above_50C():
    assert molal_to_molar_note(323.15) is None and molal_to_molar_note(298.15) is None
    note = molal_to_molar_note(373.15)
    assert note and "per kg" in note and "0.018" in note  # about 0.02 pH at 100 °C
    assert molal_to_molar_offsets(373.15)[0] == pytest.approx(0.037, abs=0.001)


def test_notes_for_extrapolated_fits():
    nh4 = system("ammonium-BP49", (9.245,), sid="ammonium")
    assert pKa_at_with_notes(nh4, 313.15)[1] == []
    notes = pKa_at_with_notes(nh4, 343.15)[1]
    assert len(notes) == 1 and "extrapolated" in notes[0]
    hocl = system("hypochlorous-M66", (7.53,))
    assert len(pKa_at_with_notes(hocl, 318.15)[1]) == 1
    assert pKa_at_with_notes(system("carbonate-PB82", (6.35, 10.33)), 373.15)[1] == []
    assert set(FIT_RANGE_K) | {"vant-hoff"} == set(TEMPERATURE_MODELS)


def test_unknown_model():
    with pytest.raises(UnknownIdError) as info:
        pKa_at(system("polynomial", (4.0,)), T25)
    assert "polynomial" in info.value.message
    for m in TEMPERATURE_MODELS:
        assert m in info.value.message


def test_step_count_mismatch():
    with pytest.raises(InputError):
        pKa_at(system("carbonate-PB82", (6.35,)), T25)
    bad = SimpleNamespace(id="x", pKa_25C=(4.0, 5.0), dH_kJ_per_mol=(1.0,), temperature_model="vant-hoff")
    with pytest.raises(InputError):
        pKa_at(bad, T25)


@pytest.mark.parametrize("T", [273.0, 373.3, float("nan"), "298"])
def test_temperature_validated(T):
    for model, pKa in (("vant-hoff", (4.0,)), ("carbonate-PB82", (6.35, 10.33))):
        with pytest.raises(InputError) as info:
            pKa_at(system(model, pKa), T)
        assert info.value.field == "temperature_C"
    with pytest.raises(InputError):
        log10_KH_CO2(T)
