"""End-to-end: the "Equilibrium of a whole water" section against the core run in this process.

The page runs the same wheel in Pyodide, so every number it shows must agree with
``acidscape.boundary.api.solve`` of the scenario typed into the editor (to 1e-9 relative on the raw
``data-value`` attributes). The compositions below are invented for the test; the checks are
agreement with the core (the oracle), electroneutrality of the charge-balance trail, and the
page's behaviour with bad input.
"""

from __future__ import annotations

import base64
import json
import math

import pytest
from conftest import core_scenario, settled
from playwright.sync_api import Page, expect

from acidscape.boundary import api

from acidscape.boundary import dispatch
pytestmark = pytest.mark.e2e

BOOT_MS = 60_000
REL = 1e-9

# The page embeds this section's plots first (the water is the first view), then the one-acid
# explorer's: among the Bokeh documents that hold a source of this name, this section's is the first.
READ_WATER_SOURCE = """(name) => {
  const found = [];
  for (const doc of Bokeh.documents) {
    const model = doc.get_model_by_name(name);
    if (model) found.push(model);
  }
  const model = found[0];
  if (!model) return null;
  const data = model.data instanceof Map ? Object.fromEntries(model.data) : model.data;
  return {labels: Array.from(data.label), ys: Array.from(data.ys, (y) => Array.from(y))};
}"""


def solve(scenario: dict) -> dict:
    reply = json.loads(dispatch.handle("solve", json.dumps(core_scenario(scenario))))
    assert reply["ok"], reply
    return reply["result"]


def water_drawn(page: Page) -> int:
    return int(page.locator("#water-section").get_attribute("data-drawn") or 0)


# The water these tests build on (invented): carbonate 2 mmol/L, Na+ 2 mmol/L, Cl- 0.2 mmol/L,
# 25 °C, opened from a link (the page's own starting water holds calcium and magnesium too).
START = {"temperature_C": 25, "activity": "davies",
         "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
         "ions": [{"id": "sodium", "total": 2, "unit": "mmol/L"}, {"id": "chloride", "total": 0.2, "unit": "mmol/L"}]}
START_LINK = "s=2." + base64.urlsafe_b64encode(json.dumps(
    {"v": 2, "water": {"scenario": START, "display": {"unit": "mmol/L"}}}).encode()).decode().rstrip("=")


def open_page(page: Page, fragment: str = "") -> None:
    page.goto("/" + (f"#{fragment}" if fragment else ""))
    expect(page.locator("#water-section")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)


def settle(page: Page, before: int) -> None:
    """Wait for a redraw after ``before``, then until nothing is scheduled or with the core."""
    page.wait_for_function(
        "(n) => Number(document.querySelector('#water-section').dataset.drawn) > n", arg=before, timeout=10_000
    )
    settled(page)


def number(page: Page, selector: str) -> float:
    return float(page.get_attribute(selector, "data-value"))


def species_rows(page: Page) -> list[dict]:
    return page.evaluate(
        """() => Array.from(document.querySelectorAll('#water-species-table tbody tr'), (tr) => ({
             name: tr.dataset.species, system: tr.dataset.system,
             concentration_M: Number(tr.dataset.concentrationM)}))"""
    )


def trail(page: Page) -> list[float]:
    return page.evaluate(
        """() => Array.from(document.querySelectorAll(
             '#water-trail-table tbody td[data-key="charge_eq_per_L"]'), (td) => Number(td.dataset.value))"""
    )


def assert_page_matches(page: Page, scenario: dict) -> dict:
    want = solve(scenario)
    assert math.isclose(number(page, "#water-ph"), want["pH"], rel_tol=REL)
    assert math.isclose(number(page, "#water-ionic-strength"), want["ionic_strength_M"], rel_tol=REL)
    got = {(r["system"], r["name"]): r["concentration_M"] for r in species_rows(page)}
    for s in want["species"]:
        # rows of strong ions and complexes (a core that lists them among the species) are
        # filed under "strong ion" / the kind instead of an acid-base system
        system = s["system"] or {"free ion": "strong ion"}.get(s.get("kind"), s.get("kind"))
        c = got[(system, s["name"])]
        assert math.isclose(c, s["concentration_M"], rel_tol=REL, abs_tol=1e-300), (s, c)
    return want


