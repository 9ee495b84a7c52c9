"""Treatment jobs: doses to a target LSI or CCPP, sequences, blends, lime softening (issue 9).

Outside checks used here:

* tests/reference_model.py, the independent numpy/scipy equilibrium solver (shares only the
  data files, Kw and the Debye-Hückel A with the core): the water after a dose, a blend or a
  softening step is solved again there and its calcite saturation index (= LSI with free-ion
  activities, Standard Methods 2330 B, from memory) or its calcite precipitated at equilibrium
  (= the closed CCPP, 2330 C) is compared with the target;
* the textbook lime-soda stoichiometry worked by hand below (Hammer & Hammer, Water and
  Wastewater Technology, softening chapter; the water analysis is recalled from memory, the
  doses are worked here with that text's rules, equivalent weights from the IUPAC atomic
  weights);
* conservation of mass (each component's amount in the water and the solids equals what the
  raw water and the chemicals brought), and stoichiometry (a dose of phosphoric acid adds its
  moles of orthophosphate);
* the sequence of two steps against the same two doses made one after the other through the
  boundary (the first by the dosing module's own dose to pH, an independent implementation).

The waters are made-up compositions chosen for each check (no demo preset is used); every
expected number comes from one of the sources above.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

import reference_model
from acidscape.boundary.api import solve
from acidscape.boundary.dispatch import handle
from acidscape.operations.softening import stoichiometric_softening

MM = "mmol/L"
# IUPAC 2021 standard atomic weights (Ca 40.078, Mg 24.305, C 12.011, O 15.999, H 1.008,
# Na 22.990, P 30.974, S 32.06, Cl 35.45)
A = {"Ca": 40.078, "Mg": 24.305, "C": 12.011, "O": 15.999, "H": 1.008, "Na": 22.990, "P": 30.974, "S": 32.06,
     "Cl": 35.45}
M_CACO3 = A["Ca"] + A["C"] + 3 * A["O"]
M_CAO = A["Ca"] + A["O"]
M_NA2CO3 = 2 * A["Na"] + A["C"] + 3 * A["O"]
M_CO2 = A["C"] + 2 * A["O"]
M_H3PO4 = 3 * A["H"] + A["P"] + 4 * A["O"]
M_PO4 = A["P"] + 4 * A["O"]

# A moderately hard, low-alkalinity water (charge-balanced by its entries, no balancing ion):
# Ca 1.0, Mg 0.3, Na 0.5 mmol/L; DIC 1.6, sulfate 0.4, chloride 0.9 mmol/L; 12 °C.
WATER = {"temperature_C": 12,
         "systems": [{"id": "carbonate", "total": 1.6, "unit": MM}, {"id": "sulfate", "total": 0.4, "unit": MM}],
         "ions": [{"id": "calcium", "total": 1.0, "unit": MM}, {"id": "magnesium", "total": 0.3, "unit": MM},
                  {"id": "sodium", "total": 0.5, "unit": MM}, {"id": "chloride", "total": 0.9, "unit": MM}]}


def ok(method, params):
    """The result of a boundary call through handle (as the page calls it), or fail."""
    out = json.loads(handle(method, json.dumps(params)))
    assert out["ok"], out
    return out["result"]


def err(method, params):
    out = json.loads(handle(method, json.dumps(params)))
    assert not out["ok"], "expected an error"
    return out["error"]


def ref_solve(scenario, **extra):
    """The independent reference solver on a scenario the core wrote (mol/L totals)."""
    sc = {k: v for k, v in scenario.items() if k in reference_model.SCENARIO_KEYS}
    sc.update(extra)
    return reference_model.solve(sc)


# --------------------------------------------------------------------------------------
# dose to a target LSI or CCPP, checked on the dosed water by the independent solver


@pytest.mark.parametrize("chemical,target", [("NaOH", 0.3), ("Na2CO3", 0.1), ("Ca(OH)2", 0.5), ("CO2", -0.9),
                                             ("HCl", -1.2)])
def test_dose_to_target_LSI_checked_by_the_reference_solver(chemical, target):
    out = ok("dose", {"scenario": WATER, "chemical": chemical, "target_LSI": target})
    assert out["status"] == "dosed" and out["dose_mmol_per_L"] > 0
    after = out["scenario_after"]
    # the reference solver's calcite saturation index of the dosed water is its LSI (SM 2330 B
    # with free-ion activities equals SI of calcite)
    assert ref_solve(after)["saturation"]["calcite"] == pytest.approx(target, abs=2e-6)
    # and the boundary's own description of the same water agrees
    assert solve(after)["calcium_carbonate"]["LSI"] == pytest.approx(target, abs=2e-6)
    # the dose is what was added: the totals after = before + dose x stoichiometry (mol/L)
    before = {"calcium": 1.0e-3, "sodium": 0.5e-3, "carbonate": 1.6e-3, "chloride": 0.9e-3}
    add = {"NaOH": {"sodium": 1}, "Na2CO3": {"sodium": 2, "carbonate": 1}, "Ca(OH)2": {"calcium": 1},
           "CO2": {"carbonate": 1}, "HCl": {"chloride": 1}}[chemical]
    totals = {e["id"]: e["total"] for e in after["systems"] + after["ions"]}
    d = out["dose_mmol_per_L"] * 1e-3
    for comp, n in add.items():
        assert totals[comp] == pytest.approx(before[comp] + n * d, rel=1e-12)


def test_dose_to_target_CCPP_is_the_calcite_the_reference_solver_precipitates():
    # CCPP (SM 2330 C, closed) = calcite precipitated when the water comes to equilibrium with it
    out = ok("dose", {"scenario": WATER, "chemical": "NaOH", "target_CCPP": 4.0, "flow": 10000, "flow_unit": "m3/d",
                      "strength_pct": 50, "density_kg_per_L": 1.525})
    assert out["status"] == "dosed"
    eq = ref_solve(out["scenario_after"], precipitate=["calcite"])
    assert eq["precipitated"]["calcite"] * M_CACO3 * 1e3 == pytest.approx(4.0, abs=2e-5)
    assert out["reached"]["CCPP_mg_per_L_as_CaCO3"] == pytest.approx(4.0, abs=1e-5)
    # plant arithmetic: mg/L x L/d x 1e-6 = kg/d; product = pure / strength; L/h = kg/d / density / 24
    mg = out["dose_mmol_per_L"] * 39.997
    assert out["dose_mg_per_L"] == pytest.approx(mg, rel=1e-12)
    assert out["pure_chemical_kg_per_d"] == pytest.approx(mg * 1e7 * 1e-6, rel=1e-12)
    assert out["product"]["feed_kg_per_d"] == pytest.approx(mg / 0.5 * 1e7 * 1e-6, rel=1e-12)
    assert out["product"]["feed_L_per_h"] == pytest.approx(mg / 0.5 * 10 / 1.525 / 24, rel=1e-12)
    assert any("jar" in c for c in out["cautions"]) and any("protective" in c for c in out["cautions"])


def test_dose_to_target_with_calcite_forming_reports_it_and_the_dose_without():
    # lime to pH 10.3 on a calcium bicarbonate water, calcite allowed: the water after is
    # saturated with calcite (reference solver, SI 0) and Ca + carbonate balance
    sc = {"temperature_C": 20, "systems": [{"id": "carbonate", "total": 4.0, "unit": MM}],
          "ions": [{"id": "calcium", "total": 2.0, "unit": MM}]}
    out = ok("dose", {"scenario": sc, "chemical": "Ca(OH)2", "target_CCPP": -2.0, "precipitate": []})
    assert out["precipitated"] == []
    from acidscape.boundary.scenario import read_scenario
    from acidscape.operations.closure import close_scenario
    from acidscape.operations.treatment import dose_to_target

    res = dose_to_target(close_scenario(sc, read_scenario(sc)), "Ca(OH)2", "target_pH", 10.3,
                         precipitate=["calcite"], flow=2, flow_unit="MGD")
    formed = {f["id"]: f for f in res["precipitated"]}
    n = formed["calcite"]["mol_per_L"]
    d = res["dose_mmol_per_L"] * 1e-3
    after = {e["id"]: e["total"] for e in res["scenario_after"]["systems"] + res["scenario_after"]["ions"]}
    assert after["calcium"] + n == pytest.approx(2.0e-3 + d, rel=1e-10)
    assert after["carbonate"] + n == pytest.approx(4.0e-3, rel=1e-10)
    ref = ref_solve(res["scenario_after"])
    assert ref["saturation"]["calcite"] == pytest.approx(0.0, abs=1e-6)
    assert ref["pH"] == pytest.approx(10.3, abs=1e-6)
    # mg/L and kg/d of the solid: mol/L x M(CaCO3); x flow (2 MGD = 2 x 3.785411784e6 L/d, NIST)
    assert formed["calcite"]["mg_per_L"] == pytest.approx(n * M_CACO3 * 1e3, rel=1e-4)
    assert formed["calcite"]["kg_per_d"] == pytest.approx(formed["calcite"]["mg_per_L"] * 2 * 3.785411784e6 * 1e-6,
                                                          rel=1e-12)
    # the dose that accounts for the calcite is larger than the dose to the same pH without it
    without = res["precipitation"]["dose_without_precipitation_mmol_per_L"]
    assert without is not None and without < res["dose_mmol_per_L"]


def test_target_already_met_needs_no_dose():
    base = solve(WATER)["calcium_carbonate"]["LSI"]
    assert base < -0.3
    # NaOH raises the LSI: a target below the water's LSI is already met
    out = ok("dose", {"scenario": WATER, "chemical": "NaOH", "target_LSI": base - 0.2})
    assert out["status"] == "no dose needed" and out["dose_mg_per_L"] == 0.0
    assert "already" in out["message"]
    assert out["water_after"]["LSI"] == pytest.approx(base, abs=1e-9)
    # exactly at the target
    out = ok("dose", {"scenario": WATER, "chemical": "CO2", "target_LSI": base})
    assert out["status"] == "no dose needed" and out["dose_mmol_per_L"] == 0.0


@pytest.mark.parametrize("chemical,target,side", [("NaOH", 3.0, "above"), ("CO2", -4.0, "below")])
def test_unreachable_LSI_names_the_field_the_side_and_the_best_value(chemical, target, side):
    e = err("dose", {"scenario": WATER, "chemical": chemical, "target_LSI": target})
    assert e["type"] == "UnreachableError" and e["field"] == "target_LSI"
    det = e["detail"]
    assert det["direction"] == side and det["chemical"] == chemical
    assert (det["best_value"] < target) if side == "above" else (det["best_value"] > target)
    # the best value is what the model gives at the reported dose (a fixed dose, solved again
    # with the solids an LSI target lets form by default: brucite)
    mg = det["best_dose_mmol_per_L"] * {"NaOH": 39.997, "CO2": M_CO2}[chemical]
    again = ok("treat", {"scenario": WATER, "steps": [{"chemical": chemical, "dose_mg_per_L": mg,
                                                       "precipitate": ["brucite"]}]})
    assert again["water_after"]["LSI"] == pytest.approx(det["best_value"], abs=1e-6)
    if chemical == "CO2":  # stopped by the CO2 solubility under 1 atm (Henry's law)
        assert "1 atm" in e["message"]


def test_unreachable_with_calcite_forming_says_why():
    e = err("dose", {"scenario": WATER, "chemical": "NaOH", "target_LSI": 0.4, "precipitate": ["calcite"]})
    assert e["field"] == "target_LSI" and "calcite is allowed to form" in e["message"]
    assert e["detail"]["best_value"] == pytest.approx(0.0, abs=1e-9)


def test_dose_input_errors():
    assert err("dose", {"scenario": WATER, "chemical": "NaOH", "target_LSI": 0.2, "target_CCPP": 3})["field"] == \
        "target_CCPP"
    assert err("dose", {"scenario": WATER, "chemical": "NaOH", "target_LSI": 9})["field"] == "target_LSI"
    assert err("dose", {"scenario": WATER, "chemical": "NaOH", "target_LSI": 0.2,
                        "precipitate": ["chalk"]})["field"] == "precipitate[0]"
    no_ca = {"systems": [{"id": "carbonate", "total": 1, "unit": MM}],
             "ions": [{"id": "sodium", "total": 1, "unit": MM}]}
    assert err("dose", {"scenario": no_ca, "chemical": "NaOH", "target_LSI": 0.2})["field"] == "target_LSI"


# --------------------------------------------------------------------------------------
# sequences


def test_sequence_equals_the_steps_applied_by_hand():
    # step 1: NaOH to pH 8.3 (no solid allowed); step 2: CO2 to LSI -0.4
    steps = [{"chemical": "NaOH", "target_pH": 8.3, "precipitate": []}, {"chemical": "CO2", "target_LSI": -0.4}]
    seq = ok("treat", {"scenario": WATER, "steps": steps})
    # by hand: the dosing module's own dose to pH (an independent implementation), then the
    # second dose on the water it leaves
    first = ok("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.3, "precipitate": []})
    assert seq["steps"][0]["dose_mmol_per_L"] == pytest.approx(first["dose_mmol_per_L"], rel=1e-7)
    second = ok("dose", {"scenario": first["scenario_after"], "chemical": "CO2", "target_LSI": -0.4})
    assert seq["steps"][1]["dose_mmol_per_L"] == pytest.approx(second["dose_mmol_per_L"], rel=1e-7)
    assert seq["water_after"]["pH"] == pytest.approx(second["water_after"]["pH"], abs=1e-7)
    assert ref_solve(seq["scenario_after"])["saturation"]["calcite"] == pytest.approx(-0.4, abs=2e-6)
    # each step shows the water after it
    assert seq["steps"][0]["water_after"]["pH"] == pytest.approx(8.3, abs=1e-6)
    assert seq["chemicals"][0]["id"] == "NaOH" and seq["chemicals"][1]["id"] == "CO2"


def test_sequence_with_precipitation_equals_the_steps_applied_by_hand():
    from acidscape.boundary.scenario import read_scenario
    from acidscape.operations.closure import close_scenario
    from acidscape.operations.treatment import dose_to_target, treat

    def closed(sc):
        return close_scenario(sc, read_scenario(sc))

    sc = dict(WATER, systems=[{"id": "carbonate", "total": 3.0, "unit": MM},
                              {"id": "sulfate", "total": 0.4, "unit": MM}],
              ions=[{"id": "calcium", "total": 1.7, "unit": MM}, {"id": "magnesium", "total": 0.3, "unit": MM},
                    {"id": "sodium", "total": 0.5, "unit": MM}, {"id": "chloride", "total": 0.9, "unit": MM}])
    seq = treat(closed(sc), [{"chemical": "Ca(OH)2", "target_pH": 10.2}, {"chemical": "CO2", "target_LSI": -0.2}],
                flow=100, flow_unit="L/s")
    one = dose_to_target(closed(sc), "Ca(OH)2", "target_pH", 10.2)
    two = dose_to_target(closed(one["scenario_after"]), "CO2", "target_LSI", -0.2)
    assert seq["steps"][0]["dose_mmol_per_L"] == pytest.approx(one["dose_mmol_per_L"], rel=1e-8)
    assert seq["steps"][1]["dose_mmol_per_L"] == pytest.approx(two["dose_mmol_per_L"], rel=1e-7)
    assert seq["steps"][0]["precipitation"]["formed"][0]["id"] == "calcite"
    # totals: the solids in kg/d at 100 L/s (8.64e6 L/d)
    total = sum(f["mg_per_L"] for s in seq["steps"] for f in s["precipitation"]["formed"])
    assert seq["precipitated_total_kg_per_d"] == pytest.approx(total * 8.64e6 * 1e-6, rel=1e-12)
    assert ref_solve(seq["scenario_after"])["saturation"]["calcite"] == pytest.approx(-0.2, abs=2e-6)
    assert any("suffocate" in c for c in seq["cautions"]) and any("Lime" in c for c in seq["cautions"])


def test_caustic_and_orthophosphate_stoichiometry():
    out = ok("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8.0},
                                                    {"chemical": "H3PO4", "dose_mg_per_L": 3.0, "strength_pct": 85,
                                                     "density_kg_per_L": 1.685}],
                       "flow": 1, "flow_unit": "MGD"})
    po4 = out["water_after"]["orthophosphate_mg_per_L_as_PO4"]
    # 3 mg/L of H3PO4 brings 3 / M(H3PO4) mmol/L of orthophosphate (stoichiometry)
    assert po4 == pytest.approx(3.0 / M_H3PO4 * M_PO4, rel=1e-9)
    assert out["water_after"]["orthophosphate_mg_per_L_as_P"] == pytest.approx(3.0 / M_H3PO4 * A["P"], rel=1e-9)
    # an acid: it removes one equivalent of alkalinity to the pH 4.5 end point per mole (H2PO4-)
    step = out["steps"][1]
    assert step["dose_meq_per_L"] == pytest.approx(-3.0 / M_H3PO4, rel=1e-9)
    drop = (out["steps"][0]["water_after"]["total_alkalinity_meq_per_L"]
            - out["water_after"]["total_alkalinity_meq_per_L"])
    assert drop == pytest.approx(3.0 / M_H3PO4, rel=1e-9)
    assert step["product"]["product_mg_per_L"] == pytest.approx(3.0 / 0.85, rel=1e-12)
    assert any("nutrient" in c for c in out["cautions"])


def test_a_water_entering_oversaturated_is_metastable_unless_calcite_is_named():
    # caustic to CCPP +3, then orthophosphate: by default the phosphate step keeps the oversaturation
    steps = [{"chemical": "NaOH", "target_CCPP": 3.0}, {"chemical": "Na2HPO4", "dose_mg_per_L": 2.0}]
    kept = ok("treat", {"scenario": WATER, "steps": steps})
    assert kept["steps"][1]["precipitation"]["formed"] == []
    assert "calcite" not in kept["steps"][1]["precipitation"]["allowed"]
    assert any("metastable" in w for w in kept["steps"][1]["warnings"])
    assert kept["water_after"]["CCPP_mg_per_L_as_CaCO3"] > 2.5
    # named, calcite forms: as much as the reference solver precipitates from the same water
    steps[1]["precipitate"] = ["calcite"]
    named = ok("treat", {"scenario": WATER, "steps": steps})
    n = named["steps"][1]["precipitation"]["formed"][0]["mol_per_L"]
    ref = ref_solve(kept["scenario_after"], precipitate=["calcite"])
    assert n == pytest.approx(ref["precipitated"]["calcite"], rel=1e-6)
    assert named["water_after"]["LSI"] == pytest.approx(0.0, abs=1e-9)


def test_sequence_step_errors_name_the_step():
    assert err("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH"}]})["field"] == "steps[0].target_pH"
    assert err("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8, "target_LSI": 0}]})[
        "field"] == "steps[0].target_LSI"
    assert err("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8},
                                                      {"chemical": "lye", "target_pH": 9}]})["field"] == \
        "steps[1].chemical"
    assert err("treat", {"scenario": WATER, "steps": []})["field"] == "steps"
    e = err("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8.0},
                                                   {"chemical": "NaOH", "target_CCPP": 4000}]})
    assert e["type"] == "UnreachableError" and e["field"] == "steps[1].target_CCPP"
    assert e["detail"]["direction"] == "above"


def test_hump_after_excess_lime_is_passed_and_reported():
    # CO2 into a water with hydroxide alkalinity first raises the LSI (OH- -> CO3-2), then lowers it
    out = ok("treat", {"scenario": WATER, "steps": [{"chemical": "Ca(OH)2", "target_pH": 11.0},
                                                    {"chemical": "CO2", "target_LSI": 0.0}]})
    step = out["steps"][1]
    assert step["search"]["monotone"] is False and step["search"]["hump"]["value"] > 0.0
    assert step["status"] == "dosed" and step["dose_mmol_per_L"] > 0
    assert any("not monotone" in w for w in step["warnings"])
    ref = ref_solve(out["scenario_after"])
    assert ref["saturation"]["calcite"] == pytest.approx(0.0, abs=2e-6)
    assert ref["pH"] < 10.0


# --------------------------------------------------------------------------------------
# blends


def test_blend_mass_balance_and_temperature():
    a = WATER
    b = {"temperature_C": 24, "systems": [{"id": "carbonate", "total": 4.2, "unit": MM},
                                          {"id": "phosphate", "total": 0.02, "unit": MM}],
         "ions": [{"id": "calcium", "total": 2.4, "unit": MM}, {"id": "sodium", "total": 1.0, "unit": MM},
                  {"id": "chloride", "total": 1.63, "unit": MM}, {"id": "potassium", "total": 0.1, "unit": MM}]}
    f = [0.35, 0.65]
    out = ok("blend", {"waters": [a, b], "fractions": f, "names": ["well", "river"]})
    # each component: f_a T_a + f_b T_b (mol/L), absent counts as 0
    given = {}
    for k, sc in enumerate((a, b)):
        for e in sc["systems"] + sc["ions"]:
            given.setdefault(e["id"], [0.0, 0.0])[k] = e["total"] * 1e-3
    rows = {r["id"]: r for r in out["components"]}
    assert set(rows) == set(given)
    for cid, (ta, tb) in given.items():
        assert rows[cid]["totals_M"] == pytest.approx([ta, tb], rel=1e-12)
        assert rows[cid]["blend_M"] == pytest.approx(f[0] * ta + f[1] * tb, rel=1e-12)
        assert out["blend"]["components_M"][cid] == pytest.approx(f[0] * ta + f[1] * tb, rel=1e-12)
    assert out["temperature_C"] == pytest.approx(0.35 * 12 + 0.65 * 24, rel=1e-12)
    # the blend's pH and LSI by the reference solver on the hand-mixed totals
    sc = {"temperature_C": 0.35 * 12 + 0.65 * 24,
          "systems": [{"id": c, "total": f[0] * ta + f[1] * tb, "unit": "mol/L"} for c, (ta, tb) in given.items()
                      if c in ("carbonate", "sulfate", "phosphate")],
          "ions": [{"id": c, "total": f[0] * ta + f[1] * tb, "unit": "mol/L"} for c, (ta, tb) in given.items()
                   if c not in ("carbonate", "sulfate", "phosphate")]}
    ref = ref_solve(sc)
    assert out["blend"]["pH"] == pytest.approx(ref["pH"], abs=1e-7)
    assert out["blend"]["LSI"] == pytest.approx(ref["saturation"]["calcite"], abs=1e-6)
    assert out["names"] == ["well", "river"] and len(out["waters"]) == 2


def test_blend_of_a_water_with_itself_is_the_water():
    alone = solve(WATER)
    for f in ([0.5, 0.5], [0.2, 0.8], [0.1, 0.3, 0.6]):
        out = ok("blend", {"waters": [WATER] * len(f), "fractions": f})
        assert out["blend"]["pH"] == pytest.approx(alone["pH"], abs=1e-10)
        assert out["blend"]["LSI"] == pytest.approx(alone["calcium_carbonate"]["LSI"], abs=1e-10)
        assert out["blend"]["CCPP_mg_per_L_as_CaCO3"] == pytest.approx(
            alone["calcium_carbonate"]["CCPP_mg_per_L_as_CaCO3"], abs=1e-8)
        assert out["temperature_C"] == pytest.approx(12.0, rel=1e-12)


def test_blend_with_calcite_forming_balances():
    hard = {"temperature_C": 20, "systems": [{"id": "carbonate", "total": 5.0, "unit": MM}],
            "ions": [{"id": "calcium", "total": 2.5, "unit": MM}]}
    lime_water = {"temperature_C": 20, "ions": [{"id": "calcium", "total": 2.0, "unit": MM},
                                                {"id": "chloride", "total": 1.0, "unit": MM}]}  # Ca(OH)2 + CaCl2
    out = ok("blend", {"waters": [hard, lime_water], "fractions": [0.7, 0.3], "precipitate": ["calcite"],
                       "flow": 50, "flow_unit": "m3/h"})
    n = out["precipitation"]["formed"][0]["mol_per_L"]
    rows = {r["id"]: r for r in out["components"]}
    assert out["blend"]["components_M"]["calcium"] + n == pytest.approx(rows["calcium"]["blend_M"], rel=1e-10)
    assert out["blend"]["components_M"]["carbonate"] + n == pytest.approx(rows["carbonate"]["blend_M"], rel=1e-10)
    assert ref_solve(out["scenario"])["saturation"]["calcite"] == pytest.approx(0.0, abs=1e-6)
    # 50 m3/h = 1.2e6 L/d: kg/d = mg/L x 1.2
    assert out["precipitation"]["total_kg_per_d"] == pytest.approx(out["precipitation"]["total_mg_per_L"] * 1.2,
                                                                   rel=1e-12)


def test_blend_fractions_must_sum_to_one():
    e = err("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.49]})
    assert e["field"] == "fractions" and "add up to" in e["message"]
    assert err("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.5 + 2e-6]})["field"] == "fractions"
    ok("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.5 + 5e-7]})  # within 1e-6
    assert err("blend", {"waters": [WATER, WATER], "fractions": [1.2, -0.2]})["field"] == "fractions[0]"
    assert err("blend", {"waters": [WATER, WATER], "fractions": [1.0]})["field"] == "fractions"
    assert err("blend", {"waters": [WATER], "fractions": [1.0]})["field"] == "waters"
    bad = dict(WATER, ions=[{"id": "calcium", "total": -1, "unit": MM}])
    assert err("blend", {"waters": [WATER, bad], "fractions": [0.5, 0.5]})["field"] == "waters[1].ions[0].total"


# --------------------------------------------------------------------------------------
# softening

# Water analysis of the textbook softening example (Hammer & Hammer, Water and Wastewater
# Technology, softening chapter; recalled from memory): CO2 8.8 mg/L, Ca 70.0, Mg 9.7, Na 6.9,
# HCO3- 115 mg/L as CaCO3, SO4 96, Cl 10.6 mg/L.
TEXTBOOK = {"CO2": 8.8, "Ca": 70.0, "Mg": 9.7, "Na": 6.9, "Alk": 115.0, "SO4": 96.0, "Cl": 10.6}
EQ = {"Ca": A["Ca"] / 2, "Mg": A["Mg"] / 2, "Na": A["Na"], "SO4": (A["S"] + 4 * A["O"]) / 2, "Cl": A["Cl"],
      "CaCO3": M_CACO3 / 2, "CO2": M_CO2 / 2}


def test_textbook_analysis_is_balanced():
    # the recalled analysis is electrically balanced (cations = anions in meq/L within 1 %):
    # a check that it is a real analysis and not a misremembered one
    t = TEXTBOOK
    cations = t["Ca"] / EQ["Ca"] + t["Mg"] / EQ["Mg"] + t["Na"] / EQ["Na"]
    anions = t["Alk"] / EQ["CaCO3"] + t["SO4"] / EQ["SO4"] + t["Cl"] / EQ["Cl"]
    assert cations == pytest.approx(anions, rel=0.01)


def test_stoichiometric_softening_against_the_textbook_rules():
    t = TEXTBOOK
    co2, ca, mg, alk = t["CO2"] / EQ["CO2"], t["Ca"] / EQ["Ca"], t["Mg"] / EQ["Mg"], t["Alk"] / EQ["CaCO3"]
    # by hand, excess-lime softening: all alkalinity is calcium carbonate hardness (Alk < Ca);
    # magnesium is all non-carbonate. Lime = CO2 + CaCH + MgNCH + excess 1.25; soda = CaNCH + MgNCH.
    lime_meq = co2 + alk + mg + 1.25
    soda_meq = (ca - alk) + mg
    out = stoichiometric_softening(co2, alk, ca, mg, remove_magnesium=True)
    assert out["lime_meq_per_L"] == pytest.approx(lime_meq, rel=1e-12)
    assert out["soda_ash_meq_per_L"] == pytest.approx(soda_meq, rel=1e-12)
    assert out["lime_mg_per_L_as_CaO"] == pytest.approx(lime_meq * M_CAO / 2, rel=1e-12)
    assert out["soda_ash_mg_per_L"] == pytest.approx(soda_meq * M_NA2CO3 / 2, rel=1e-12)
    # the same in round figures as the text works them (meq 0.40, 2.30, 0.80, 1.25 -> 4.75 meq/L,
    # 133 mg/L CaO; soda ash 1.99 meq/L, 106 mg/L)
    assert round(out["lime_meq_per_L"], 2) == 4.75 and round(out["lime_mg_per_L_as_CaO"]) == 133
    assert round(out["soda_ash_meq_per_L"], 2) == 1.99 and round(out["soda_ash_mg_per_L"]) == 106
    assert out["residual_hardness_mg_per_L_as_CaCO3"]["total"] == pytest.approx(40.0)  # practical limits
    # calcium only: lime = CO2 + CaCH, soda = CaNCH
    sel = stoichiometric_softening(co2, alk, ca, mg, remove_magnesium=False)
    assert sel["lime_meq_per_L"] == pytest.approx(co2 + alk, rel=1e-12)
    assert sel["soda_ash_meq_per_L"] == pytest.approx(ca - alk, rel=1e-12)
    assert sel["residual_hardness_mg_per_L_as_CaCO3"]["magnesium"] == pytest.approx(mg * EQ["CaCO3"], rel=1e-12)


def _textbook_scenario():
    t = TEXTBOOK
    return {"temperature_C": 15,
            "systems": [{"id": "carbonate", "total": t["CO2"] / M_CO2 + t["Alk"] / EQ["CaCO3"], "unit": MM},
                        {"id": "sulfate", "total": t["SO4"], "unit": "mg/L"}],
            "ions": [{"id": "calcium", "total": t["Ca"], "unit": "mg/L"},
                     {"id": "magnesium", "total": t["Mg"], "unit": "mg/L"},
                     {"id": "sodium", "total": t["Na"], "unit": "mg/L"},
                     {"id": "chloride", "total": t["Cl"], "unit": "mg/L"}]}


@pytest.mark.parametrize("options", [{"remove_magnesium": True, "target_hardness_mg_per_L_as_CaCO3": 90.0},
                                     {"soda_ash_mg_per_L": 40.0, "recarbonation": {"target_pH": 8.6}},
                                     {"remove_magnesium": True, "first_stage_pH": None,
                                      "recarbonation": {"target_CCPP": 3.0}}])
def test_equilibrium_softening_mass_balances(options):
    sc = _textbook_scenario()
    out = ok("soften", dict({"scenario": sc, "flow": 20000, "flow_unit": "m3/d"}, **options))
    raw = {"calcium": TEXTBOOK["Ca"] / A["Ca"], "magnesium": TEXTBOOK["Mg"] / A["Mg"],
           "carbonate": sc["systems"][0]["total"], "sodium": TEXTBOOK["Na"] / A["Na"]}  # mmol/L
    lime = out["lime"]["dose_mmol_per_L"]
    soda = out["soda_ash"]["dose_mmol_per_L"]
    co2 = sum(r["dose_mmol_per_L"] for r in (out["first_stage_recarbonation"], out["recarbonation"]) if r)
    final = {e["id"]: e["total"] * 1e3 for e in out["scenario_after"]["systems"] + out["scenario_after"]["ions"]}
    solids = {}
    for s in out["sludge"]["solids"]:
        solids[s["id"]] = solids.get(s["id"], 0.0) + s["mol_per_L"] * 1e3
    calcite, brucite = solids.get("calcite", 0.0), solids.get("brucite", 0.0)
    # in the water + in the solids = raw water + chemicals (mmol/L)
    assert final["calcium"] + calcite == pytest.approx(raw["calcium"] + lime, rel=1e-9)
    assert final["magnesium"] + brucite == pytest.approx(raw["magnesium"], rel=1e-9)
    assert final["carbonate"] + calcite == pytest.approx(raw["carbonate"] + soda + co2, rel=1e-9)
    assert final["sodium"] == pytest.approx(raw["sodium"] + 2 * soda, rel=1e-9)
    for comp, row in out["mass_balance"].items():
        assert abs(row["balance_mmol_per_L"]) <= 1e-9 * (row["raw_mmol_per_L"] + row["added_mmol_per_L"])
    # the softened water is saturated with the solids that formed (independent solver)
    soft = out["softened"]
    ref = ref_solve({"temperature_C": 15, "systems": [{"id": c, "total": soft["components_M"][c], "unit": "mol/L"}
                                                      for c in ("carbonate", "sulfate")],
                     "ions": [{"id": c, "total": soft["components_M"][c], "unit": "mol/L"}
                              for c in ("calcium", "magnesium", "sodium", "chloride")]})
    formed = {s["id"] for s in out["softening_step"]["precipitation"]["formed"]}
    for sid in formed:
        assert ref["saturation"][sid] == pytest.approx(0.0, abs=1e-6)
    assert ref["pH"] == pytest.approx(soft["pH"], abs=1e-6)
    # sludge mass and its kg/d at 20000 m3/d
    dry = sum(s["mg_per_L"] for s in out["sludge"]["solids"])
    assert out["sludge"]["dry_solids_kg_per_d"] == pytest.approx(dry * 2e7 * 1e-6, rel=1e-12)
    assert out["lime"]["dose_mg_per_L_as_CaO"] == pytest.approx(lime * M_CAO, rel=1e-4)
    assert any("Lime" in c for c in out["cautions"])
    # the textbook estimate rides along, with the reasons the two differ
    assert out["stoichiometric"]["lime_mg_per_L_as_CaO"] > 0 and len(out["comparison"]["why"]) >= 4


def test_softening_targets():
    sc = _textbook_scenario()
    out = ok("soften", {"scenario": sc, "remove_magnesium": True, "target_hardness_mg_per_L_as_CaCO3": 90.0,
                        "recarbonation": None, "first_stage_pH": None})
    assert out["softened"]["pH"] == pytest.approx(11.0, abs=1e-6)
    assert out["softened"]["total_hardness_mg_per_L_as_CaCO3"] == pytest.approx(90.0, abs=1e-3)
    assert out["recarbonation"] is None and out["first_stage_recarbonation"] is None
    # below what soda ash can give at pH 10.3 (magnesium stays): unreachable, best value reported
    e = err("soften", {"scenario": sc, "target_hardness_mg_per_L_as_CaCO3": 5.0})
    assert e["field"] == "target_hardness_mg_per_L_as_CaCO3" and e["detail"]["direction"] == "below"
    assert e["detail"]["best_value"] > 5.0
    assert err("soften", {"scenario": sc, "softening_pH": 10, "lime_mg_per_L": 50})["field"] == "lime_mg_per_L"
    no_hardness = {"ions": [{"id": "sodium", "total": 1, "unit": MM}],
                   "systems": [{"id": "carbonate", "total": 1, "unit": MM}]}
    assert err("soften", {"scenario": no_hardness})["field"] == "scenario"


# --------------------------------------------------------------------------------------
# the command line


def _cli(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "acidscape", *args], capture_output=True, text=True, input=stdin,
                          timeout=300)


def test_cli_treat_blend_soften_and_dose_targets(tmp_path):
    water = tmp_path / "water.json"
    water.write_text(json.dumps(WATER))
    r = _cli("dose", str(water), "--chemical", "NaOH", "--target-LSI", "0.2", "--precipitate", "brucite")
    assert r.returncode == 0, r.stderr
    assert json.loads(r.stdout)["reached"]["LSI"] == pytest.approx(0.2, abs=1e-6)
    r = _cli("dose", str(water), "--chemical", "NaOH", "--target-LSI", "3")
    assert r.returncode == 2 and r.stderr.startswith("error [target_LSI]:")
    job = tmp_path / "job.json"
    job.write_text(json.dumps({"scenario": WATER, "steps": [{"chemical": "NaOH", "target_CCPP": 3},
                                                            {"chemical": "Na3PO4", "dose_mg_per_L": 2}]}))
    r = _cli("treat", str(job), "--flow", "5", "--flow-unit", "MGD")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert [s["status"] for s in out["steps"]] == ["dosed", "dosed"] and out["flow"]["unit"] == "MGD"
    r = _cli("blend", str(water), str(water), "--fractions", "0.4,0.5")
    assert r.returncode == 2 and "[fractions]" in r.stderr
    r = _cli("blend", str(water), str(water), "--fractions", "0.4,0.6")
    assert r.returncode == 0 and json.loads(r.stdout)["fractions"] == [0.4, 0.6]
    r = _cli("soften", str(water), "--recarbonate-pH", "8.8")
    assert r.returncode == 0, r.stderr
    assert json.loads(r.stdout)["water_after"]["pH"] == pytest.approx(8.8, abs=1e-6)
