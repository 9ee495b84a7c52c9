"""End-to-end: the job "Hardness titration" (site/hardness.js, hardness-view.js) in headless Chromium.

The oracle is the core's JSON entry (conftest.core_handle, the function the page's worker
calls) run in this test process on the page's own water (read from the page's input-state
registry). The example water (an invented hard well water) is only an input here; no chemistry
value of it is asserted, only that the page shows the core's.
"""

from __future__ import annotations

import pytest
from conftest import JOB_MS, STATE, close, core, draw_marks, open_job, page_water
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

count, wait_drawn = draw_marks("hardness")

READ_PLOTS = """() => {
  const get = (m) => (m.data instanceof Map ? Object.fromEntries(m.data) : m.data);
  const out = {};
  for (const doc of Bokeh.documents) {
    const t = doc.get_model_by_name('edta_src');
    if (t) {
      const d = get(t), e = get(doc.get_model_by_name('edta_ep_src'));
      out.titration = {xs: Array.from(d.xs, (a) => Array.from(a)), ys: Array.from(d.ys, (a) => Array.from(a)),
                       metal: Array.from(d.metal), ex: Array.from(e.x), ey: Array.from(e.y)};
    }
    const c = doc.get_model_by_name('edtacond_src');
    if (c) {
      const d = get(c);
      out.conditional = {xs: Array.from(d.xs, (a) => Array.from(a)), ys: Array.from(d.ys, (a) => Array.from(a)),
                         metal: Array.from(d.metal), marker: doc.get_model_by_name('edtacond_marker').location};
    }
  }
  return out;
}"""


def open_hardness(page: Page, fragment: str = "#preset=co2-well", wait: bool = True) -> None:
    open_job(page, fragment, "hardness", ["titration", "conditional"] if wait else [])


def value(page: Page, selector: str) -> str:
    return page.locator(selector).get_attribute("data-value") or ""


def check_titration(page: Page, sample_mL: float, titrant_M: float, pH: float) -> None:
    scenario = page_water(page)
    ref = core("titrate", {"scenario": scenario, "titrant": "EDTA", "titrant_M": titrant_M,
                           "sample_mL": sample_mL, "fixed_pH": pH})
    assert close(value(page, "#hardness-total"), ref["total_hardness_mg_per_L_as_CaCO3"])
    assert close(value(page, "#hardness-composition"), ref["hardness_from_composition_mg_per_L_as_CaCO3"])
    rows = page.locator("#hardness-endpoints tbody tr")
    assert rows.count() == len(ref["end_points"])
    for k, e in enumerate(ref["end_points"]):
        row = rows.nth(k)
        assert row.get_attribute("data-metal") == e["metal"]
        got = row.locator("td[data-key='titrant_mL']").get_attribute("data-value")
        if e["titrant_mL"] is None:
            assert got == ""
        else:
            assert close(got, e["titrant_mL"])
        assert close(row.locator("td[data-key='stoichiometric_mL']").get_attribute("data-value"), e["stoichiometric_mL"])
    plots = page.evaluate(READ_PLOTS)
    t = plots["titration"]
    mL = [p["titrant_mL"] for p in ref["points"]]
    for xs, ys, metal in zip(t["xs"], t["ys"], t["metal"]):
        assert len(xs) == len(mL) and all(close(a, b) for a, b in zip(xs, mL))
        assert all(close(a, p["pM"][metal]) for a, p in zip(ys, ref["points"]))
    sharp = [e for e in ref["end_points"] if e["titrant_mL"] is not None and e["metal"] in ("calcium", "magnesium")]
    assert len(t["ex"]) == len(sharp) and all(close(a, e["titrant_mL"]) for a, e in zip(t["ex"], sharp))


