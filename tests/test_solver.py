"""Equilibrium pH: textbook worked examples, an independent scipy solver, invariants."""

import math
import random

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from acidscape.data import library
from acidscape.science import temperature
from acidscape.science import purewater as water
from acidscape.boundary.api import solve
from acidscape.errors import InputError, UnknownIdError

from reference import solve_ref

NA = "Na+"
CL = "Cl-"


def _ph(scenario):
    return solve(scenario)["pH"]


# --- Textbook worked examples (ideal activities, 25 °C) --------------------------------
def test_weak_acid_acetic_0_1_M():
    # 0.10 M acetic acid: pH 2.88 (D. C. Harris, Quantitative Chemical Analysis, 7th ed., ch. 9,
    # worked example with Ka = 1.75e-5; from memory).
    assert _ph({"activity": "ideal", "systems": [{"id": "acetic", "total": 0.1}]}) == pytest.approx(2.88, abs=0.01)


def test_sodium_bicarbonate_amphiprotic():
    # 0.10 M NaHCO3: pH ~ (pKa1 + pKa2)/2 = 8.34 (amphiprotic approximation; Harris ch. 11,
    # from memory). The exact charge balance at 0.1 M is within 0.03 of the approximation.
    out = _ph({"activity": "ideal", "complexes": False, "systems": [{"id": "carbonate", "total": 0.1}],
               "ions": [{"id": NA, "total": 0.1}]})
    assert out == pytest.approx(8.34, abs=0.03)


def test_sodium_carbonate():
    # 0.050 M Na2CO3: pH 11.5 from Kb = Kw/Ka2 (common textbook exercise, e.g. Snoeyink &
    # Jenkins, Water Chemistry, 1980, ch. 4; from memory).
    out = _ph({"activity": "ideal", "complexes": False, "systems": [{"id": "carbonate", "total": 0.05}],
               "ions": [{"id": NA, "total": 0.1}]})
    assert out == pytest.approx(11.5, abs=0.05)


def test_rainwater_in_equilibrium_with_air():
    # Pure water open to pCO2 = 10^-3.5 atm at 25 °C: pH 5.65, the classic "natural rain"
    # value (Stumm & Morgan, Aquatic Chemistry, 3rd ed., 1996, ch. 4; from memory: 5.6-5.7).
    out = _ph({"activity": "ideal", "gas": {"CO2_partial_pressure_atm": 10**-3.5}})
    assert out == pytest.approx(5.65, abs=0.03)


def test_pure_water_is_neutral_at_every_temperature():
    # Neutral pH = pKw/2 (definition; pKw from the IAPWS formulation, checked in test_water).
    for t in (0, 25, 60, 100):
        out = solve({"activity": "ideal", "temperature_C": t})
        assert out["pH"] == pytest.approx(out["pKw"] / 2, abs=1e-9)


def test_strong_acid_1_mM():
    # 1 mmol/L HCl: pH 3.00 (strong acid, common practice), ideal.
    out = _ph({"activity": "ideal", "ions": [{"id": CL, "total": 1, "unit": "mmol/L"}]})
    assert out == pytest.approx(3.0, abs=1e-4)


def test_fixed_pH_speciation_reports_imbalance():
    out = solve({"pH": 7.0, "systems": [{"id": "acetic", "total": 1e-3}]})
    assert out["pH"] == 7.0
    assert out["pH_was_given"] is True
    # nearly all acetate, no cation given: the imbalance is about -1 meq/L
    assert out["charge_balance_residual_eq_per_L"] == pytest.approx(-1e-3, rel=0.01)


# --- Independent solver over random waters ------------------------------------------------
SYSTEM_IDS = [s for s in library.systems()]


def _ref_inputs(out, scenario):
    systems = []
    for sys_out, entry in zip(out["systems"], scenario["systems"]):
        system = library.get_system(entry["id"])
        pKa = temperature.pKa_at(system, scenario["temperature_C"] + 273.15)
        systems.append((sys_out["total_M"], tuple(pKa), tuple(s.charge for s in system.species),
                        tuple(s.ion_size_A for s in system.species)))
    ions = []
    for entry in scenario["ions"]:
        ion = library.get_ion(entry["id"])
        ions.append((entry["total"], ion.charge, ion.ion_size_A))
    return systems, ions


