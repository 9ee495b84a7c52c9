"""End-to-end: the job "Lead and copper" (site/lead.js, lead-view.js) in headless Chromium.

The oracle is the core's JSON entry (conftest.core_handle, the function the page's worker
calls) run in this test process on the page's own water (read from the page's input-state
registry): the page runs the same package in Pyodide, so the numbers agree to round-off.
The example water (an invented corrosion-control case with orthophosphate) is only an input
here; no chemistry value of it is asserted, only that the page shows the core's.
"""

from __future__ import annotations

import pytest
from conftest import JOB_MS, STATE, close, core, draw_marks, open_job, page_water
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

drawn, wait_drawn = draw_marks("lead")

READ_PLOT = """() => {
  for (const doc of Bokeh.documents) {
    const src = doc.get_model_by_name('lead_line_src');
    if (!src) continue;
    const get = (m) => (m.data instanceof Map ? Object.fromEntries(m.data) : m.data);
    const d = get(src), b = get(doc.get_model_by_name('lead_band_src')), s = get(doc.get_model_by_name('lead_seg_src'));
    return {xs: Array.from(d.xs, (a) => Array.from(a)), ys: Array.from(d.ys, (a) => Array.from(a)),
            metal: Array.from(d.metal), solid: Array.from(d.solid), bands: Array.from(b.xs).length,
            labels: Array.from(s.text), axis: doc.get_model_by_name('lead_xaxis').axis_label};
  }
  return null;
}"""

READ_TABLE = """() => Array.from(document.querySelectorAll('#lead-table tbody tr'), (tr) => {
  const cell = (k) => tr.querySelector(`td[data-key="${k}"]`);
  return {x: Number(tr.querySelector('th').dataset.value),
          lead: cell('lead_ug_per_L').dataset.value, lead_solid: cell('lead_solid').textContent,
          lead_low: cell('lead_band').dataset.low, lead_high: cell('lead_band').dataset.high,
          copper: cell('copper_ug_per_L').dataset.value, copper_solid: cell('copper_solid').textContent};
})"""


def redrawn(page: Page, before: int) -> None:
    wait_drawn(page, "lead", before, settle=True)


def open_lead(page: Page, fragment: str = "#preset=orthophosphate-dose") -> None:
    open_job(page, fragment, "lead", ["lead"])


def check_against_core(page: Page, params: dict) -> None:
    """The table's rows and the plotted lines equal the core's curves for the same question."""
    scenario = page_water(page)
    solids = params.pop("solids", {})
    ref = {m: core("solubility", {**params, "scenario": scenario, "metal": m, **({"solids": solids[m]} if m in solids else {})})
           for m in ("lead", "copper")}
    names = {c["id"]: c["name"] for r in ref.values() for c in r["constants"]}
    rows = page.evaluate(READ_TABLE)
    assert len(rows) == 9
    pts = {m: {round(p["x"], 9): p for p in r["points"]} for m, r in ref.items()}
    for row in rows:
        for m in ("lead", "copper"):
            p = pts[m][round(row["x"], 9)]
            assert close(row[m], p["dissolved_ug_per_L"]), (m, row, p["dissolved_ug_per_L"])
            assert row[f"{m}_solid"] == names[p["controlling_solid"]]
        p = pts["lead"][round(row["x"], 9)]
        assert close(row["lead_low"], p["band_ug_per_L"]["low"]) and close(row["lead_high"], p["band_ug_per_L"]["high"])
    plot = page.evaluate(READ_PLOT)
    for m in ("lead", "copper"):
        # each metal's segments, joined at their shared boundary points, are the core's whole curve
        segs = [(xs, ys) for xs, ys, mm in zip(plot["xs"], plot["ys"], plot["metal"]) if mm == m]
        xs = [x for k, (sx, _) in enumerate(segs) for x in (sx if k == 0 else sx[1:])]
        ys = [y for k, (_, sy) in enumerate(segs) for y in (sy if k == 0 else sy[1:])]
        curve = [p for p in ref[m]["points"] if p["dissolved_ug_per_L"] is not None]
        assert len(xs) == len(curve) == params["points"]
        assert all(close(a, p["x"]) for a, p in zip(xs, curve))
        assert all(close(a, p["dissolved_ug_per_L"]) for a, p in zip(ys, curve))
        # one segment per stretch controlled by one solid, each named on the plot
        solids = [names[p["controlling_solid"]] for p in curve]
        stretches = [s for k, s in enumerate(solids) if k == 0 or s != solids[k - 1]]
        assert [s for s, mm in zip(plot["solid"], plot["metal"]) if mm == m] == stretches
        assert set(stretches) <= set(plot["labels"])


