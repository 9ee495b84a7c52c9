"""Calcium carbonate indices (acidscape.operations.indices) against an independent implementation.

The reference below is written here again from the published equations, with numpy/scipy and
its own constants; it shares no code with the core:

* Standard Methods for the Examination of Water and Wastewater, 23rd ed. (2017), method
  2330 B (from memory): pHs = pK2 - pKs + p[Ca2+] + p[HCO3-] + 5 pfm, with
  [HCO3-] = (Alk - [OH-] + [H+]) / (1 + 2 K2'/[H+]) from total alkalinity, pfm from the
  Davies equation with A = 1.82e6 (eps T)^-1.5 and eps = 60954/(T + 116) - 68.937 (the
  2330 B expressions, from memory); LSI = pH - pHs (Langelier 1936), RSI = 2 pHs - pH
  (Ryznar 1944).
* 2330 C (from memory): the CCPP is the x (mol/L) of CaCO3 by which calcium, DIC and
  alkalinity fall (x, x and 2x; open to CO2: calcium and alkalinity only, H2CO3* held by
  Henry's law) until the water is saturated with calcite (SI = 0); negative x dissolves.
* Constants: Plummer & Busenberg (1982), Geochim. Cosmochim. Acta 46, 1011, Table 2 and
  their ion-pair fits (coefficients from memory): K1, K2, K_H(CO2), Ks(calcite),
  CaHCO3+ and CaCO3°; CaOH+ log *K = -12.78 at every temperature (Nordstrom et al. 1990,
  from memory; as the data file keeps it); pKw from the IAPWS ionization release
  (iapws package, IAPWS-95 density at 1 atm).
* Speciation: nested bracketed root finding (scipy brentq) on the calcium and carbon mass
  balances and the charge balance, the ionic strength iterated to self-consistency.

The waters hold calcium, carbonate, potassium and chloride only (the database has no ion
pair of K+ or Cl- with calcium or carbonate), so the reference needs only the pairs above.
"""

from __future__ import annotations

import functools
import math

import pytest

from acidscape.boundary.api import solve
from acidscape.errors import InputError

scipy_optimize = pytest.importorskip("scipy.optimize")
iapws = pytest.importorskip("iapws")
from iapws import IAPWS95  # noqa: E402
from iapws._iapws import _Kw  # noqa: E402

brentq = scipy_optimize.brentq

# molar mass of CaCO3 from IUPAC standard atomic weights (Ca 40.078, C 12.011, O 15.999)
M_CACO3 = 40.078 + 12.011 + 3 * 15.999
# M of the ions for the scenarios' mg/L (IUPAC standard atomic weights)
M_CA, M_K, M_CL = 40.078, 39.098, 35.45


# --------------------------------------------------------------------------------------
# independent reference


@functools.lru_cache(maxsize=None)
def constants(T):
    """log10 constants at T [K]: Plummer & Busenberg (1982) fits (from memory), IAPWS pKw."""
    lT = math.log10(T)
    logK1 = -356.3094 - 0.06091964 * T + 21834.37 / T + 126.8339 * lT - 1684915.0 / T**2
    logK2 = -107.8871 - 0.03252849 * T + 5151.79 / T + 38.92561 * lT - 563713.9 / T**2
    logKH = 108.3865 + 0.01985076 * T - 6919.53 / T - 40.45154 * lT + 669365.0 / T**2
    logKs = -171.9065 - 0.077993 * T + 2839.319 / T + 71.595 * lT
    logK_CaHCO3 = 1209.120 + 0.31294 * T - 34765.05 / T - 478.782 * lT
    logK_CaCO3 = -1228.732 - 0.299440 * T + 35512.75 / T + 485.818 * lT
    pKw = _Kw(IAPWS95(T=T, P=0.101325).rho, T)
    eps = 60954.0 / (T + 116.0) - 68.937  # Standard Methods 2330 B (from memory)
    A = 1.82e6 * (eps * T) ** -1.5
    return dict(K1=10**logK1, K2=10**logK2, KH=10**logKH, Ks=10**logKs, pK2=-logK2, pKs=-logKs,
                K_CaHCO3=10**logK_CaHCO3, K_CaCO3=10**logK_CaCO3, K_CaOH=10**-12.78, Kw=10**-pKw, pKw=pKw, A=A)


