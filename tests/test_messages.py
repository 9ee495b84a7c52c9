"""Every message a user can see speaks the user's words.

Bad inputs are walked through the page's entry (:func:`acidscape.boundary.dispatch.handle`): each
reply must name the input in words (no scenario keys such as ``measured.pH`` or
``temperature_C``, no solver jargon, no exponent blobs, no Python reprs), keep the error's
``field`` (the page puts the message beside that input) and say what to do. The wording rules
are the project's own (the issue that asked for them); nothing here checks chemistry.
"""

from __future__ import annotations

import json
import re

import pytest

from acidscape import checks
from acidscape.boundary import dispatch
from acidscape.boundary.scenario import MAX_TOTAL_M

WATER = {"temperature_C": 15.0,
         "systems": [{"id": "carbonate", "total": 2.0, "unit": "mmol/L"}],
         "ions": [{"id": "calcium", "total": 1.0, "unit": "mmol/L"}, {"id": "sodium", "total": 0.5, "unit": "mmol/L"},
                  {"id": "chloride", "total": 2.5, "unit": "mmol/L"}]}
MEASURED = {"temperature_C": 15.0,
            "ions": [{"id": "calcium", "total": 1.0, "unit": "mmol/L"}, {"id": "chloride", "total": 1.0, "unit": "mmol/L"}],
            "measured": {"pH": 7.8, "alkalinity": {"value": 100.0, "unit": "mg/L as CaCO3"}}}


def _with(base: dict, **changes) -> dict:
    out = json.loads(json.dumps(base))
    out.update(changes)
    return out


def _measured(pH=7.8, value=100.0, unit="mg/L as CaCO3", **extra) -> dict:
    out = _with(MEASURED)
    out["measured"] = {"pH": pH, "alkalinity": {"value": value, "unit": unit}, **extra}
    return out