def test_a_composition_typed_in_matches_the_core_and_the_trail_balances(page: Page, watch):
    open_page(page, START_LINK)
    # The water opened from the link (START).
    start = {
        "temperature_C": 25, "activity": "davies",
        "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
        "ions": [{"id": "sodium", "total": 2, "unit": "mmol/L"}, {"id": "chloride", "total": 0.2, "unit": "mmol/L"}],
    }
    assert_page_matches(page, start)

    # Build a richer water through the editor: ammonium as N, an acid of one's own, calcium in
    # mg/L, another temperature and activity model.
    page.click("#water-add-system")
    page.select_option("#water-system-1-id", "ammonium")
    page.select_option("#water-system-1-unit", "mg/L as N")
    page.fill("#water-system-1-total", "1.5")
    page.click("#water-add-system")
    page.select_option("#water-system-2-id", "custom")
    page.fill("#water-system-2-name", "test acid")
    page.fill("#water-system-2-pka", "4.2, 8.9")
    page.fill("#water-system-2-charge", "0")
    page.fill("#water-system-2-total", "0.05")
    page.click("#water-add-ion")
    page.select_option("#water-ion-2-id", page.eval_on_selector(
        "#water-ion-2-id", "(s) => [...s.options].find((o) => o.value === 'calcium' || o.value === 'Ca+2').value"))
    page.select_option("#water-ion-2-unit", "mg/L")
    page.fill("#water-ion-2-total", "20")
    page.fill("#water-temperature", "12")
    before = water_drawn(page)
    page.select_option("#water-activity", "extended-debye-huckel")
    settle(page, before)

    scenario = {
        "temperature_C": 12, "activity": "extended-debye-huckel",
        "systems": [
            {"id": "carbonate", "total": 2, "unit": "mmol/L"},
            {"id": "ammonium", "total": 1.5, "unit": "mg/L as N"},
            {"custom": {"name": "test acid", "pKa": [4.2, 8.9], "charge_most_protonated": 0},
             "total": 0.05, "unit": "mmol/L"},
        ],
        "ions": [
            {"id": "sodium", "total": 2, "unit": "mmol/L"},
            {"id": "chloride", "total": 0.2, "unit": "mmol/L"},
            {"id": "calcium", "total": 20, "unit": "mg/L"},
        ],
    }
    want = assert_page_matches(page, scenario)
    # The section's state is exactly that scenario (what share links carry).
    state = page.evaluate("() => import('./state.js').then((m) => m.collectState().water)")
    assert solve(state["scenario"])["pH"] == want["pH"]
    # Temperatures typed in °F with a decimal comma are read as °C: (53,6 - 32) x 5/9 = 12.
    before = water_drawn(page)
    page.fill("#water-temperature", "53,6 °F")
    settle(page, before)
    assert math.isclose(page.evaluate("() => import('./state.js').then((m) => m.collectState().water.scenario.temperature_C)"),
                        12, rel_tol=1e-12)
    assert math.isclose(number(page, "#water-ph"), want["pH"], rel_tol=1e-9)

    # Trail: its terms add up to the residual the core reports, which is tiny beside the
    # charge carried (the pH is where the balance closes).
    terms = trail(page)
    assert len(terms) == len(want["trail"])
    positive = number(page, "#water-trail-positive")
    residual = number(page, "#water-trail-residual")
    assert math.isclose(sum(terms), residual, abs_tol=1e-12 * positive)
    assert math.isclose(positive, sum(t for t in terms if t > 0), rel_tol=1e-12)
    assert abs(residual) < 1e-9 * positive

    # Log-concentration plot: one line per curve of the core (every species it draws, H+ and OH-).
    logc = page.evaluate(READ_WATER_SOURCE, "logc_src")
    curves = json.loads(dispatch.handle("water", json.dumps({**core_scenario(scenario), "curve": {"points": 5}})))
    assert len(logc["labels"]) == len(curves["result"]["curves"]["log_concentration"])
    # Fraction plot: the chosen system's species (ammonium: two lines).
    before = water_drawn(page)
    page.select_option("#water-plot-system", "1")
    fraction = page.evaluate(READ_WATER_SOURCE, "fraction_src")
    assert fraction["labels"] == ["NH₄⁺", "NH₃"]
    assert water_drawn(page) == before  # a view change, not a recompute

    # Concentrations in mg/L of the species: c x M x 1000.
    page.select_option("#water-display-unit", "mg/L")
    row = page.locator('#water-species-table tbody tr[data-species="HCO3-"] td[data-key="concentration"]')
    hco3 = next(s for s in want["species"] if s["name"] == "HCO3-")
    assert math.isclose(float(row.get_attribute("data-value")),
                        hco3["concentration_M"] * hco3["molar_mass_g_per_mol"] * 1e3, rel_tol=REL)