def davies(A, z, I):
    """log10 gamma, Davies (1962) equation."""
    s = math.sqrt(I)
    return -A * z * z * (s / (1 + s) - 0.3 * I)


def speciate(T, Ca_T, K_T, Cl_T, *, C_T=None, pCO2=None, pH=None, pairs=True, I_fixed=None):
    """Free concentrations and activities of a Ca-K-Cl-carbonate water (mol/L).

    Closed (``C_T``) or open (``pCO2`` [atm]); pH from the charge balance unless given.
    """
    k = constants(T)
    I = I_fixed if I_fixed is not None else 0.5 * (4 * Ca_T + K_T + Cl_T) + 1e-4
    for _ in range(200):
        g1, g2 = 10 ** davies(k["A"], 1, I), 10 ** davies(k["A"], 2, I)

        def at_pH(pH):
            aH = 10.0**-pH
            # carbonate ladder per unit activity of CO3-2
            hco3_per = aH / k["K2"]            # a(HCO3-) / a(CO3-2)
            h2co3_per = aH * hco3_per / k["K1"]  # a(H2CO3*) / a(CO3-2)

            def from_co3(aCO3):
                aHCO3 = hco3_per * aCO3
                # Ca balance: Ca_T = [Ca] (1 + g2 (K_CaHCO3 a(HCO3-)/g1 + K_CaCO3 a(CO3-2) + *K_CaOH/(a(H+) g1)))
                per_free = 1.0
                if pairs:
                    per_free += g2 * (k["K_CaHCO3"] * aHCO3 / g1 + k["K_CaCO3"] * aCO3 + k["K_CaOH"] / aH / g1)
                Ca = Ca_T / per_free
                aCa = Ca * g2
                sp = {
                    "Ca": Ca, "aCa": aCa, "CO3": aCO3 / g2, "aCO3": aCO3, "HCO3": aHCO3 / g1, "aHCO3": aHCO3,
                    "H2CO3": h2co3_per * aCO3,
                    "CaHCO3": k["K_CaHCO3"] * aCa * aHCO3 / g1 if pairs else 0.0,
                    "CaCO3": k["K_CaCO3"] * aCa * aCO3 if pairs else 0.0,
                    "CaOH": k["K_CaOH"] * aCa / aH / g1 if pairs else 0.0,
                    "H": aH / g1, "OH": k["Kw"] / aH / g1, "aH": aH,
                }
                return sp

            if pCO2 is not None:  # H2CO3* fixed by Henry's law
                aCO3 = k["KH"] * pCO2 / h2co3_per
                sp = from_co3(aCO3)
            else:
                def c_bal(lg):
                    sp = from_co3(10.0**lg)
                    return sp["H2CO3"] + sp["HCO3"] + sp["CO3"] + sp["CaHCO3"] + sp["CaCO3"] - C_T
                lg = brentq(c_bal, -40.0, math.log10(C_T) + 2.0, xtol=1e-15, rtol=1e-15, maxiter=500)
                sp = from_co3(10.0**lg)
            sp["charge"] = (2 * sp["Ca"] + sp["CaHCO3"] + sp["CaOH"] + sp["H"] + K_T
                            - sp["HCO3"] - 2 * sp["CO3"] - sp["OH"] - Cl_T)
            return sp

        if pH is None:
            pH_sol = brentq(lambda p: at_pH(p)["charge"], 2.0, 13.5, xtol=1e-14, rtol=1e-15, maxiter=500)
        else:
            pH_sol = pH
        sp = at_pH(pH_sol)
        sp["pH"] = pH_sol
        if I_fixed is not None:
            break
        I_new = 0.5 * (4 * sp["Ca"] + sp["CaHCO3"] + sp["CaOH"] + sp["H"] + K_T + sp["HCO3"] + 4 * sp["CO3"]
                       + sp["OH"] + Cl_T)
        if abs(I_new - I) < 1e-14 * I:
            I = I_new
            break
        I = I_new
    sp["I"] = I
    sp["pfm"] = -davies(k["A"], 1, I)
    sp["SI"] = math.log10(sp["aCa"] * sp["aCO3"] / k["Ks"])
    sp["C_T"] = sp["H2CO3"] + sp["HCO3"] + sp["CO3"] + sp["CaHCO3"] + sp["CaCO3"]
    return sp


