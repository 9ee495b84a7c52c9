"""Curves of a whole water pass through its solved state (self-consistency of the plots)."""

import math

import pytest

from acidscape.boundary.api import solve, water
from acidscape.operations.curves import pH_grid, water_curves

import reference_model

SCENARIO = {
    "temperature_C": 12,
    "systems": [{"id": "carbonate", "total": 2.5, "unit": "mmol/L"},
                {"id": "phosphate", "total": 0.1, "unit": "mmol/L"},
                {"id": "ammonium", "total": 0.5, "unit": "mg/L as N"}],
    "ions": [{"id": "Na+", "total": 2.4, "unit": "mmol/L"}, {"id": "Cl-", "total": 0.3, "unit": "mmol/L"}],
}


@pytest.mark.parametrize("complexes", [True, False])
@pytest.mark.parametrize("gas", [None, {"CO2_partial_pressure_atm": 10**-3.4}])
def test_curves_pass_through_solution(gas, complexes):
    sc = dict(SCENARIO, gas=gas, complexes=complexes) if gas else dict(SCENARIO, complexes=complexes)
    state = {}
    result = solve(sc, state)
    sol = state["solution"]
    curves = water_curves(state["model"], sol, [sol.pH - 1, sol.pH, sol.pH + 1])
    by_name = {(c["system"], c["name"]): c["values"][1] for c in curves["log_concentration"]}
    for row in result["species"]:
        assert by_name[(row["system"], row["name"])] == pytest.approx(math.log10(row["concentration_M"]), abs=1e-9)
    h = result["water_ions"][0]["concentration_M"]
    assert by_name[("water", "H+")] == pytest.approx(math.log10(h), abs=1e-12)
    for s in curves["systems"] + curves["ions"]:
        for k in range(3):
            assert math.fsum(f[k] for f in s["fractions"]) == pytest.approx(1.0, abs=1e-12)


def test_water_method_and_grid():
    out = water(dict(SCENARIO, curve={"pH_min": 2, "pH_max": 12, "points": 11}))
    assert out["curves"]["pH"] == pH_grid(2, 12, 11)
    assert len(out["curves"]["systems"]) == 3
    assert out["curves"]["equilibrium_pH"] == out["result"]["pH"]


HARD = {"temperature_C": 18, "activity": "davies",
        "systems": [{"id": "carbonate", "total": 4.0, "unit": "mmol/L"}, {"id": "sulfate", "total": 1.0, "unit": "mmol/L"}],
        "ions": [{"id": "calcium", "total": 2.0, "unit": "mmol/L"}, {"id": "magnesium", "total": 1.0, "unit": "mmol/L"},
                 {"id": "sodium", "total": 2.0, "unit": "mmol/L"}, {"id": "chloride", "total": 2.0, "unit": "mmol/L"}]}


def test_hard_water_curves_with_ion_pairs_against_the_reference_solver():
    # Each grid pH is the water at that pH and at its own ionic strength; the independent scipy
    # reference (tests/reference_model.py) solved there gives every species, ion pairs included.
    out = water(dict(HARD, curve={"pH_min": 4, "pH_max": 11, "points": 8}))
    curves = out["curves"]
    I = curves["ionic_strength_M"]
    calcium = next(g for g in curves["ions"] if g["id"] == "calcium")
    assert "CaCO3" in calcium["species"] and "CaHCO3+" in calcium["species"]
    rows = {(c["system"], c["name"]): c["values"] for c in curves["log_concentration"]}
    for k, pH in enumerate(curves["pH"]):
        ref = reference_model.solve(dict(HARD, pH=pH, ionic_strength_M=I))
        for name in ("HCO3-", "CO3-2", "CaCO3", "CaHCO3+", "CaSO4", "MgHCO3+", "Ca+2"):
            system = "carbonate" if name in ("HCO3-", "CO3-2") else None
            assert rows[(system, name)][k] == pytest.approx(math.log10(ref["species"][name]), abs=1e-9), (pH, name)
