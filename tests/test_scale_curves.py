"""Curves of the calcium carbonate indices (acidscape.operations.scale_curves, api.scale_curves)
against an independent implementation.

The reference is the numpy/scipy one of tests/test_indices.py (it shares no code with the
core): the Standard Methods 2330 B formula (23rd ed. 2017, from memory) pHs = pK2 - pKs +
p[Ca2+] + p[HCO3-] + 5 pfm with total calcium and bicarbonate from total alkalinity, the
free-ion form with the reference speciation (ion pairs CaHCO3+, CaCO3°, CaOH+), the 2330 C
mass balances for the CCPP (calcium, DIC and alkalinity fall by x, x and 2x until SI = 0),
Plummer & Busenberg (1982) constants (from memory) and the IAPWS pKw; brentq root finding.
Each check names its source. The waters are the invented test waters of test_indices.py
(calcium, carbonate, potassium and chloride only); no preset is used.
"""

from __future__ import annotations

import json
import math

import pytest

pytest.importorskip("scipy.optimize")
pytest.importorskip("iapws")

from scipy.optimize import brentq  # noqa: E402

from acidscape.boundary import dispatch  # noqa: E402
from acidscape.boundary.api import scale_curves, solve  # noqa: E402
from acidscape.errors import InputError  # noqa: E402
from test_indices import HARD, SOFT, ccpp, pairs_indices, scenario, sm2330_indices, speciate  # noqa: E402


def neutral(T, Ca, C, K, Cl, pH, *, pairs):
    """Reference speciation at a fixed pH, made neutral with an inert anion or cation (the
    water's calcium and DIC kept: the pH set with a strong acid or base)."""
    def charge(extra):
        return speciate(T, Ca, K + max(-extra, 0.0), Cl + max(extra, 0.0), C_T=C, pH=pH, pairs=pairs)["charge"]
    extra = brentq(charge, -0.2, 0.2, xtol=1e-18, rtol=1e-15, maxiter=500)
    return speciate(T, Ca, K + max(-extra, 0.0), Cl + max(extra, 0.0), C_T=C, pH=pH, pairs=pairs)


def curves(sc, **params):
    return scale_curves({"scenario": sc, **params})


@pytest.mark.parametrize("t_C", [10.0, 25.0, 60.0])
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
def test_saturation_against_pH_without_ion_pairs_is_the_2330B_formula(t_C, water):
    """No ion pairs: the LSI at each pH equals the 2330 B formula (total calcium, bicarbonate
    from the total alkalinity of the water neutralised at that pH, pfm from the Davies
    equation at its ionic strength), worked by the reference (Standard Methods 2330 B)."""
    Ca, C, K, Cl = water
    T = t_C + 273.15
    out = curves(scenario(t_C, Ca, C, K, Cl, complexes=False), pH={"from": 6.5, "to": 9.5, "points": 7},
                 temperature={"points": 2}, band=False)["saturation_against_pH"]
    assert out["pH"] == pytest.approx([6.5, 7.0, 7.5, 8.0, 8.5, 9.0, 9.5])
    for pH, lsi in zip(out["pH"], out["LSI"]):
        sp = neutral(T, Ca, C, K, Cl, pH, pairs=False)
        alk = sp["HCO3"] + 2 * sp["CO3"] + sp["OH"] - sp["H"]
        assert lsi == pytest.approx(sm2330_indices(T, pH, Ca, alk, sp["I"])[1], abs=3e-3), pH


@pytest.mark.parametrize("t_C", [10.0, 25.0, 60.0])
def test_saturation_against_pH_with_ion_pairs(t_C):
    """With ion pairs: the free-ion activities of the reference speciation (CaHCO3+, CaCO3°,
    CaOH+; Plummer & Busenberg 1982) in the 2330 B formula, at each pH of the grid."""
    Ca, C, K, Cl = HARD
    T = t_C + 273.15
    out = curves(scenario(t_C, Ca, C, K, Cl), pH={"from": 6.0, "to": 10.0, "points": 5},
                 temperature={"points": 2}, band=False)["saturation_against_pH"]
    for pH, lsi in zip(out["pH"], out["LSI"]):
        sp = neutral(T, Ca, C, K, Cl, pH, pairs=True)
        assert lsi == pytest.approx(pairs_indices(T, sp)[1], abs=3e-3), pH
    # the LSI rises with pH at fixed calcium and DIC (more carbonate; common practice)
    assert all(b > a for a, b in zip(out["LSI"], out["LSI"][1:]))


def test_the_water_lies_on_its_curves():
    """The water's own LSI and CCPP (api.solve) are points of the curves: same model, same
    water (a consistency check of the two entry points, not of the chemistry)."""
    Ca, C, K, Cl = SOFT
    sc = scenario(15.0, Ca, C, K, Cl)
    cc = solve(sc)["calcium_carbonate"]
    pH = cc["pH"]
    out = curves(sc, pH={"from": pH - 1, "to": pH + 1, "points": 3}, temperature={"from_C": 5, "to_C": 25,
                                                                                  "points": 3}, band=False)
    si, cp = out["saturation_against_pH"], out["ccpp_against_temperature"]
    assert si["water"]["LSI"] == pytest.approx(cc["LSI"], abs=1e-9)
    assert si["LSI"][1] == pytest.approx(cc["LSI"], abs=1e-7)
    assert cp["CCPP_mg_per_L_as_CaCO3"][1] == pytest.approx(cc["CCPP_mg_per_L_as_CaCO3"], abs=1e-6)
    assert cp["water"]["CCPP_mg_per_L_as_CaCO3"] == pytest.approx(cc["CCPP_mg_per_L_as_CaCO3"], abs=1e-9)