def sm2330_indices(T, pH, Ca_T, alk, I):
    """pHs, LSI, RSI by the Standard Methods 2330 B formula with total Ca and total alkalinity."""
    k = constants(T)
    pfm = -davies(k["A"], 1, I)
    H = 10 ** (pfm - pH)
    OH = 10 ** (pH + pfm - k["pKw"])
    HCO3 = (alk - OH + H) / (1 + 2 * 10 ** (pH - k["pK2"] + 3 * pfm))
    pHs = k["pK2"] - k["pKs"] - math.log10(Ca_T) - math.log10(HCO3) + 5 * pfm
    return pHs, pH - pHs, 2 * pHs - pH


def pairs_indices(T, sp):
    """pHs, LSI, RSI with the free-ion activities of the reference speciation."""
    k = constants(T)
    pHs = k["pK2"] - k["pKs"] - math.log10(sp["aCa"]) - math.log10(sp["aHCO3"])
    return pHs, sp["pH"] - pHs, 2 * pHs - sp["pH"]


def ccpp(T, Ca_T, C_T, K_T, Cl_T, *, pairs, pCO2=None):
    """(CCPP [mg/L as CaCO3], pH after): Ca, DIC, alkalinity fall by x, x, 2x until SI = 0."""
    def si(x):
        if pCO2 is None:
            return speciate(T, Ca_T - x, K_T, Cl_T, C_T=C_T - x, pairs=pairs)["SI"]
        return speciate(T, Ca_T - x, K_T, Cl_T, pCO2=pCO2, pairs=pairs)["SI"]
    hi = (min(Ca_T, C_T) if pCO2 is None else Ca_T) * (1 - 1e-9)
    x = brentq(si, -0.02, hi, xtol=1e-16, rtol=1e-13, maxiter=500)
    after = (speciate(T, Ca_T - x, K_T, Cl_T, C_T=C_T - x, pairs=pairs) if pCO2 is None
             else speciate(T, Ca_T - x, K_T, Cl_T, pCO2=pCO2, pairs=pairs))
    return x * M_CACO3 * 1e3, after["pH"]


def scenario(t_C, Ca_M, C_M, K_M, Cl_M, **extra):
    """A core scenario of the same water (totals in mol/L)."""
    sc = {"temperature_C": t_C, "activity": "davies",
          "systems": [{"id": "carbonate", "total": C_M, "unit": "mol/L"}],
          "ions": [{"id": "calcium", "total": Ca_M, "unit": "mol/L"},
                   {"id": "potassium", "total": K_M, "unit": "mol/L"},
                   {"id": "chloride", "total": Cl_M, "unit": "mol/L"}]}
    sc.update(extra)
    return sc


# Invented test waters (mol/L): (Ca, DIC, K, Cl). Alkalinity = 2 Ca + K - Cl.
HARD = (2.5e-3, 4.2e-3, 0.3e-3, 1.2e-3)      # alkalinity 4.1 meq/L, oversaturated
SOFT = (0.4e-3, 1.6e-3, 0.1e-3, 0.3e-3)      # alkalinity 0.6 meq/L with excess CO2, aggressive
TEMPERATURES = [10.0, 25.0, 60.0]


# --------------------------------------------------------------------------------------
# pHs, LSI, RSI by the 2330 B formula


@pytest.mark.parametrize("t_C", TEMPERATURES)
@pytest.mark.parametrize("pH", [7.2, 8.1])
def test_sm2330_formula_at_given_pH_and_ionic_strength(t_C, pH):
    """Fixed pH and ionic strength, no ion pairs: both of the core's methods equal the
    2330 B formula worked independently (alkalinity from the reference speciation)."""
    Ca, C, I = 1.8e-3, 3.0e-3, 0.01
    T = t_C + 273.15
    sp = speciate(T, Ca, 0.0, 0.0, C_T=C, pH=pH, pairs=False, I_fixed=I)
    alk = sp["HCO3"] + 2 * sp["CO3"] + sp["OH"] - sp["H"]
    pHs, lsi, rsi = sm2330_indices(T, pH, Ca, alk, I)
    out = solve({"temperature_C": t_C, "pH": pH, "ionic_strength_M": I, "complexes": False,
                 "systems": [{"id": "carbonate", "total": C, "unit": "mol/L"}],
                 "ions": [{"id": "calcium", "total": Ca, "unit": "mol/L"}]})
    cc = out["calcium_carbonate"]
    assert cc["pH"] == pytest.approx(pH, abs=1e-7)  # the neutralised water keeps the given pH
    for got in (cc, cc["classic"]):
        assert got["pHs"] == pytest.approx(pHs, abs=3e-3)
        assert got["LSI"] == pytest.approx(lsi, abs=3e-3)
        assert got["RSI"] == pytest.approx(rsi, abs=6e-3)
    assert cc["classic"]["alkalinity_meq_per_L"] == pytest.approx(alk * 1e3, rel=1e-3)