def test_lead_and_copper_against_ph_equal_the_core(page: Page, watch):
    open_lead(page)
    # a 200-point curve (201 points over pH 6.5..10.5) of each metal is drawn on a log axis
    check_against_core(page, {"axis": "pH", "from": 6.5, "to": 10.5, "points": 201, "orthophosphate_dose": 0,
                              "orthophosphate_dose_unit": "mg/L as P"})
    plot = page.evaluate(READ_PLOT)
    assert plot["axis"] == "pH" and plot["bands"] >= 1
    # what it is, and what it is not
    expect(page.locator("#lead-basis")).to_contain_text("not a prediction of lead or copper at a tap")
    # the cautions for orthophosphate and pH adjustment sit beside the dose field
    cautions = page.locator("#lead-form #lead-cautions")
    expect(cautions).to_be_visible()
    expect(cautions).to_contain_text("Orthophosphate overfeed")
    expect(cautions).to_contain_text("jar or bench test")
    # the published constants, with the spread of those whose sources disagree
    page.locator("#lead-constants-box summary").click()
    spread = page.locator("#lead-constants tbody tr[data-spread='true']")
    assert spread.count() >= 1
    expect(page.locator("#lead-constants tbody tr[data-id='hydrocerussite'] td[data-key='spread']")).to_contain_text("to")
    expect(page.locator("#lead-water")).to_contain_text("DIC")


def test_dose_and_reverse_curves_equal_the_core(page: Page, watch):
    open_lead(page)
    before = drawn(page, "lead")
    page.fill("#lead-dose", "1.5")
    redrawn(page, before)
    check_against_core(page, {"axis": "pH", "from": 6.5, "to": 10.5, "points": 201, "orthophosphate_dose": 1.5,
                              "orthophosphate_dose_unit": "mg/L as P"})
    # against DIC at pH 8 (the dose still added)
    before = drawn(page, "lead")
    page.select_option("#lead-axis", "DIC")
    redrawn(page, before)
    before = drawn(page, "lead")
    page.fill("#lead-fixed-ph", "8")
    redrawn(page, before)
    check_against_core(page, {"axis": "DIC", "from": 1, "to": 100, "unit": "mg/L as C", "points": 201,
                              "fixed_pH": 8, "orthophosphate_dose": 1.5, "orthophosphate_dose_unit": "mg/L as P"})
    assert page.evaluate(READ_PLOT)["axis"] == "DIC (mg/L as C)"
    # against orthophosphate: the axis is the total, the dose field does not apply
    before = drawn(page, "lead")
    page.select_option("#lead-axis", "orthophosphate")
    redrawn(page, before)
    expect(page.locator("#lead-dose")).to_be_disabled()
    check_against_core(page, {"axis": "orthophosphate", "from": 0, "to": 3, "unit": "mg/L as P", "points": 201,
                              "fixed_pH": 8})


@pytest.mark.parametrize("field, text, message", [
    ("#lead-from", "abc", "is not a number"),
    ("#lead-to", "15", "The pH must be from 0 to 14."),
    ("#lead-to", "6", "above its start"),
    ("#lead-dose", "-1", "cannot be negative"),
])
def test_bad_input_message_beside_its_field_and_no_stale_result(page: Page, watch, field, text, message):
    open_lead(page)
    page.fill(field, text)
    expect(page.locator(f"{field}-error")).to_contain_text(message, timeout=15_000)
    expect(page.locator("#lead-results")).to_have_attribute("data-state", "empty")
    assert page.locator("#lead-table tbody tr").count() == 0
    assert page.evaluate(READ_PLOT)["xs"] == []