@st.composite
def waters(draw):
    n = draw(st.integers(1, 6))
    ids = draw(st.lists(st.sampled_from(SYSTEM_IDS), min_size=n, max_size=n, unique=True))
    systems = [{"id": i, "total": 10 ** draw(st.floats(-7, -2))} for i in ids]
    ions = [{"id": NA, "total": 10 ** draw(st.floats(-7, -1.5))},
            {"id": CL, "total": 10 ** draw(st.floats(-7, -1.5))}]
    return {
        "temperature_C": draw(st.floats(0, 100)),
        "activity": draw(st.sampled_from(["ideal", "davies", "extended-debye-huckel"])),
        "complexes": False,  # the independent reference below is the acid-base charge balance
        "systems": systems,
        "ions": ions,
    }


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(scenario=waters())
def test_agrees_with_independent_scipy_solver(scenario):
    out = solve(scenario)
    systems, ions = _ref_inputs(out, scenario)
    T = scenario["temperature_C"] + 273.15
    pH_ref, I_ref = solve_ref(systems, ions, T, water.pKw(T), scenario["activity"])
    assert out["pH"] == pytest.approx(pH_ref, abs=1e-6)
    assert out["ionic_strength_M"] == pytest.approx(I_ref, rel=1e-6, abs=1e-12)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(scenario=waters())
def test_invariants_mass_charge_fractions(scenario):
    out = solve(scenario)
    for sys_out in out["systems"]:
        rows = [r for r in out["species"] if r["system"] == sys_out["id"]]
        # mass balance per system
        assert math.fsum(r["concentration_M"] for r in rows) == pytest.approx(sys_out["total_M"], rel=1e-12)
        assert math.fsum(r["fraction"] for r in rows) == pytest.approx(1.0, abs=1e-12)
        # activity = coefficient x concentration (contract)
        for r in rows:
            assert r["activity_M"] == pytest.approx(r["activity_coefficient"] * r["concentration_M"], rel=1e-14)
    # electroneutrality: the trail sums to the reported residual, which is ~0
    scale = sum(abs(t["charge_eq_per_L"]) for t in out["trail"])
    assert math.fsum(t["charge_eq_per_L"] for t in out["trail"]) == pytest.approx(
        out["charge_balance_residual_eq_per_L"], abs=1e-12 * scale + 1e-300)
    assert abs(out["charge_balance_residual_eq_per_L"]) <= 1e-8 * scale
    # pH is the activity of H+ as a meter reads it (contract)
    h = out["water_ions"][0]
    assert -math.log10(h["activity_M"]) == pytest.approx(out["pH"], abs=1e-12)


@pytest.mark.sweep
def test_extremes_converge():
    # Totals 1e-12..2 mol/L, up to 40 systems, pH -1..15 (the solver's promised range).
    rng = random.Random(20261201)
    ids = SYSTEM_IDS
    for k in range(60):
        n = rng.randint(1, len(ids))  # each system once (a repeated system is refused)
        systems = [{"id": i, "total": 10 ** rng.uniform(-12, math.log10(2 / n))} for i in rng.sample(ids, n)]
        ions = [{"id": NA, "total": 10 ** rng.uniform(-12, 0.3)}, {"id": CL, "total": 10 ** rng.uniform(-12, 0.3)}]
        out = solve({"activity": rng.choice(["ideal", "davies"]), "temperature_C": rng.uniform(0, 100),
                     "systems": systems, "ions": ions})
        assert -1.5 < out["pH"] < 15.5
        scale = sum(abs(t["charge_eq_per_L"]) for t in out["trail"])
        assert abs(out["charge_balance_residual_eq_per_L"]) <= 1e-8 * scale


# --- Bad input -----------------------------------------------------------------------------
@pytest.mark.parametrize(
    "scenario, exc, field, text",
    [
        ({"systems": [{"id": "unobtainium", "total": 1}]}, UnknownIdError, "systems[0].id", "unobtainium"),
        ({"ions": [{"id": "Xx+", "total": 1}]}, UnknownIdError, "ions[0].id", "Xx+"),
        ({"systems": [{"id": "acetic", "total": -1}]}, InputError, "systems[0].total", "must be zero or more"),
        ({"systems": [{"id": "acetic", "total": 1, "unit": "mg/L as N"}]}, InputError, "systems[0].unit", "does not fit"),
        ({"systems": [{"id": "acetic", "total": 1, "unit": "meq/L"}]}, InputError, "systems[0].unit", "strong ions only"),
        ({"temperature_C": 120}, InputError, "temperature_C", "from 0 to 100 °C"),
        ({"temperature_C": "hot"}, InputError, "temperature_C", "must be a number"),
        ({"activity": "pitzer"}, UnknownIdError, "activity", "pitzer"),
        ({"systems": [{"id": "acetic", "total": float("nan")}]}, InputError, "systems[0].total", "too large to use"),
    ],
)
def test_bad_input_names_the_field(scenario, exc, field, text):
    with pytest.raises(exc) as info:
        solve(scenario)
    assert info.value.field == field
    assert text in info.value.message