@pytest.mark.parametrize("t_C", TEMPERATURES)
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
def test_indices_free_pH_without_ion_pairs(t_C, water):
    """pH from the charge balance and I from the composition, no ion pairs: pH, pHs, LSI,
    RSI against the reference solve and the 2330 B formula (total alkalinity = 2Ca + K - Cl)."""
    Ca, C, K, Cl = water
    T = t_C + 273.15
    sp = speciate(T, Ca, K, Cl, C_T=C, pairs=False)
    pHs, lsi, rsi = sm2330_indices(T, sp["pH"], Ca, 2 * Ca + K - Cl, sp["I"])
    cc = solve(scenario(t_C, Ca, C, K, Cl, complexes=False))["calcium_carbonate"]
    assert cc["pH"] == pytest.approx(sp["pH"], abs=1e-3)
    assert cc["pHs"] == pytest.approx(pHs, abs=2e-3)
    assert cc["LSI"] == pytest.approx(lsi, abs=2e-3)
    assert cc["RSI"] == pytest.approx(rsi, abs=8e-3)
    assert cc["classic"]["LSI"] == pytest.approx(lsi, abs=4e-3)
    assert cc["method_id"] == "ion pairs off"


@pytest.mark.parametrize("t_C", TEMPERATURES)
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
def test_indices_with_ion_pairs(t_C, water):
    """With CaHCO3+, CaCO3° and CaOH+: the headline pHs/LSI use free-ion activities (reference
    speciation with Plummer & Busenberg's pair constants); the classic block uses total Ca
    and total alkalinity at the same pH (2330 B). Ion pairs lower free calcium, so the
    classic LSI is the higher one (common practice)."""
    Ca, C, K, Cl = water
    T = t_C + 273.15
    sp = speciate(T, Ca, K, Cl, C_T=C, pairs=True)
    pHs, lsi, rsi = pairs_indices(T, sp)
    out = solve(scenario(t_C, Ca, C, K, Cl))
    cc = out["calcium_carbonate"]
    assert cc["pH"] == pytest.approx(sp["pH"], abs=1e-3)
    assert cc["pHs"] == pytest.approx(pHs, abs=2e-3)
    assert cc["LSI"] == pytest.approx(lsi, abs=2e-3)
    assert cc["RSI"] == pytest.approx(rsi, abs=8e-3)
    assert cc["LSI"] == pytest.approx(sp["SI"], abs=4e-3)  # LSI with activities = SI of calcite
    c_pHs, c_lsi, _ = sm2330_indices(T, sp["pH"], Ca, 2 * Ca + K - Cl, sp["I"])
    assert cc["classic"]["pHs"] == pytest.approx(c_pHs, abs=3e-3)
    assert cc["classic"]["LSI"] == pytest.approx(c_lsi, abs=4e-3)
    assert cc["classic"]["LSI"] > cc["LSI"]
    assert cc["method_id"] == "with ion pairs" and "free-ion" in cc["method"]
    assert "total" in cc["classic"]["method"].lower()
    # the core's own saturation table agrees with its LSI (same model, same activities)
    calcite = next(r for r in out["saturation"] if r["id"] == "calcite")
    assert cc["LSI"] == pytest.approx(calcite["SI"], abs=1e-9)


# --------------------------------------------------------------------------------------
# CCPP, closed and open


