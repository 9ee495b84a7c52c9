"""Curves of a whole water pass through its solved state (self-consistency of the plots)."""

import math

import pytest

from acidscape.boundary.api import solve, water
from acidscape.operations.curves import pH_grid, water_curves

SCENARIO = {
    "temperature_C": 12,
    "systems": [{"id": "carbonate", "total": 2.5, "unit": "mmol/L"},
                {"id": "phosphate", "total": 0.1, "unit": "mmol/L"},
                {"id": "ammonium", "total": 0.5, "unit": "mg/L as N"}],
    "ions": [{"id": "Na+", "total": 2.4, "unit": "mmol/L"}, {"id": "Cl-", "total": 0.3, "unit": "mmol/L"}],
}


@pytest.mark.parametrize("gas", [None, {"CO2_partial_pressure_atm": 10**-3.4}])
def test_curves_pass_through_solution(gas):
    sc = dict(SCENARIO, gas=gas) if gas else SCENARIO
    state = {}
    result = solve(sc, state)
    eq = state["eq"]
    curves = water_curves(eq, [eq.pH - 1, eq.pH, eq.pH + 1])
    by_name = {(c["system"], c["name"]): c["values"][1] for c in curves["log_concentration"]}
    for row in result["species"]:
        assert by_name[(row["system"], row["name"])] == pytest.approx(math.log10(row["concentration_M"]), abs=1e-9)
    h = result["water_ions"][0]["concentration_M"]
    assert by_name[("water", "H+")] == pytest.approx(math.log10(h), abs=1e-12)
    for s in curves["systems"]:
        for k in range(3):
            assert math.fsum(f[k] for f in s["fractions"]) == pytest.approx(1.0, abs=1e-12)


def test_water_method_and_grid():
    out = water(dict(SCENARIO, curve={"pH_min": 2, "pH_max": 12, "points": 11}))
    assert out["curves"]["pH"] == pH_grid(2, 12, 11)
    assert len(out["curves"]["systems"]) == 3
    assert out["curves"]["equilibrium_pH"] == out["result"]["pH"]