def test_a_given_pH_is_kept_on_the_curve():
    """A water given at a fixed pH: its point on the curve is that pH and the LSI of solve."""
    Ca, C, K, Cl = HARD
    sc = scenario(25.0, Ca, C, K, Cl, pH=7.4)
    cc = solve(sc)["calcium_carbonate"]
    si = curves(sc, pH={"from": 7.0, "to": 7.8, "points": 5}, temperature={"points": 2},
                band=False)["saturation_against_pH"]
    assert si["water"] == pytest.approx({"pH": 7.4, "LSI": cc["LSI"]}, abs=1e-7)
    assert si["LSI"][2] == pytest.approx(cc["LSI"], abs=1e-7)


@pytest.mark.parametrize("pairs", [False, True], ids=["no-pairs", "pairs"])
@pytest.mark.parametrize("water", [HARD, SOFT], ids=["hard", "soft"])
def test_ccpp_against_temperature_is_the_heated_closed_water(water, pairs):
    """CCPP at 10, 25 and 60 °C of the same closed water against the reference solve of the
    2330 C mass balances at that temperature (Standard Methods 2330 C; Plummer & Busenberg)."""
    Ca, C, K, Cl = water
    out = curves(scenario(25.0, Ca, C, K, Cl, complexes=pairs), pH={"points": 2},
                 temperature={"from_C": 10, "to_C": 60, "points": 11}, band=False)["ccpp_against_temperature"]
    temps = out["temperature_C"]
    for t_C in (10.0, 25.0, 60.0):
        k = min(range(len(temps)), key=lambda i: abs(temps[i] - t_C))
        assert temps[k] == pytest.approx(t_C)
        T = t_C + 273.15
        ref, pH_after = ccpp(T, Ca, C, K, Cl, pairs=pairs)
        assert out["CCPP_mg_per_L_as_CaCO3"][k] == pytest.approx(ref, rel=5e-3, abs=0.05), t_C
        assert out["pH_after_CCPP"][k] == pytest.approx(pH_after, abs=2e-3), t_C
        assert out["pH"][k] == pytest.approx(speciate(T, Ca, K, Cl, C_T=C, pairs=pairs)["pH"], abs=3e-3)


def test_bands_bracket_the_curves_and_match_the_indices_ranges():
    """The band holds the curve; at the water's own pH it is the quadrature of the indices'
    uncertainty rows without the pH row (acidscape.operations.indices, tested against the
    reference in test_indices.py); the calcite Ksp spread alone gives it at least that width."""
    Ca, C, K, Cl = HARD
    sc = scenario(25.0, Ca, C, K, Cl)
    cc = solve({**sc, "uncertainty": True})["calcium_carbonate"]
    pH = cc["pH"]
    out = curves(sc, pH={"from": pH - 0.6, "to": pH + 0.6, "points": 7},
                 temperature={"from_C": 10, "to_C": 90, "points": 9})
    si, cp = out["saturation_against_pH"], out["ccpp_against_temperature"]
    spread = next(r for r in cc["uncertainty"]["inputs"] if r["input"] == "calcite Ksp")["LSI"]
    ksp = (spread[0] - spread[1]) / 2
    for lo, v, hi in zip(si["LSI_low"], si["LSI"], si["LSI_high"]):
        assert lo <= v - ksp + 1e-12 and hi >= v + ksp - 1e-12
    up = down = 0.0
    for row in cc["uncertainty"]["inputs"]:
        if row["input"] == "pH":
            continue
        d = [x - cc["LSI"] for x in row["LSI"]]
        up += max(0.0, *d) ** 2
        down += max(0.0, *[-x for x in d]) ** 2
    assert si["LSI_high"][3] - si["LSI"][3] == pytest.approx(math.sqrt(up), rel=1e-6)
    assert si["LSI"][3] - si["LSI_low"][3] == pytest.approx(math.sqrt(down), rel=1e-6)
    assert set(si["inputs"]) == {"alkalinity", "calcium", "temperature", "carbonate K2", "calcite Ksp"}
    for lo, v, hi in zip(cp["CCPP_low"], cp["CCPP_mg_per_L_as_CaCO3"], cp["CCPP_high"]):
        assert lo < v < hi
    assert set(cp["inputs"]) == {"pH", "alkalinity", "calcium", "carbonate K2", "calcite Ksp"}
    assert not any("extrapolated" in n for n in cp["notes"])  # 10-90 °C: inside the fitted range


def test_bad_input_is_named():
    """A water without calcium, an empty range and a bad band flag each name their field."""
    sc = {"systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}]}
    with pytest.raises(InputError, match="no calcium") as err:
        curves(sc)
    assert err.value.field == "scenario"
    Ca, C, K, Cl = SOFT
    good = scenario(25.0, Ca, C, K, Cl)
    for params, field in (({"pH": {"from": 9, "to": 7}}, "pH.to"),
                          ({"temperature": {"from_C": 50, "to_C": 20}}, "temperature.to_C"),
                          ({"temperature": {"to_C": 120}}, "temperature.to_C"),
                          ({"band": "yes"}, "band")):
        reply = json.loads(dispatch.handle("scale_curves", json.dumps({"scenario": good, **params})))
        assert not reply["ok"] and reply["error"]["field"] == field, params