@pytest.mark.parametrize("pairs", [False, True], ids=["no-pairs", "pairs"])
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
@pytest.mark.parametrize("t_C", [25.0, 60.0])
def test_ccpp_closed(t_C, water, pairs):
    """Closed-system CCPP and the pH after, against the reference solve of the 2330 C mass
    balances (Ca, DIC, alkalinity fall by x, x, 2x until SI = 0)."""
    Ca, C, K, Cl = water
    T = t_C + 273.15
    ref, pH_after = ccpp(T, Ca, C, K, Cl, pairs=pairs)
    cc = solve(scenario(t_C, Ca, C, K, Cl, complexes=pairs))["calcium_carbonate"]
    assert cc["CCPP_mg_per_L_as_CaCO3"] == pytest.approx(ref, rel=2e-3, abs=0.05)
    assert cc["pH_after_CCPP"] == pytest.approx(pH_after, abs=1e-3)
    assert (cc["CCPP_mg_per_L_as_CaCO3"] > 0) == (cc["LSI"] > 0)
    assert "CCPP_open_mg_per_L_as_CaCO3" not in cc


@pytest.mark.parametrize("pairs", [False, True], ids=["no-pairs", "pairs"])
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
@pytest.mark.parametrize("pCO2", [4.2e-4, 1e-2])
def test_ccpp_open(pCO2, water, pairs):
    """CCPP of the water open to CO2 (H2CO3* = K_H pCO2): Ca and alkalinity fall by x and 2x
    until SI = 0, against the reference solve; 25 °C."""
    Ca, C, K, Cl = water
    T = 298.15
    ref, pH_after = ccpp(T, Ca, C, K, Cl, pairs=pairs, pCO2=pCO2)
    cc = solve(scenario(25.0, Ca, C, K, Cl, complexes=pairs,
                        ccpp_open_CO2_partial_pressure_atm=pCO2))["calcium_carbonate"]
    assert cc["CCPP_open_mg_per_L_as_CaCO3"] == pytest.approx(ref, rel=2e-3, abs=0.05)
    assert cc["pH_after_CCPP_open"] == pytest.approx(pH_after, abs=1e-3)
    assert cc["CO2_partial_pressure_atm"] == pCO2


def test_ccpp_at_temperatures_is_the_heated_closed_water():
    """The rows at other temperatures heat the same closed water: pH, LSI and CCPP at 60 and
    80 °C against the reference solve of the same totals at that temperature."""
    Ca, C, K, Cl = HARD
    cc = solve(scenario(15.0, Ca, C, K, Cl, ccpp_temperatures_C=[60, 80]))["calcium_carbonate"]
    rows = cc["at_temperatures"]
    assert [r["temperature_C"] for r in rows] == pytest.approx([15.0, 60.0, 80.0])
    assert rows[0]["LSI"] == cc["LSI"] and rows[0]["CCPP_mg_per_L_as_CaCO3"] == cc["CCPP_mg_per_L_as_CaCO3"]
    for row in rows[1:]:
        T = row["temperature_C"] + 273.15
        sp = speciate(T, Ca, K, Cl, C_T=C, pairs=True)
        assert row["pH"] == pytest.approx(sp["pH"], abs=3e-3)
        assert row["LSI"] == pytest.approx(pairs_indices(T, sp)[1], abs=5e-3)
        ref, _ = ccpp(T, Ca, C, K, Cl, pairs=True)
        assert row["CCPP_mg_per_L_as_CaCO3"] == pytest.approx(ref, rel=5e-3)
    # hot water deposits more scale than cold (common practice: heaters and boilers scale)
    assert rows[0]["CCPP_mg_per_L_as_CaCO3"] < rows[1]["CCPP_mg_per_L_as_CaCO3"] < rows[2]["CCPP_mg_per_L_as_CaCO3"]


# --------------------------------------------------------------------------------------
# contract, tendency, missing data, scenario keys


def test_contract_keys_and_tendency():
    hard = solve(scenario(25.0, *HARD))["calcium_carbonate"]
    soft = solve(scenario(25.0, *SOFT))["calcium_carbonate"]
    for cc in (hard, soft):
        assert {"pHs", "LSI", "RSI", "CCPP_mg_per_L_as_CaCO3", "pH_after_CCPP", "method"} <= set(cc)
        assert cc["RSI"] == pytest.approx(2 * cc["pHs"] - cc["pH"], abs=1e-12)  # Ryznar (1944) definition
        assert cc["LSI"] == pytest.approx(cc["pH"] - cc["pHs"], abs=1e-12)      # Langelier (1936) definition
    assert hard["tendency"] == "deposit" and hard["CCPP_mg_per_L_as_CaCO3"] > 0
    assert soft["tendency"] == "dissolve" and soft["CCPP_mg_per_L_as_CaCO3"] < 0