def test_titration_and_conditional_constants_equal_the_core(page: Page, watch):
    open_hardness(page)
    check_titration(page, 50, 0.01, 10)
    scenario = page_water(page)
    ref = core("conditional_constants", {"scenario": scenario, "metals": ["calcium", "magnesium"],
                                         "pH_from": 6, "pH_to": 13, "points": 71})
    c = page.evaluate(READ_PLOTS)["conditional"]
    assert c["metal"] == ["calcium", "magnesium"] and c["marker"] == 10
    for ys, m in zip(c["ys"], ref["metals"]):
        assert all(close(a, b) for a, b in zip(ys, m["log10_K_conditional"]))
    assert all(close(a, b) for a, b in zip(c["xs"][0], ref["pH"]))
    # other inputs: 100 mL of sample, 0.02 mol/L EDTA, pH 9.5
    for field, text in (("#hardness-sample", "100"), ("#hardness-edta", "0.02"), ("#hardness-ph", "9.5")):
        before = count(page, "titration")
        page.fill(field, text)
        wait_drawn(page, "titration", before, settle=True)
    check_titration(page, 100, 0.02, 9.5)
    page.wait_for_function("() => { for (const d of Bokeh.documents) { const m = d.get_model_by_name('edtacond_marker');"
                           " if (m) return m.location === 9.5; } return false; }", timeout=JOB_MS)


@pytest.mark.parametrize("field, text, message", [
    ("#hardness-sample", "0", "more than 0 mL"),
    ("#hardness-ph", "15", "The buffered pH must be from 0 to 14 (you entered 15)."),
    ("#hardness-edta", "x", "is not a number"),
])
def test_bad_input_message_beside_its_field_and_no_stale_result(page: Page, watch, field, text, message):
    open_hardness(page)
    page.fill(field, text)
    expect(page.locator(f"{field}-error")).to_contain_text(message, timeout=15_000)
    expect(page.locator("#hardness-results")).to_have_attribute("data-state", "empty")
    assert value(page, "#hardness-total") == ""
    assert page.locator("#hardness-endpoints tbody tr").count() == 0
    assert page.evaluate(READ_PLOTS)["titration"]["xs"] == []


def test_water_without_calcium_or_magnesium_says_so(page: Page, watch):
    # the page's starting water with its calcium and magnesium taken out, opened from a link
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=JOB_MS)
    state = page.evaluate(STATE)
    ions = state["water"]["scenario"].get("ions", [])
    state["water"]["scenario"]["ions"] = [i for i in ions if i.get("id") not in ("calcium", "magnesium")]
    link = page.evaluate("async (s) => '#' + (await import('./share.js')).encodeState(s)", state)
    page.goto("about:blank")
    open_hardness(page, fragment=link, wait=False)
    scenario = page.evaluate(STATE)["water"]["scenario"]
    assert not any(i.get("id") in ("calcium", "magnesium") for i in scenario.get("ions", []))
    expect(page.locator("#hardness-water-error")).to_contain_text("neither calcium nor magnesium", timeout=JOB_MS)
    assert value(page, "#hardness-total") == ""
    assert page.locator("#hardness-endpoints tbody tr").count() == 0


def test_a_water_that_cannot_be_used_marks_the_figures_and_a_good_one_brings_them_back(page: Page, watch):
    open_hardness(page)
    water_line = page.locator("#hardness-water")
    expect(water_line).to_contain_text("From the water above")
    page.fill("#water-temperature", "warm")
    expect(water_line).to_have_attribute("data-state", "stale", timeout=JOB_MS)
    expect(water_line).to_contain_text("These figures are for the last valid water (pH")
    for results in ("#hardness-results", "#hardness-conditional-results"):
        expect(page.locator(results)).to_have_attribute("data-state", "stale", timeout=JOB_MS)
    assert value(page, "#hardness-total") != ""  # kept, but marked
    before = count(page, "titration")
    page.fill("#water-temperature", "20")
    wait_drawn(page, "titration", before, settle=True)
    expect(water_line).to_have_attribute("data-state", "current")
    for results in ("#hardness-results", "#hardness-conditional-results"):
        expect(page.locator(results)).to_have_attribute("data-state", "current", timeout=JOB_MS)
    assert page_water(page)["temperature_C"] == 20
    check_titration(page, 50, 0.01, 10)