def test_candidate_solids_chosen_on_the_page_equal_the_core(page: Page, watch):
    open_lead(page)
    before = drawn(page, "lead")
    page.select_option("#lead-lead-solids", "no-chloride")
    redrawn(page, before)
    before = drawn(page, "lead")
    page.select_option("#lead-copper-solids", "fresh")
    redrawn(page, before)
    check_against_core(page, {"axis": "pH", "from": 6.5, "to": 10.5, "points": 201, "orthophosphate_dose": 0,
                              "orthophosphate_dose_unit": "mg/L as P",
                              "solids": {"lead": ["cerussite", "hydrocerussite", "hydroxypyromorphite", "anglesite",
                                                  "litharge"],
                                         "copper": ["copper-hydroxide"]}})
    solids = {t.strip() for t in page.locator("#lead-table td[data-key='lead_solid']").all_text_contents()}
    assert "Chloropyromorphite" not in solids
    assert {t.strip() for t in page.locator("#lead-table td[data-key='copper_solid']").all_text_contents()} == {
        "Copper(II) hydroxide"}


def test_a_link_carries_the_job_inputs(page: Page, watch):
    open_lead(page)
    for sel, value in (("#lead-dose", "0.8"),):
        before = drawn(page, "lead")
        page.fill(sel, value)
        redrawn(page, before)
    before = drawn(page, "lead")
    page.select_option("#lead-axis", "DIC")
    redrawn(page, before)
    before = drawn(page, "lead")
    page.fill("#lead-fixed-ph", "7.8")
    redrawn(page, before)
    state = page.evaluate(STATE)
    assert state["lead"] == {"axis": "DIC", "from": 1, "to": 100, "orthophosphate_dose_mg_per_L_as_P": 0.8,
                             "fixed_pH": 7.8, "lead_solids": "all", "copper_solids": "all"}
    link = page.evaluate("async (s) => '#' + (await import('./share.js')).encodeState(s)", state)
    page.goto("about:blank")
    open_lead(page, link)
    assert page.evaluate(STATE)["lead"] == state["lead"]
    expect(page.locator("#lead-table-x")).to_have_text("DIC (mg/L as C)")
    check_against_core(page, {"axis": "DIC", "from": 1, "to": 100, "unit": "mg/L as C", "points": 201,
                              "fixed_pH": 7.8, "orthophosphate_dose": 0.8, "orthophosphate_dose_unit": "mg/L as P"})


def test_a_water_that_cannot_be_used_marks_the_curves_and_a_good_one_brings_them_back(page: Page, watch):
    open_lead(page)
    water_line = page.locator("#lead-water")
    expect(water_line).to_contain_text("Working on the water above")
    expect(page.locator("#lead-results")).to_have_attribute("data-state", "current")
    page.fill("#water-temperature", "warm")
    expect(water_line).to_have_attribute("data-state", "stale", timeout=JOB_MS)
    expect(water_line).to_contain_text("These curves are for the last valid water (pH")
    expect(page.locator("#lead-results")).to_have_attribute("data-state", "stale", timeout=JOB_MS)
    assert page.locator("#lead-table tbody tr").count() == 9  # kept, but marked
    before = drawn(page, "lead")
    page.fill("#water-temperature", "20")
    redrawn(page, before)
    expect(water_line).to_have_attribute("data-state", "current")
    expect(page.locator("#lead-results")).to_have_attribute("data-state", "current")
    assert page_water(page)["temperature_C"] == 20
    check_against_core(page, {"axis": "pH", "from": 6.5, "to": 10.5, "points": 201, "orthophosphate_dose": 0,
                              "orthophosphate_dose_unit": "mg/L as P"})