def test_missing_calcium_or_carbonate_is_a_warning_not_an_error():
    no_ca = solve({"systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
                   "ions": [{"id": "sodium", "total": 2, "unit": "mmol/L"}]})
    assert no_ca["calcium_carbonate"] is None
    assert any("calcium carbonate indices" in w and "no calcium" in w for w in no_ca["warnings"])
    no_c = solve({"ions": [{"id": "calcium", "total": 1, "unit": "mmol/L"},
                           {"id": "chloride", "total": 2, "unit": "mmol/L"}]})
    assert no_c["calcium_carbonate"] is None
    assert any("calcium carbonate indices" in w and "no carbonate" in w for w in no_c["warnings"])
    neither = solve({"systems": [{"id": "acetic", "total": 1, "unit": "mmol/L"}]})
    assert neither["calcium_carbonate"] is None
    assert not any("calcium carbonate" in w for w in neither["warnings"])


@pytest.mark.parametrize("key, value", [
    ("ccpp_open_CO2_partial_pressure_atm", 0),
    ("ccpp_open_CO2_partial_pressure_atm", -1e-3),
    ("ccpp_temperatures_C", [60, 120]),
    ("ccpp_temperatures_C", list(range(9))),
    ("uncertainty", "yes"),
])
def test_scenario_keys_are_validated(key, value):
    with pytest.raises(InputError) as err:
        solve(scenario(25.0, *HARD, **{key: value}))
    assert err.value.field.startswith(key)


def test_measured_water_closes_on_the_measured_pH():
    """A lab report (pH, alkalinity) becomes a neutral water; the indices are at that pH."""
    out = solve({"measured": {"pH": 7.9, "alkalinity": {"value": 150, "unit": "mg/L as CaCO3"}},
                 "ions": [{"id": "calcium", "total": 60, "unit": "mg/L"}]})
    cc = out["calcium_carbonate"]
    assert cc["pH"] == pytest.approx(7.9, abs=1e-6)
    assert cc["LSI"] == pytest.approx(cc["pH"] - cc["pHs"], abs=1e-12)


# --------------------------------------------------------------------------------------
# uncertainty


def neutral_at_pH(T, Ca, C, K, Cl, pH):
    """Reference speciation at a fixed pH, made neutral with an inert anion or cation."""
    def charge(extra):
        return speciate(T, Ca, K + max(-extra, 0.0), Cl + max(extra, 0.0), C_T=C, pH=pH)["charge"]
    extra = brentq(charge, -0.1, 0.1, xtol=1e-18, rtol=1e-15, maxiter=500)
    return speciate(T, Ca, K + max(-extra, 0.0), Cl + max(extra, 0.0), C_T=C, pH=pH)