def test_measured_ph_and_alkalinity_and_a_fixed_ph(page: Page, watch):
    open_page(page, START_LINK)
    page.check("#water-measured")
    page.fill("#water-measured-ph", "7.6")
    page.select_option("#water-alk-unit", "meq/L")
    before = water_drawn(page)
    page.fill("#water-alk-value", "2.4")
    settle(page, before)
    # The carbonate row is left out: its total comes from the measurements.
    expect(page.locator("#water-system-0-total")).to_be_disabled()
    scenario = {
        "temperature_C": 25, "activity": "davies", "systems": [],
        "ions": [{"id": "sodium", "total": 2, "unit": "mmol/L"}, {"id": "chloride", "total": 0.2, "unit": "mmol/L"}],
        "measured": {"pH": 7.6, "alkalinity": {"value": 2.4, "unit": "meq/L"}},
    }
    want = assert_page_matches(page, scenario)
    assert math.isclose(want["pH"], 7.6, abs_tol=1e-6)  # the inferred water solves to the reading
    expect(page.locator("#water-inferred")).to_contain_text("From the measurements")

    # Back to the carbonate total, speciated at a given pH.
    page.uncheck("#water-measured")
    before = water_drawn(page)
    page.fill("#water-fixed-ph", "8.3")
    settle(page, before)
    expect(page.locator("#water-ph-label")).to_have_text("pH (given)")
    fixed = {
        "temperature_C": 25, "activity": "davies", "pH": 8.3,
        "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
        "ions": [{"id": "sodium", "total": 2, "unit": "mmol/L"}, {"id": "chloride", "total": 0.2, "unit": "mmol/L"}],
    }
    want = assert_page_matches(page, fixed)
    assert math.isclose(sum(trail(page)), want["charge_balance_residual_eq_per_L"], rel_tol=1e-9)


# (how to make the bad input, input whose message shows it, words the message must hold)
BAD = [
    (lambda p: p.fill("#water-system-0-total", "-1"), "#water-system-0-total", "must be zero or more"),
    (lambda p: p.fill("#water-system-0-total", "two"), "#water-system-0-total", "not a number"),
    (lambda p: p.fill("#water-ion-1-total", ""), "#water-ion-1-total", "Enter the concentration"),
    (lambda p: p.fill("#water-temperature", "120"), "#water-temperature", "must be from 0 to 100 °C"),
    (lambda p: p.fill("#water-pco2", "-0.1"), "#water-pco2", "must be from 0 to 10 atm"),
    # A system the library does not have (as an old share link might carry).
    (lambda p: p.evaluate("""() => { const s = document.querySelector('#water-system-0-id');
        s.add(new Option('gone', 'unobtainium')); s.value = 'unobtainium';
        s.dispatchEvent(new Event('change', {bubbles: true})); }"""),
     "#water-system-0-id", "acid-base system “unobtainium”"),
    # A unit that does not fit the system (meq/L is for strong ions only): the page's own check
    # of the unit list answers before the core is asked.
    (lambda p: p.evaluate("""() => { const s = document.querySelector('#water-system-0-unit');
        s.add(new Option('meq/L', 'meq/L')); s.value = 'meq/L';
        s.dispatchEvent(new Event('change', {bubbles: true})); }"""),
     "#water-system-0-unit", "does not fit this system"),
]


def test_bad_input_is_explained_beside_its_field_and_the_last_result_stays(page: Page, watch):
    open_page(page)
    for make_bad, selector, needle in BAD:
        kept_pH = page.get_attribute("#water-ph", "data-value")
        kept_rows = species_rows(page)
        kept_count = water_drawn(page)
        make_bad(page)
        error = page.locator(f"{selector}-error")
        expect(error).to_contain_text(needle, timeout=10_000)
        expect(page.locator(selector)).to_have_attribute("aria-invalid", "true")
        settled(page)  # any (wrongly) scheduled redraw has happened by now
        assert water_drawn(page) == kept_count, selector
        assert page.get_attribute("#water-ph", "data-value") == kept_pH
        assert species_rows(page) == kept_rows
        # Put the starting water back: the message goes and the page computes again.
        page.evaluate("""() => import('./state.js').then((m) => m.applyState({v: 1, water: {
            scenario: {temperature_C: 25, activity: 'davies',
              systems: [{id: 'carbonate', total: 2, unit: 'mmol/L'}],
              ions: [{id: 'sodium', total: 2, unit: 'mmol/L'}, {id: 'chloride', total: 0.2, unit: 'mmol/L'}]},
            display: {unit: 'mmol/L'}}}))""")
        expect(error).to_be_empty()
        assert water_drawn(page) > kept_count

    # With the measured option on, the carbonate row is not in the scenario, so the core's
    # systems[0] is the editor's second row: the message must still land beside that row.
    page.click("#water-add-system")
    page.check("#water-measured")
    page.fill("#water-system-1-total", "-2")
    expect(page.locator("#water-system-1-total-error")).to_contain_text("must be zero or more", timeout=10_000)
    expect(page.locator("#water-system-0-total-error")).to_be_empty()
