"""The "buffer" method: buffer intensity of a whole water over pH, and capacity between two pH.

Checks:
- beta is the pH derivative of the base a closed water needs to reach each pH: an
  independent charge balance written here (numpy product-form alpha fractions via
  tests/reference.py) differentiated numerically by mpmath.diff (mpmath, a general
  reference library), at the mixed constants and activity coefficients ``solve`` reports;
- the capacity between two pH values equals the difference of that charge balance;
- the maximum of a monoprotic buffer, (ln 10 / 4) C = 0.576 C at pH = pKa (Van Slyke 1922;
  Stumm & Morgan, Aquatic Chemistry 3rd ed. §3.6, from memory);
- 50.04 mg CaCO3 per meq (Standard Methods 2320 B, with IUPAC 2021 atomic weights);
- bad input gives an error naming the field.
"""

from __future__ import annotations

import json
import math

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from acidscape.boundary import api
from acidscape.boundary import dispatch
from acidscape.boundary.api import buffer as buffer_curve_of_water
from reference import alphas_ref

import reference_model


def _base_needed(pH, result):
    """Strong base per litre that brings the closed water to ``pH`` at fixed totals and I [eq/L].

    Charge balance: [H+] - [OH-] + S + sum C_T zbar + C_B = 0 with S the strong ions' charge,
    so C_B(pH) = [OH-] - [H+] - S - sum C_T zbar(pH). Written here from the textbook forms,
    not from the core's functions.
    """
    pH = float(pH)
    gH = result["water_ions"][0]["activity_coefficient"]
    gOH = result["water_ions"][1]["activity_coefficient"]
    H = 10.0 ** (-pH) / gH
    OH = 10.0 ** (pH - result["pKw"]) / gOH
    S = sum(i["charge"] * i["concentration_M"] for i in result["ions"])
    zsum = 0.0
    for s in result["systems"]:
        charges = [r["charge"] for r in result["species"] if r["system"] == s["id"]]
        a = np.asarray(alphas_ref(pH, s["pKa_conditional"]), dtype=float)
        zsum += s["total_M"] * float(np.dot(a, charges))
    return OH - H - S - zsum


WATERS = [
    # a bicarbonate water with phosphate and ammonium, Davies activities (common practice
    # for natural waters): 2 mmol/L NaHCO3-like alkalinity; complexes off, as the reference
    # charge balance above is the acid-base one
    {"complexes": False, "systems": [{"id": "carbonate", "total": 2.2, "unit": "mmol/L"},
                 {"id": "phosphate", "total": 0.1, "unit": "mmol/L"},
                 {"id": "ammonium", "total": 0.2, "unit": "mmol/L"}],
     "ions": [{"id": "Na+", "total": 2.0, "unit": "mmol/L"}, {"id": "Cl-", "total": 0.3, "unit": "mmol/L"}]},
    # the same described by measured pH and alkalinity, at 12 °C
    {"temperature_C": 12, "complexes": False,
     "measured": {"pH": 7.6, "alkalinity": {"value": 120, "unit": "mg/L as CaCO3"}}},
    # ideal activities, acetic acid alone
    {"activity": "ideal", "systems": [{"id": "acetic", "total": 0.01}]},
]


@pytest.mark.parametrize("scenario", WATERS)
def test_beta_is_the_derivative_of_the_charge_balance(scenario):
    out = buffer_curve_of_water({"scenario": scenario, "pH_min": 3, "pH_max": 11, "points": 17})
    res = api.solve(scenario)
    for pH, beta in zip(out["pH"], out["beta_eq_per_L_per_pH"]):
        fd = float(mpmath.diff(lambda x: _base_needed(x, res), pH, h=1e-4))
        assert math.isclose(beta, fd, rel_tol=1e-6, abs_tol=1e-12), (pH, beta, fd)
        assert out["beta_mmol_per_L_per_pH"][out["pH"].index(pH)] == pytest.approx(beta * 1e3, rel=1e-15)
    # the value at the water's pH is the one solve reports
    assert out["water_pH"] == pytest.approx(res["pH"], abs=1e-12)
    assert out["beta_at_water_pH_eq_per_L_per_pH"] == pytest.approx(res["buffer_intensity_eq_per_L_per_pH"],
                                                                      rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(3.0, 11.0), p2=st.floats(3.0, 11.0))
def test_capacity_is_the_difference_of_the_charge_balance(p1, p2):
    scenario = WATERS[0]
    out = buffer_curve_of_water({"scenario": scenario, "points": 2, "capacity": {"from_pH": p1, "to_pH": p2}})
    res = api.solve(scenario)
    want = _base_needed(p2, res) - _base_needed(p1, res)
    cap = out["capacity"]
    assert math.isclose(cap["base_eq_per_L"], want, rel_tol=1e-9, abs_tol=1e-14)
    assert cap["base_meq_per_L"] == pytest.approx(cap["base_eq_per_L"] * 1e3, rel=1e-15)
    # 50.04 mg/L as CaCO3 per meq/L: half of CaCO3's 100.087 g/mol (IUPAC 2021 weights;
    # Standard Methods 2320 B rounds it to 50)
    assert cap["as_CaCO3_mg_per_L"] == pytest.approx(cap["base_meq_per_L"] * 50.04, rel=1e-3)


