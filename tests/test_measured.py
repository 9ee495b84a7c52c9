"""Water from measurements: pH + alkalinity -> DIC, round trips and bad input."""

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from acidscape.boundary.api import solve
from acidscape.boundary.scenario import read_scenario
from acidscape.errors import InputError
from acidscape.operations.alkalinity import MG_CACO3_PER_MEQ
from acidscape.operations.closure import close_scenario, read_measured
from acidscape.operations.closure import resolve_measured as _resolve

import reference_model


def resolve_measured(scenario):
    """The scenario's measured water resolved the way the boundary does it."""
    base, m = read_measured(scenario)
    return _resolve(base, read_scenario(base), m)


def test_textbook_DIC_from_pH_and_alkalinity():
    # Ideal activities, equivalence-point alkalinity: C_T = (Alk - [OH-] + [H+]) / (a1 + 2 a2)
    # (Stumm & Morgan, Aquatic Chemistry 1996, ch. 4; the classic closed-system relation).
    pH, alk_meq = 7.6, 2.4
    sc, info = resolve_measured({"activity": "ideal", "measured": {"pH": pH, "alkalinity": {
        "value": alk_meq, "unit": "meq/L", "definition": "equivalence-point"}}})
    out = solve(sc)
    pK1, pK2 = out["systems"][-1]["pKa"]
    h = 10**-pH
    K1, K2 = 10**-pK1, 10**-pK2
    D = h * h + K1 * h + K1 * K2
    a1, a2 = K1 * h / D, K1 * K2 / D
    C = (alk_meq * 1e-3 - 10 ** (pH - out["pKw"]) + h) / (a1 + 2 * a2)
    assert info["DIC_M"] == pytest.approx(C, rel=1e-10)
    assert out["pH"] == pytest.approx(pH, abs=1e-8)


@settings(max_examples=60, deadline=None)
@given(pH=st.floats(5.5, 10.5), alk=st.floats(10.0, 400.0), t=st.floats(0.0, 40.0),
       model=st.sampled_from(["ideal", "davies", "extended-debye-huckel"]), ca=st.floats(0.0, 3.0),
       nh4=st.floats(0.0, 1.0))
def test_round_trip_pH_and_lab_alkalinity(pH, alk, t, model, ca, nh4):
    # The inferred water solves back to the measured pH and reports the measured alkalinity
    # (fixed end point pH 4.5, mg/L as CaCO3, as a lab would per SM 2320 B).
    sc = {"temperature_C": t, "activity": model,
          "measured": {"pH": pH, "alkalinity": {"value": alk, "unit": "mg/L as CaCO3"}},
          "systems": [{"id": "ammonium", "total": nh4, "unit": "mmol/L"}],
          "ions": [{"id": "Ca+2", "total": ca, "unit": "mmol/L"}, {"id": "Cl-", "total": 2 * ca, "unit": "mmol/L"}]}
    try:
        out = solve(sc)
    except InputError as e:
        # Only an inconsistent pair may be refused (alkalinity below what water and NH3 give).
        assert e.field == "measured.alkalinity.value"
        return
    assert out["pH"] == pytest.approx(pH, abs=1e-7)
    assert out["alkalinity"]["fixed_end_point"]["total_mg_per_L_as_CaCO3"] == pytest.approx(alk, rel=1e-7)
    assert out["inferred_from_measurements"]["DIC_M"] > 0


def test_units_agree():
    # 100 mg/L as CaCO3 and 100 / 50.04 meq/L are the same alkalinity (SM 2320 B).
    a = resolve_measured({"measured": {"pH": 8.0, "alkalinity": {"value": 100, "unit": "mg/L as CaCO3"}}})[1]
    b = resolve_measured({"measured": {"pH": 8.0, "alkalinity": {"value": 100 / MG_CACO3_PER_MEQ,
                                                                 "unit": "meq/L"}}})[1]
    assert a["DIC_M"] == pytest.approx(b["DIC_M"], rel=1e-12)


@pytest.mark.parametrize("measured,field,words", [
    ({"pH": 7.5, "alkalinity": {"value": 120}}, "measured.alkalinity.unit", "Choose the alkalinity unit"),
    ({"pH": 7.5, "alkalinity": {"value": 120, "unit": "mg/L"}}, "measured.alkalinity.unit", "mg/L as CaCO3"),
    ({"pH": 7.5, "alkalinity": 120}, "measured.alkalinity", "Enter the measured alkalinity and its unit"),
    ({"alkalinity": {"value": 1, "unit": "meq/L"}}, "measured.pH", "Enter the measured pH"),
    ({"pH": 11.5, "alkalinity": {"value": 0.5, "unit": "meq/L"}}, "measured.alkalinity.value", "too low for a measured pH"),
    ({"pH": 4.2, "alkalinity": {"value": 0.5, "unit": "meq/L"}}, "measured.pH", "end point"),
])
def test_bad_measured_input(measured, field, words):
    with pytest.raises(InputError) as e:
        solve({"measured": measured})
    assert e.value.field == field
    assert words in e.value.message