# (method, params, field the error must name)
CASES = [
    # the water
    ("solve", _with(WATER, temperature_C=500), "temperature_C"),
    ("solve", _with(WATER, temperature_C="warm"), "temperature_C"),
    ("solve", _with(WATER, pH=20), "pH"),
    ("solve", _with(WATER, pH=-3), "pH"),
    ("solve", _with(WATER, activity="fancy"), "activity"),
    ("solve", _with(WATER, ionic_strength_M=-1), "ionic_strength_M"),
    ("solve", _with(WATER, ionic_strength_M=0.1, tds_mg_per_L=300), "tds_mg_per_L"),
    ("solve", _with(WATER, tds_mg_per_L=1e9), "tds_mg_per_L"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": 1e6, "unit": "mmol/L"}]), "systems[0].total"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": -1, "unit": "mmol/L"}]), "systems[0].total"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": "lots", "unit": "mmol/L"}]), "systems[0].total"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": 1, "unit": "furlongs"}]), "systems[0].unit"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": 1, "unit": "meq/L"}]), "systems[0].unit"),
    ("solve", _with(WATER, systems=[{"id": "unobtainium", "total": 1, "unit": "mmol/L"}]), "systems[0].id"),
    ("solve", _with(WATER, systems=[{"id": "carbonate", "total": 1, "unit": "mmol/L"},
                                    {"id": "carbonate", "total": 1, "unit": "mmol/L"}]), "systems[1]"),
    ("solve", _with(WATER, systems=[{"custom": {"name": "x", "pKa": [9, 4]}, "total": 1, "unit": "mmol/L"}]),
     "systems[0].custom.pKa"),
    ("solve", _with(WATER, systems=[{"custom": {"name": "x", "pKa": [99]}, "total": 1, "unit": "mmol/L"}]),
     "systems[0].custom.pKa[0]"),
    ("solve", _with(WATER, systems=[{"custom": {"name": "x", "pKa": [4], "charge_most_protonated": 40},
                                     "total": 1, "unit": "mmol/L"}]), "systems[0].custom.charge_most_protonated"),
    ("solve", _with(WATER, ions=[{"id": "calcium", "total": 1e6, "unit": "mmol/L"}]), "ions[0].total"),
    ("solve", _with(WATER, ions=[{"custom": {"name": "q", "charge": 0}, "total": 1, "unit": "mmol/L"}]),
     "ions[0].custom.charge"),
    ("solve", _with(WATER, gas={"CO2_partial_pressure_atm": 1e20}), "gas.CO2_partial_pressure_atm"),
    ("solve", _with(WATER, complexes="maybe"), "complexes"),
    ("solve", _with(WATER, precipitate=["kryptonite"]), "precipitate[0]"),
    ("solve", _with(WATER, ccpp_temperatures_C=[20, 300]), "ccpp_temperatures_C[1]"),
    ("solve", _measured(pH=20), "measured.pH"),
    ("solve", _measured(pH=None), "measured.pH"),
    ("solve", _measured(pH=4.0), "measured.pH"),
    ("solve", _measured(value=1e9), "measured.alkalinity.value"),
    ("solve", _measured(value=-5), "measured.alkalinity.value"),
    ("solve", _measured(unit="bushels"), "measured.alkalinity.unit"),
    ("solve", _with(_measured(), pH=7), "pH"),
    ("solve", _with(_measured(), systems=[{"id": "carbonate", "total": 1, "unit": "mmol/L"}]), "systems[0]"),
    # one acid
    ("distribution", {"pKa": []}, "pKa"),
    ("distribution", {"pKa": [4.76], "pH": 20}, "pH"),
    ("distribution", {"pKa": [4.76], "total_M": 1e6}, "total_M"),
    ("distribution", {"pKa": [4.76], "pH_min": 9, "pH_max": 3}, "pH_max"),
    ("distribution", {"system": "unobtainium"}, "system"),
    # titration
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 1e6}, "titrant_M"),
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 0}, "titrant_M"),
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 0.02, "sample_mL": 1e12}, "sample_mL"),
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 0.02, "to_pH": 20}, "to_pH"),
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 0.02, "to_pH": 12}, "to_pH"),
    ("titrate", {"scenario": WATER, "titrant": "snake oil", "titrant_M": 0.02}, "titrant"),
    # dose
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 20}, "target_pH"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": None}, "target_pH"),
    ("dose", {"scenario": WATER, "chemical": "HCl", "target_pH": 9}, "target_pH"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "strength_pct": 150}, "strength_pct"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "density_kg_per_L": 0}, "density_kg_per_L"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": 1e20, "flow_unit": "m3/d"}, "flow"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": -1, "flow_unit": "m3/d"}, "flow"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": 10}, "flow_unit"),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": 10, "flow_unit": "furlongs"},
     "flow_unit"),
    ("dose", {"scenario": WATER, "chemical": "snake oil", "target_pH": 8.5}, "chemical"),
    ("dose", {"scenario": _measured(pH=20), "chemical": "NaOH", "target_pH": 8.5}, "measured.pH"),
    # buffer
    ("buffer", {"scenario": WATER, "capacity": {"from_pH": 4, "to_pH": 99}}, "capacity.to_pH"),
    ("buffer", {"scenario": WATER, "pH_min": -5}, "pH_min"),
    # treatment, blends, softening
    ("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 20}]}, "steps[0].target_pH"),
    ("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8, "density_kg_per_L": 99}]},
     "steps[0].density_kg_per_L"),
    ("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH"}]}, "steps[0].target_pH"),
    ("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8}], "flow": 1e20, "flow_unit": "m3/d"},
     "flow"),
    ("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.7]}, "fractions"),
    ("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.5], "flow": 1e20, "flow_unit": "m3/d"}, "flow"),
    ("soften", {"scenario": WATER, "softening_pH": 20}, "softening_pH"),
    ("soften", {"scenario": WATER, "softening_pH": 10, "lime_mg_per_L": 100}, "lime_mg_per_L"),
    # lead and copper, hardness
    ("solubility", {"scenario": WATER, "metal": "gold"}, "metal"),
    ("solubility", {"scenario": WATER, "metal": "lead", "to": 20}, "to"),
    ("titrate", {"scenario": WATER, "titrant": "EDTA", "titrant_M": 0.01, "fixed_pH": 20}, "fixed_pH"),
    ("conditional_constants", {"metals": ["calcium"], "pH_to": 20}, "pH_to"),
    # the water with its curves: one-call and staged (the page's water section) read them alike
    ("water", _with(WATER, curve={"pH_min": -0.5}), "curve.pH_min"),
    ("water", _with(WATER, curve=[0, 14]), "curve"),
    ("water_view", _with(WATER, curve={"pH_min": -0.5}), "curve.pH_min"),
    ("water_view", _with(WATER, curve={"pH_max": 14.5}), "curve.pH_max"),
    ("water_view", _with(WATER, curve=[0, 14]), "curve"),
    ("water_view", [WATER], None),
]

SNAKE = re.compile(r"\b[a-z][a-z0-9]*_[A-Za-z0-9_]+\b")            # temperature_C, density_kg_per_L
DOTTED = re.compile(r"\b[a-z]\w*(\[\d+\])?\.[a-z]\w*\b")            # measured.pH, systems[2].total
INDEXED = re.compile(r"\w\[\d+\]")                                  # systems[2]
EXPONENT = re.compile(r"\de[+-]?\d")                                # 4.62e+286, 1e-05
REPR = re.compile(r"'[^']*'|\bNone\b|\bTrue\b|\bFalse\b|\binf\b|\bnan\b|[{}]|<class")
JARGON = re.compile(r"\bf = |\bsign\b|converge|Hessian|bracket|residual|tableau|component", re.I)


def _error(method: str, params: dict) -> dict:
    if method == "water_view":  # answered in parts (dispatch.stages): a refusal is the first part
        reply = json.loads(next(p for p in dispatch.stages(method, json.dumps(params)) if p is not None))
    else:
        reply = json.loads(dispatch.handle(method, json.dumps(params)))
    assert reply["ok"] is False, (method, params, reply)
    return reply["error"]


def words_problems(message: str) -> list[str]:
    """What keeps a message from being plain words for a user."""
    found = []
    for name, pattern in (("snake_case key", SNAKE), ("dotted key", DOTTED), ("list index", INDEXED),
                          ("exponent", EXPONENT), ("Python repr", REPR), ("solver jargon", JARGON)):
        hit = pattern.search(message)
        if hit:
            found.append(f"{name}: {hit.group(0)!r}")
    if "PH" in message.replace("CaCO3", ""):
        found.append("PH (a unit symbol given a capital)")
    if not (message[:1].isupper() or message.startswith(("pH", "pKa"))):
        found.append("does not start a sentence")
    if not message.rstrip().endswith((".", ")", "?")):
        found.append("does not end a sentence")
    return found


@pytest.mark.parametrize("method, params, field", CASES,
                         ids=[f"{m}-{f}-{k}" for k, (m, _, f) in enumerate(CASES)])
def test_message_in_words_beside_its_field(method, params, field):
    err = _error(method, params)
    assert err["field"] == field, err
    assert words_problems(err["message"]) == [], err["message"]


def test_the_checks_helpers_speak_words():
    assert checks.describe("measured.pH") == "the measured pH"
    assert checks.describe("density_kg_per_L") == "the density of the product"
    assert checks.describe("steps[2].target_pH") == "the target pH in treatment step 3"
    # an input without an entry still gets words, not its key
    assert checks.describe("brand_new_setting_mg_per_L") == "the brand new setting"
    assert checks.fmt(1e20) == "1 × 10²⁰" and checks.fmt(1e6) == "1000000"


def test_capital_at_sentence_start_keeps_pH():
    """"PH = 20" was shown: a message starting with a unit symbol keeps its case."""
    err = _error("solve", _with(WATER, pH=20))
    assert "PH" not in err["message"]
    assert "pH" in err["message"] and "20" in err["message"]
    assert "from 0 to 14" in err["message"]
    from acidscape.errors import InputError
    assert str(InputError("pH 20 is outside the scale")) == "pH 20 is outside the scale"


@pytest.mark.parametrize("bad", [float("inf"), -float("inf"), "1e999", "inf", "nan"])
def test_non_finite_numbers_say_what_to_enter(bad):
    """"1e999 is required" was shown; a number too large to use says so and gives the range."""
    params = {"scenario": WATER, "chemical": "NaOH", "target_pH": bad}
    reply = json.loads(dispatch.handle("dose", json.dumps(params, allow_nan=True)))
    assert reply["ok"] is False
    msg = reply["error"]["message"]
    assert reply["error"]["field"] == "target_pH"
    assert "target pH" in msg and "from 0 to 14" in msg, msg
    assert "required" not in msg and "1e999" not in msg, msg
    assert words_problems(msg) == [], msg


def test_alkalinity_zero_reads_as_a_sentence():
    """An alkalinity of 0 with a pH above the end point: the measurements disagree; the message
    says which and what to check, in one plain sentence."""
    err = _error("solve", _measured(pH=7.8, value=0.0))
    assert err["field"] == "measured.alkalinity.value"
    msg = err["message"]
    assert words_problems(msg) == [], msg
    assert "alkalinity" in msg and "7.8" in msg
    assert "Check" in msg and "inconsistent" not in msg


def test_one_pH_range_everywhere():
    """Every pH field accepts exactly checks.PH_RANGE (0 to 14): 0 and 14 are in, just outside is out."""
    lo, hi = checks.PH_RANGE
    assert (lo, hi) == (0.0, 14.0)
    fields = [
        ("solve", lambda v: _with(WATER, pH=v), "pH"),
        ("solve", lambda v: _measured(pH=v), "measured.pH"),
        ("distribution", lambda v: {"pKa": [4.76], "pH": v}, "pH"),
        ("distribution", lambda v: {"pKa": [4.76], "pH_min": v, "pH_max": 14}, "pH_min"),
        ("dose", lambda v: {"scenario": WATER, "chemical": "NaOH", "target_pH": v}, "target_pH"),
        ("titrate", lambda v: {"scenario": WATER, "titrant": "NaOH", "titrant_M": 0.02, "to_pH": v}, "to_pH"),
        ("buffer", lambda v: {"scenario": WATER, "pH_min": v, "pH_max": 14}, "pH_min"),
        ("buffer", lambda v: {"scenario": WATER, "capacity": {"from_pH": 4.5, "to_pH": v}}, "capacity.to_pH"),
        ("water", lambda v: _with(WATER, curve={"pH_min": v, "pH_max": 14}), "curve.pH_min"),
        ("water_view", lambda v: _with(WATER, curve={"pH_min": 0, "pH_max": v}), "curve.pH_max"),
        ("treat", lambda v: {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": v}]},
         "steps[0].target_pH"),
        ("titrate", lambda v: {"scenario": WATER, "titrant": "EDTA", "titrant_M": 0.01, "fixed_pH": v}, "fixed_pH"),
        ("conditional_constants", lambda v: {"metals": ["calcium"], "pH_from": v}, "pH_from"),
    ]
    for method, make, field in fields:
        for outside in (lo - 0.01, hi + 0.01):
            err = _error(method, make(outside))
            assert err["field"] == field, (method, field, err)
            assert "from 0 to 14" in err["message"], (method, field, err["message"])


def test_upper_limits_on_totals_and_flow():
    """1e6 mmol/L and a flow of 10^20 were accepted somewhere; every entry refuses them in words."""
    err = _error("solve", _with(WATER, systems=[{"id": "carbonate", "total": 1e6, "unit": "mmol/L"}]))
    assert f"{checks.fmt(MAX_TOTAL_M * 1e3)} mmol/L" in err["message"], err["message"]
    err = _error("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": 1e20, "flow_unit": "m3/d"})
    assert "flow" in err["message"] and "m3/d" in err["message"], err["message"]
    for flow, unit in ((1e9, "m3/d"), (3000, "MGD")):
        err = _error("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5, "flow": flow, "flow_unit": unit})
        assert err["field"] == "flow"
    ok = json.loads(dispatch.handle("dose", json.dumps({"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5,
                                                        "flow": 500, "flow_unit": "MGD"})))
    assert ok["ok"], ok
    for params, field in (({"scenario": WATER, "titrant": "HCl", "titrant_M": 6}, "titrant_M"),
                          ({"pKa": [4.76], "total_M": 6}, "total_M")):
        method = "titrate" if "titrant" in params else "distribution"
        err = _error(method, params)
        assert err["field"] == field and "5 mol/L" in err["message"], err


def test_limits_catalogue_for_the_page():
    """The page asks the core for the pH range and limits (one place for the numbers)."""
    reply = json.loads(dispatch.handle("systems", "{}"))
    assert reply["ok"], reply
    assert reply["result"]["limits"]["pH"] == list(checks.PH_RANGE)
    assert reply["result"]["limits"]["total_M"] == MAX_TOTAL_M
    # and the words of each input, for notes about values dropped from a link or a file
    assert reply["result"]["labels"]["measured.pH"] == ["the measured pH", ""]


# Every top-level and nested input of each method, given values of the wrong kind or out of
# range: the reply is a refusal in words (one of the core's error types), or an answer.
WRONG = [None, True, "abc", "", -1, 0, 1e300, float("inf"), [], {}, [1, 2], {"a": 1}, 99, -99]
SWEEP = [
    ("solve", WATER, [], ["temperature_C", "activity", "ionic_strength_M", "tds_mg_per_L", "conductance_uS_per_cm",
                          "pH", "systems", "ions", "gas", "complexes", "precipitate", "uncertainty", "measured",
                          "ccpp_open_CO2_partial_pressure_atm", "ccpp_temperatures_C"]),
    ("solve", WATER, ["systems", 0], ["id", "total", "unit", "custom"]),
    ("solve", WATER, ["ions", 0], ["id", "total", "unit", "custom"]),
    ("solve", _with(WATER, systems=[{"custom": {"name": "x", "pKa": [4.2]}, "total": 1, "unit": "mmol/L"}]),
     ["systems", 0, "custom"], ["name", "pKa", "charge_most_protonated", "molar_mass_g_per_mol"]),
    ("solve", MEASURED, ["measured"], ["pH", "alkalinity"]),
    ("solve", MEASURED, ["measured", "alkalinity"], ["value", "unit", "definition", "end_point_pH"]),
    ("dose", {"scenario": WATER, "chemical": "NaOH", "target_pH": 8.5}, [],
     ["chemical", "target_pH", "strength_pct", "density_kg_per_L", "flow", "flow_unit", "precipitate", "target_LSI"]),
    ("titrate", {"scenario": WATER, "titrant": "HCl", "titrant_M": 0.02}, [],
     ["titrant", "titrant_M", "sample_mL", "to_pH", "points"]),
    ("buffer", {"scenario": WATER, "capacity": {"from_pH": 5, "to_pH": 7}}, ["capacity"], ["from_pH", "to_pH"]),
    ("distribution", {"pKa": [4.76]}, [], ["pKa", "pH", "total_M", "pH_min", "pH_max", "points", "system", "name"]),
    ("treat", {"scenario": WATER, "steps": [{"chemical": "NaOH", "target_pH": 8}]}, ["steps", 0],
     ["chemical", "target_pH", "strength_pct", "density_kg_per_L", "precipitate"]),
    ("blend", {"waters": [WATER, WATER], "fractions": [0.5, 0.5]}, [], ["waters", "fractions", "names", "flow"]),
    ("soften", {"scenario": WATER}, [], ["softening_pH", "lime_mg_per_L", "soda_ash_mg_per_L", "remove_magnesium",
                                         "target_hardness_mg_per_L_as_CaCO3", "excess_lime_meq_per_L", "recarbonation"]),
    ("soften", {"scenario": WATER, "recarbonation": {"target_LSI": 0}}, ["recarbonation"], ["target_LSI", "precipitate"]),
    ("solubility", {"scenario": WATER, "metal": "lead"}, [], ["metal", "axis", "from", "to", "points", "solids"]),
    ("conditional_constants", {"metals": ["calcium"]}, [], ["metals", "pH_from", "pH_to", "points"]),
]
REFUSALS = {"InputError", "UnknownIdError", "UnreachableError", "ConvergenceError"}


@pytest.mark.sweep
@pytest.mark.parametrize("method, base, path, keys", SWEEP, ids=[f"{m}-{'.'.join(map(str, p)) or 'top'}"
                                                                  for m, _, p, _ in SWEEP])
def test_every_input_given_anything_is_refused_in_words(method, base, path, keys):
    for key in keys:
        for wrong in WRONG:
            params = json.loads(json.dumps(base))
            target = params
            for step in path:
                target = target[step]
            target[key] = wrong
            reply = json.loads(dispatch.handle(method, json.dumps(params, allow_nan=True)))
            if reply["ok"]:
                continue
            err = reply["error"]
            assert err["type"] in REFUSALS, (method, path, key, wrong, err)
            assert words_problems(err["message"]) == [], (method, path, key, wrong, err["message"])


def test_found_by_the_sweep():
    """Inputs the sweep above once found answered with a Python error or a repr."""
    ok = json.loads(dispatch.handle("soften", json.dumps({"scenario": WATER, "lime_mg_per_L": 0})))
    assert ok["ok"] or ok["error"]["type"] in REFUSALS, ok
    err = _error("solubility", {"scenario": WATER, "metal": "lead", "axis": []})
    assert err["field"] == "axis" and words_problems(err["message"]) == [], err
    err = _error("soften", {"scenario": WATER, "recarbonation": {"target_LSI": 0, "precipitate": [1]}})
    assert err["message"] == "Choose solid 1 allowed to form from the list.", err
    err = _error("blend", {"waters": [WATER, WATER], "fractions": []})
    assert words_problems(err["message"]) == [], err