def test_monoprotic_maximum_is_0576_C():
    # 0.1 mol/L acid, pKa 7 by a custom system, ideal activities: beta peaks at pH = pKa with
    # (ln 10 / 4) C = 0.0576 eq/(L pH) (Van Slyke 1922; Stumm & Morgan §3.6, from memory)
    sc = {"activity": "ideal", "pH": 7.0,
          "systems": [{"custom": {"name": "test acid", "pKa": [7.0], "charge_most_protonated": 0},
                       "total": 0.1, "unit": "mol/L"}]}
    out = buffer_curve_of_water({"scenario": sc, "pH_min": 5, "pH_max": 9, "points": 401})
    k = max(range(len(out["pH"])), key=lambda i: out["beta_eq_per_L_per_pH"][i])
    assert out["pH"][k] == pytest.approx(7.0, abs=1e-9)
    assert out["beta_at_water_pH_eq_per_L_per_pH"] == pytest.approx(0.1 * math.log(10) / 4, rel=1e-5)


def test_through_handle_and_bad_input():
    ok = json.loads(dispatch.handle("buffer", json.dumps({"scenario": WATERS[0], "points": 5})))
    assert ok["ok"] and len(ok["result"]["pH"]) == 5
    for params, field in [
        ({"points": 5}, "scenario"),
        ({"scenario": WATERS[0], "pH_min": 9, "pH_max": 4}, "pH_max"),
        ({"scenario": WATERS[0], "points": 1}, "points"),
        ({"scenario": WATERS[0], "capacity": {"from_pH": 5}}, "capacity.to_pH"),
        ({"scenario": WATERS[0], "capacity": {"from_pH": "x", "to_pH": 6}}, "capacity.from_pH"),
        ({"scenario": WATERS[0], "capacity": [4, 5]}, "capacity"),
    ]:
        err = json.loads(dispatch.handle("buffer", json.dumps(params)))
        assert not err["ok"], params
        assert err["error"]["field"] == field, err
        assert err["error"]["message"], err


HARD = {"temperature_C": 18, "activity": "davies",
        "systems": [{"id": "carbonate", "total": 4.0, "unit": "mmol/L"}, {"id": "sulfate", "total": 1.0, "unit": "mmol/L"},
                    {"id": "phosphate", "total": 0.05, "unit": "mmol/L"}],
        "ions": [{"id": "calcium", "total": 2.0, "unit": "mmol/L"}, {"id": "magnesium", "total": 1.0, "unit": "mmol/L"},
                 {"id": "sodium", "total": 2.0, "unit": "mmol/L"}, {"id": "chloride", "total": 2.1, "unit": "mmol/L"}]}


@pytest.mark.parametrize("solver", ["acidscape", "reference"])
def test_beta_with_complexes_is_the_derivative_of_the_charge_at_fixed_pH(solver):
    # With ion pairs (CaHCO3+, CaCO3°, MgHCO3+, CaHPO4° ...) beta is still dC_B/dpH of the closed
    # water at its ionic strength: the base per litre that holds pH is minus the charge the
    # water leaves at that pH, so beta = -d(charge)/dpH, differentiated numerically by mpmath.diff
    # (a general reference library) over solves at fixed pH and ionic strength, by acidscape.solve
    # itself and by the independent scipy reference (tests/reference_model.py).
    res = api.solve(HARD)
    I = res["ionic_strength_M"]

    def charge(pH):
        sc = dict(HARD, pH=float(pH), ionic_strength_M=I)
        if solver == "acidscape":
            return api.solve(sc)["charge_balance_residual_eq_per_L"]
        return reference_model.solve(sc)["charge_balance_eq_per_L"]

    out = buffer_curve_of_water({"scenario": HARD, "pH_min": 5.0, "pH_max": 10.0, "points": 6})
    for pH, beta in zip(out["pH"] + [res["pH"]], out["beta_eq_per_L_per_pH"] + [out["beta_at_water_pH_eq_per_L_per_pH"]]):
        fd = -float(mpmath.diff(charge, pH, h=1e-3))
        assert beta == pytest.approx(fd, rel=2e-6), pH
    # the capacity between two pH values is the difference of those charges
    cap = buffer_curve_of_water({"scenario": HARD, "points": 2, "capacity": {"from_pH": 6.0, "to_pH": 9.0}})
    assert cap["capacity"]["base_eq_per_L"] == pytest.approx(charge(6.0) - charge(9.0), rel=1e-9)