def test_conflicts():
    m = {"pH": 7.5, "alkalinity": {"value": 2, "unit": "meq/L"}}
    with pytest.raises(InputError) as e:
        solve({"measured": m, "systems": [{"id": "carbonate", "total": 1, "unit": "mmol/L"}]})
    assert e.value.field == "systems[0]"
    with pytest.raises(InputError) as e:
        solve({"measured": m, "pH": 7.5})
    assert e.value.field == "pH"


def test_given_pH_is_closed_with_a_balancing_ion():
    # A scenario with pH and totals becomes an electroneutral one that solves to the same pH.
    sc = {"pH": 7.2, "systems": [{"id": "carbonate", "total": 3, "unit": "mmol/L"}]}
    closed = close_scenario(sc, read_scenario(sc))
    assert closed.sol.pH == pytest.approx(7.2, abs=1e-8)
    assert any("balancing" in str(i.get("custom", {}).get("name", "")) for i in closed.scenario["ions"])


@pytest.mark.parametrize("definition", ["end-point", "equivalence-point"])
def test_measured_hard_water_with_ion_pairs_against_the_reference_solver(definition):
    # Calcium and magnesium pair with carbonate (CaHCO3+, CaCO3°, MgHCO3+): the carbonate total is
    # found with them. The independent scipy reference (tests/reference_model.py) at the measured
    # pH and the inferred ionic strength leaves exactly the balancing charge unassigned, and gives
    # the measured alkalinity: to the end point as the charge it leaves at pH 4.5 (strong acid
    # per litre, Standard Methods 2320 B), or as the proton-reference sum (Stumm & Morgan ch. 4).
    sc = {"temperature_C": 15, "activity": "davies",
          "measured": {"pH": 7.9, "alkalinity": {"value": 180, "unit": "mg/L as CaCO3", "definition": definition}},
          "systems": [{"id": "sulfate", "total": 0.8, "unit": "mmol/L"}],
          "ions": [{"id": "calcium", "total": 1.8, "unit": "mmol/L"}, {"id": "magnesium", "total": 0.7, "unit": "mmol/L"},
                   {"id": "chloride", "total": 1.0, "unit": "mmol/L"}]}
    ordinary, info = resolve_measured(sc)
    I = info["ionic_strength_M"]
    water = {k: v for k, v in sc.items() if k != "measured"}
    water["systems"] = sc["systems"] + [{"id": "carbonate", "total": info["DIC_M"], "unit": "mol/L"}]
    here = reference_model.solve(dict(water, pH=7.9, ionic_strength_M=I))
    assert here["charge_balance_eq_per_L"] == pytest.approx(-info["balancing_ion_eq_per_L"], rel=1e-9)
    alk = 180 / MG_CACO3_PER_MEQ * 1e-3
    if definition == "end-point":
        at_45 = reference_model.solve(dict(water, pH=4.5, ionic_strength_M=I))
        got = at_45["charge_balance_eq_per_L"] - here["charge_balance_eq_per_L"]
    else:
        r = {"carbonate": 2, "sulfate": 0}
        got = sum(c * (sum(a * r.get(j, 0) for j, a in here["species_holds"][n].items() if j != "H+")
                       - here["species_holds"][n].get("H+", 0)) for n, c in here["species"].items())
    assert got == pytest.approx(alk, rel=1e-9)
    assert solve(ordinary)["pH"] == pytest.approx(7.9, abs=1e-8)


def test_warm_start_of_a_closed_water_gives_the_same_answer():
    # The closing settles the ionic strength at the measured pH; started there (closure.warm_start)
    # the model solves the ordinary water once, to the same answer as from a cold start.
    from acidscape.boundary.api import water_model
    from acidscape.operations.closure import warm_start

    sc, info = resolve_measured({"temperature_C": 12, "systems": [{"id": "phosphate", "total": 1.0, "unit": "mg/L as P"}],
                                 "ions": [{"id": "calcium", "total": 60, "unit": "mg/L"}],
                                 "measured": {"pH": 7.3, "alkalinity": {"value": 120, "unit": "mg/L as CaCO3"}}})
    wm = water_model(read_scenario(sc))
    cold = wm.solve()
    warm = wm.solve(guess=warm_start(wm, info))
    assert warm.pH == pytest.approx(7.3, abs=1e-11) and cold.pH == pytest.approx(warm.pH, abs=1e-12)
    assert warm.I == pytest.approx(cold.I, rel=1e-10)
    for a, b in zip(cold.conc, warm.conc):
        assert b == pytest.approx(a, rel=1e-9, abs=1e-30)
    assert warm.iterations < cold.iterations
    assert warm_start(wm, None) is None