def test_uncertainty_ranges():
    """Each input moved by its uncertainty with the pH held at the measured value, against
    the reference water made neutral at that pH (pH +-0.05, calcium +-3 %, temperature
    +-1 °C). A shift d of log Ks moves LSI by -d exactly (LSI = log IAP - log Ks at a fixed
    composition); pK2 up lowers the LSI."""
    Ca, C, K, Cl = HARD
    cc = solve(scenario(25.0, Ca, C, K, Cl, uncertainty=True,
                        ccpp_open_CO2_partial_pressure_atm=4.2e-4))["calcium_carbonate"]
    u = cc["uncertainty"]
    names = [r["input"] for r in u["inputs"]]
    assert names == ["pH", "alkalinity", "calcium", "temperature", "calcite Ksp", "carbonate K2"]
    for key, rkey in (("LSI", "LSI_range"), ("pHs", "pHs_range"), ("RSI", "RSI_range"),
                      ("CCPP_mg_per_L_as_CaCO3", "CCPP_range_mg_per_L_as_CaCO3"),
                      ("CCPP_open_mg_per_L_as_CaCO3", "CCPP_open_range_mg_per_L_as_CaCO3")):
        lo, hi = u[rkey]
        assert lo < cc[key] < hi
        assert u["dominant"][key] in names
    rows = {r["input"]: r for r in u["inputs"]}
    pH0 = speciate(298.15, Ca, K, Cl, C_T=C)["pH"]
    refs = {
        "pH": [neutral_at_pH(298.15, Ca, C, K, Cl, pH0 + d) for d in (-0.05, 0.05)],
        "calcium": [neutral_at_pH(298.15, Ca * f, C, K, Cl, pH0) for f in (0.97, 1.03)],
        "temperature": [neutral_at_pH(298.15 + d, Ca, C, K, Cl, pH0) for d in (-1.0, 1.0)],
    }
    for name, (sp_lo, sp_hi) in refs.items():
        T_lo, T_hi = (297.15, 299.15) if name == "temperature" else (298.15, 298.15)
        assert rows[name]["LSI"][0] == pytest.approx(pairs_indices(T_lo, sp_lo)[1], abs=2e-3), name
        assert rows[name]["LSI"][1] == pytest.approx(pairs_indices(T_hi, sp_hi)[1], abs=2e-3), name
        assert rows[name]["pHs"][1] == pytest.approx(pairs_indices(T_hi, sp_hi)[0], abs=2e-3), name
    lo, hi = rows["calcite Ksp"]["LSI"]
    assert lo - cc["LSI"] == pytest.approx(0.02, abs=1e-6) and cc["LSI"] - hi == pytest.approx(0.02, abs=1e-6)
    lo, hi = rows["carbonate K2"]["LSI"]
    assert lo > cc["LSI"] > hi
    lo, hi = rows["alkalinity"]["LSI"]
    assert lo < cc["LSI"] < hi
    assert "uncertainty" not in solve(scenario(25.0, Ca, C, K, Cl))["calcium_carbonate"]


def test_a_ccpp_that_does_not_converge_leaves_the_indices(monkeypatch):
    """If the CCPP solve fails, the water's result and its pHs/LSI/RSI are still returned,
    with the CCPP null and a note saying why."""
    from acidscape.errors import ConvergenceError
    from acidscape.operations import indices

    def fail(*args, **kwargs):
        raise ConvergenceError("the equilibrium search did not converge", field=None)

    monkeypatch.setattr(indices, "_ccpp", fail)
    out = solve(scenario(25.0, *HARD, ccpp_temperatures_C=[60]))
    cc = out["calcium_carbonate"]
    assert cc["LSI"] is not None and cc["CCPP_mg_per_L_as_CaCO3"] is None and cc["pH_after_CCPP"] is None
    assert any("CCPP not computed" in n for n in cc["notes"])
    assert any("CCPP not computed" in n for n in cc["at_temperatures"][1]["notes"])


def test_a_water_that_cannot_be_balanced_at_its_pH_is_a_warning(monkeypatch):
    """A water given at a fixed pH is held there by an inert ion corrected until the charge
    balance closes; where it does not close (here: one solve allowed, the correction needs
    more), the indices are left out with a warning saying why, and the water's own result at
    its pH stays (a behaviour check: no reference number is involved)."""
    from acidscape.boundary.api import read_water, water_model
    from acidscape.errors import ConvergenceError
    from acidscape.operations import indices

    at_pH = indices._at_pH
    monkeypatch.setattr(indices, "_at_pH", lambda *a, **k: at_pH(*a, **{**k, "tries": 1}))
    out = solve(scenario(25.0, *HARD, pH=7.4))
    assert out["calcium_carbonate"] is None
    assert out["pH"] == pytest.approx(7.4, abs=1e-9)
    assert any(w.startswith("calcium carbonate indices not computed: The calculation did not settle")
               for w in out["warnings"])
    parsed, _ = read_water(scenario(25.0, *HARD, pH=7.4))  # the method's own account, for developers
    wm = water_model(parsed)
    with pytest.raises(ConvergenceError) as err:
        at_pH(indices._recipe(wm, wm.solve(pH=7.4), ()), 7.4, None, tries=1)
    assert err.value.detail == "the water could not be balanced at pH 7.4"
    monkeypatch.setattr(indices, "_at_pH", at_pH)
    assert solve(scenario(25.0, *HARD, pH=7.4))["calcium_carbonate"]["LSI"] is not None
