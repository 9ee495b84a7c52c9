"""End-to-end: the treatment section (titration, buffer intensity, dose) in headless Chromium.

The oracle is ``acidscape.boundary.api`` run in this test process on the page's own water (read from
the page's input-state registry, the same scenario the water section solves): the page runs
the same package in Pyodide, so numbers agree to round-off (1e-9 relative).
"""

from __future__ import annotations

import json
import math

import pytest
from conftest import show_job
from playwright.sync_api import Page, expect

from acidscape.boundary import api

from acidscape.boundary import dispatch
pytestmark = pytest.mark.e2e

BOOT_MS = 60_000

STATE = "async () => (await import('./state.js')).collectState()"

READ_TITRATION = """() => {
  for (const doc of Bokeh.documents) {
    const curve = doc.get_model_by_name('titr_src');
    if (!curve) continue;
    const get = (m) => (m.data instanceof Map ? Object.fromEntries(m.data) : m.data);
    const c = get(curve), e = get(doc.get_model_by_name('titr_eq_src'));
    return {x: Array.from(c.x), pH: Array.from(c.pH), ex: Array.from(e.x), epH: Array.from(e.pH),
            labels: Array.from(e.label), axis: doc.get_model_by_name('titr_xaxis').axis_label};
  }
  return null;
}"""


def core(method: str, params: dict) -> dict:
    reply = json.loads(dispatch.handle(method, json.dumps(params)))
    assert reply["ok"], reply
    return reply["result"]


def core_error(method: str, params: dict) -> dict:
    reply = json.loads(dispatch.handle(method, json.dumps(params)))
    assert not reply["ok"], reply
    return reply["error"]


def count(page: Page, block: str) -> int:
    return int(page.evaluate(f"() => Number(document.querySelector('#treatment-section').dataset.{block}Drawn || 0)"))


#: The workbench's jobs (site/workbench.js) and the blocks of #treatment-section each shows.
JOB_BLOCKS = {"treat": ("dose",), "titrate": ("titration", "buffer")}


def open_page(page: Page, job: str = "titrate") -> None:
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(page, job)
    for block in JOB_BLOCKS[job]:
        page.wait_for_function(
            f"() => Number(document.querySelector('#treatment-section').dataset.{block}Drawn || 0) > 0",
            timeout=BOOT_MS)


def redrawn(page: Page, block: str, before: int) -> None:
    page.wait_for_function(
        f"(n) => Number(document.querySelector('#treatment-section').dataset.{block}Drawn || 0) > n",
        arg=before, timeout=15_000)


def page_state(page: Page) -> dict:
    return page.evaluate(STATE)


def close(a: float, b: float, rel: float = 1e-9) -> bool:
    return math.isclose(a, b, rel_tol=rel, abs_tol=1e-12)


def value(page: Page, selector: str) -> str:
    return page.locator(selector).get_attribute("data-value") or ""


def test_dose_and_feed_equal_the_core_and_cautions_show(page: Page, watch):
    open_page(page, "treat")
    show_job(page, "treat")
    expect(page.locator("#dose-cautions")).to_be_visible()
    for words in ("burn skin and eyes", "acid slowly into water", "jar or bench test", "overfeed",
                  "licensed operators"):
        expect(page.locator("#dose-cautions")).to_contain_text(words)
    before = count(page, "dose")
    page.fill("#dose-strength", "50")
    page.fill("#dose-density", "1.525")
    page.select_option("#dose-flow-unit", "MGD")
    page.fill("#dose-flow", "2.5")
    page.wait_for_function("() => document.querySelector('#dose-feed-kg-per-d').dataset.value !== ''",
                           timeout=15_000)
    assert count(page, "dose") > before
    state = page_state(page)
    d = state["treatment"]["dose"]
    assert d == {"chemical": "NaOH", "product": None, "target_pH": 8, "strength_pct": 50, "density_kg_per_L": 1.525,
                 "flow": 2.5, "flow_unit": "MGD"}
    want = core("dose", {"scenario": state["water"]["scenario"], **{k: v for k, v in d.items() if k != "product"}})
    assert close(float(value(page, "#dose-result-mmol")), want["dose_mmol_per_L"])
    assert close(float(value(page, "#dose-result-mg")), want["dose_mg_per_L"])
    assert close(float(value(page, "#dose-feed-kg-per-d")), want["product"]["feed_kg_per_d"])
    assert close(float(value(page, "#dose-feed-L-per-h")), want["product"]["feed_L_per_h"])
    assert close(float(value(page, "#dose-feed-gal-per-d")), want["product"]["feed_gal_per_d"])
    rows = page.evaluate("""() => Object.fromEntries(Array.from(
        document.querySelectorAll('#dose-before-after tbody tr'), (tr) => [tr.dataset.key,
        Object.fromEntries(Array.from(tr.querySelectorAll('td'), (td) => [td.dataset.key, Number(td.dataset.value)]))]))""")
    # every figure of the core's change table, except the equivalence-point alkalinity the core
    # adds for accounting: the page shows one alkalinity (to pH 4.5), as its summary does
    assert set(rows) == set(want["change"]) - {"equivalence_alkalinity_meq_per_L"}
    # The page has one total alkalinity, to the fixed end point pH 4.5 (Standard Methods 2320 B),
    # the one its summary shows: before/after come from the core's alkalinity reports of the
    # water before and after, not from its equivalence-point figures.
    expected = {k: v for k, v in want["change"].items() if k in rows}
    for key, field in (("total_alkalinity_mg_per_L_as_CaCO3", "total_mg_per_L_as_CaCO3"),
                       ("total_alkalinity_meq_per_L", "total_meq_per_L")):
        b = want["water_before"]["alkalinity"]["fixed_end_point"][field]
        a = want["water_after"]["alkalinity"]["fixed_end_point"][field]
        expected[key] = {"before": b, "after": a, "change": a - b}
    assert close(expected["total_alkalinity_mg_per_L_as_CaCO3"]["before"],
                 float(value(page, "#water-alk-total")))  # the same figure as the summary above
    for key, c in expected.items():
        for part in ("before", "after"):
            assert close(rows[key][part], c[part]), (key, part)
        assert math.isclose(rows[key]["change"], c["change"], rel_tol=1e-9, abs_tol=1e-9 * abs(c["after"]))


def test_bad_dose_inputs_show_messages_beside_their_fields(page: Page, watch):
    open_page(page, "treat")
    show_job(page, "treat")
    scenario = page_state(page)["water"]["scenario"]
    # NaHCO3 cannot raise a water past about pH 8.3 (pKa1 + pKa2)/2 (carbonate chemistry,
    # common practice): the core's own message must appear beside the target, not a number.
    page.select_option("#dose-chemical", "NaHCO3")
    page.fill("#dose-target-ph", "9.5")
    err = core_error("dose", {"scenario": scenario, "chemical": "NaHCO3", "target_pH": 9.5})
    assert err["field"] == "target_pH"
    expect(page.locator("#dose-target-ph-error")).to_have_text(err["message"], timeout=15_000)
    expect(page.locator("#dose-target-ph")).to_have_attribute("aria-invalid", "true")
    assert value(page, "#dose-result-mg") == "" and value(page, "#dose-result-mmol") == ""
    expect(page.locator("#dose-result-mg")).to_have_text("—")
    # strength over 100 % and a negative flow: messages beside those fields
    page.select_option("#dose-chemical", "NaOH")
    page.fill("#dose-target-ph", "8")
    page.fill("#dose-strength", "150")
    expect(page.locator("#dose-strength-error")).to_contain_text("strength of the product must be above 0 and at most 100% (you entered 150%)",
                                                               timeout=15_000)
    page.fill("#dose-strength", "50")
    page.fill("#dose-flow", "-3")
    expect(page.locator("#dose-flow-error")).to_contain_text("must be from 0 to", timeout=15_000)
    assert value(page, "#dose-feed-kg-per-d") == ""
    page.fill("#dose-flow", "abc")
    expect(page.locator("#dose-flow-error")).to_contain_text('"abc" is not a number')
    expect(page.locator("#dose-cautions")).to_be_visible()


def test_titration_curve_equals_the_core_and_unsuited_titrant_is_explained(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    state = page_state(page)
    t = state["treatment"]["titration"]
    assert t["titrant"] == "HCl" and t["axis"] == "volume"
    params = {"scenario": state["water"]["scenario"], "titrant": t["titrant"], "titrant_M": t["titrant_M"],
              "sample_mL": t["sample_mL"]}
    want = core("titrate", params)
    got = page.evaluate(READ_TITRATION)
    assert len(got["x"]) == len(want["points"])
    for x, y, p in zip(got["x"], got["pH"], want["points"]):
        assert close(x, p["titrant_mL"]) and close(y, p["pH"])
    marks = want["equivalence_points"] + want["half_equivalence_points"]
    assert len(got["ex"]) == len(marks) >= 1
    for x, p in zip(got["ex"], marks):
        assert close(x, p["titrant_mL"])
    eq_rows = page.locator("#equivalence-table tbody tr[data-kind='equivalence'] td[data-key='titrant_mL']")
    assert eq_rows.count() == len(want["equivalence_points"])
    for k, p in enumerate(want["equivalence_points"]):
        assert close(float(eq_rows.nth(k).get_attribute("data-value")), p["titrant_mL"])
    # plant axis: same curve in mg/L of pure chemical, without a new core call
    page.select_option("#titration-axis", "dose")
    got = page.evaluate(READ_TITRATION)
    assert "mg/L" in got["axis"]
    for x, p in zip(got["x"], want["points"]):
        assert close(x, p["dose_mg_per_L"])
    # an acid cannot raise the pH: the core's message beside the end pH and on the warning line
    page.fill("#titration-end-ph", "10")
    err = core_error("titrate", {**params, "to_pH": 10})
    assert err["field"] == "to_pH"
    expect(page.locator("#titration-end-ph-error")).to_have_text(err["message"], timeout=15_000)
    expect(page.locator("#titration-warning")).to_contain_text(err["message"])
    assert page.evaluate(READ_TITRATION)["x"] == []
    # a base to pH 10 works again, with its own curve
    before = count(page, "titration")
    page.select_option("#titrant-select", "NaOH")
    redrawn(page, "titration", before)
    want = core("titrate", {**params, "titrant": "NaOH", "to_pH": 10})
    got = page.evaluate(READ_TITRATION)
    for x, p in zip(got["x"], want["points"]):
        assert close(x, p["dose_mg_per_L"])
    expect(page.locator("#titration-warning")).to_be_hidden()


def test_buffer_intensity_equals_the_core(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    scenario = page_state(page)["water"]["scenario"]
    want = core("buffer", {"scenario": scenario, "pH_min": 2, "pH_max": 12, "points": 241})
    assert close(float(value(page, "#buffer-at-ph")), want["beta_at_water_pH_eq_per_L_per_pH"])
    assert close(want["beta_at_water_pH_eq_per_L_per_pH"], core("solve", scenario)["buffer_intensity_eq_per_L_per_pH"])
    before = count(page, "buffer")
    page.fill("#capacity-from-ph", "7")
    page.fill("#capacity-to-ph", "4.5")
    redrawn(page, "buffer", before)
    page.wait_for_function("() => document.querySelector('#buffer-capacity').dataset.value !== ''")
    cap = core("buffer", {"scenario": scenario, "points": 2, "capacity": {"from_pH": 7, "to_pH": 4.5}})["capacity"]
    assert close(float(value(page, "#buffer-capacity")), cap["base_meq_per_L"])
    expect(page.locator("#buffer-capacity")).to_contain_text("strong acid")


# -- what users asked for: normality, end-point alkalinity, units in tooltips, log buffer axis,
#    product presets with their sources ------------------------------------------------------

HOVERS = """() => {
  const out = {};
  for (const doc of Bokeh.documents) {
    for (const m of doc.all_models) {
      if (m.constructor.__name__ !== 'HoverTool') continue;
      const fig = [...doc.roots()].map((r) => r.name).join(',');
      (out[fig] = out[fig] || []).push(...m.tooltips.map(([k, v]) => `${k}: ${v}`));
    }
  }
  return out;
}"""


def test_titrant_strength_as_normality(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    before = count(page, "titration")
    page.select_option("#titrant-select", "H2SO4")
    page.select_option("#titrant-conc-unit", "N")
    page.fill("#titrant-conc", "0.02")
    page.wait_for_function("() => document.querySelector('#equivalence-table caption').textContent.includes('0.01 mol/L')",
                           timeout=20_000)
    assert count(page, "titration") > before
    state = page_state(page)
    t = state["treatment"]["titration"]
    assert t["titrant_N"] == 0.02 and t["titrant_M"] is None
    # H2SO4 brings two equivalents per mole (the core's catalogue): 0.02 N is 0.01 mol/L
    want = core("titrate", {"scenario": state["water"]["scenario"], "titrant": "H2SO4", "titrant_M": 0.01,
                            "sample_mL": t["sample_mL"]})
    assert want["titrant"]["normality_eq_per_L"] == pytest.approx(0.02)
    expect(page.locator("#equivalence-table caption")).to_contain_text("0.01 mol/L (0.02 eq/L)")
    expect(page.locator("#titrant-conc-hint")).to_contain_text("0.01 mol/L")
    got = page.evaluate(READ_TITRATION)
    for x, p in zip(got["x"], want["points"]):
        assert close(x, p["titrant_mL"])
    # back to molarity: the same number now means mol/L
    page.select_option("#titrant-conc-unit", "M")
    expect(page.locator("#equivalence-table caption")).to_contain_text("0.02 mol/L (0.04 eq/L)", timeout=20_000)


def test_end_points_give_alkalinity_in_mg_per_L_as_CaCO3(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    state = page_state(page)
    t = state["treatment"]["titration"]
    want = core("titrate", {"scenario": state["water"]["scenario"], "titrant": t["titrant"],
                            "titrant_M": t["titrant_M"], "sample_mL": t["sample_mL"]})
    total = next(p for p in want["fixed_end_points"] if abs(p["pH"] - 4.5) < 1e-9)
    # Standard Methods 2320 B: mg/L as CaCO3 = mL x N x 50 000 / mL of sample
    assert total["as_CaCO3_mg_per_L"] == pytest.approx(
        total["titrant_mL"] * want["titrant"]["normality_eq_per_L"] * 50044 / t["sample_mL"], rel=1e-3)
    line = page.locator("#titration-endpoints li", has_text="pH 4.5 end point")
    expect(line).to_have_count(1)
    expect(line).to_contain_text(f"mL → total alkalinity {total['as_CaCO3_mg_per_L']:.1f} mg/L as CaCO₃")
    cell = page.locator("#equivalence-table tbody tr[data-kind='fixed'] td[data-key='as_CaCO3_mg_per_L']")
    values = sorted(float(cell.nth(k).get_attribute("data-value")) for k in range(cell.count()))
    assert values == pytest.approx(sorted(p["as_CaCO3_mg_per_L"] for p in want["fixed_end_points"]), rel=1e-9)


def test_plot_tooltips_name_their_units(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    hovers = page.evaluate(HOVERS)
    text = "\n".join(line for lines in hovers.values() for line in lines)
    assert "α = $snap_y{0.000}" in text               # distribution: "pH 7.21, α = 0.500"
    assert "log c = $snap_y{0.00} (mol/L)" in text     # log concentration
    assert "@x{0.00} @unit, pH @pH{0.00}" in text       # titration: "12.30 mL, pH 8.30"
    assert "β = @beta{0.000} mmol/(L·pH)" in text       # buffer
    # the titration's unit column follows the axis: mL for the lab, mg/L of the chemical for the plant
    unit = "() => { for (const d of Bokeh.documents) { const s = d.get_model_by_name('titr_src');" \
           " if (s) { const u = s.data instanceof Map ? s.data.get('unit') : s.data.unit; return u[0]; } } }"
    assert page.evaluate(unit) == "mL"
    page.select_option("#titration-axis", "dose")
    page.wait_for_function(f"() => ({unit})() === 'mg/L of HCl'")


BUFFER_MODELS = """() => { for (const d of Bokeh.documents) { const r = d.get_model_by_name('buffer_log_y');
  if (!r) continue; const v = (n) => d.get_model_by_name(n).visible;
  return {start: r.start, end: r.end, log: v('buffer_log_line') && v('buffer_log_yaxis'),
          linear: v('buffer_line') && v('buffer_yaxis')}; } }"""


def test_buffer_intensity_on_a_log_axis(page: Page, watch):
    open_page(page)
    show_job(page, "titrate")
    assert page.evaluate(BUFFER_MODELS)["linear"] and not page.evaluate(BUFFER_MODELS)["log"]
    page.check("#buffer-log")
    expect(page.locator("#plot-buffer")).to_have_attribute("data-log", "true")
    m = page.evaluate(BUFFER_MODELS)
    assert m["log"] and not m["linear"]
    scenario = page_state(page)["water"]["scenario"]
    beta = core("buffer", {"scenario": scenario, "pH_min": 2, "pH_max": 12, "points": 241})["beta_mmol_per_L_per_pH"]
    assert 0 < m["start"] <= min(beta) and max(beta) <= m["end"]
    assert page_state(page)["treatment"]["buffer"]["log_scale"] is True
    page.uncheck("#buffer-log")
    expect(page.locator("#plot-buffer")).to_have_attribute("data-log", "false")


def test_product_presets_fill_strength_and_density_with_their_sources(page: Page, watch):
    open_page(page, "treat")
    show_job(page, "treat")
    products = {p["id"]: p for p in core("products", {})["products"]}
    page.select_option("#dose-chemical", "NaOH")
    options = page.locator("#dose-product option")
    page.wait_for_function("() => document.querySelectorAll('#dose-product option').length >= 3", timeout=20_000)
    labels = options.all_inner_texts()
    assert any("Caustic soda solution 50 %" in x for x in labels) and any("25 %" in x for x in labels)
    assert not any("source" in x.lower() or "memory" in x.lower() for x in labels)
    before = count(page, "dose")
    page.fill("#dose-flow", "1000")
    page.select_option("#dose-product", "naoh-25")
    assert page.input_value("#dose-strength") == "25" and page.input_value("#dose-density") == str(products["naoh-25"]["density_kg_per_L"])
    details = page.locator("#dose-product-source")
    expect(details).to_be_visible()
    expect(details.locator("summary")).to_have_text("Where these figures come from")
    expect(page.locator("#dose-product-source-text")).to_contain_text("CRC Handbook of Chemistry and Physics")
    expect(page.locator("#dose-product-source-text")).to_contain_text("from memory")
    expect(page.locator("#dose-chemical-hint")).not_to_contain_text("source")
    redrawn(page, "dose", before)
    page.wait_for_function("() => document.body.dataset.pending === '0'", timeout=30_000)
    state = page_state(page)
    d = state["treatment"]["dose"]
    assert d["product"] == "naoh-25" and d["strength_pct"] == 25
    want = core("dose", {"scenario": state["water"]["scenario"], "chemical": "NaOH", "target_pH": d["target_pH"],
                         "strength_pct": 25, "density_kg_per_L": products["naoh-25"]["density_kg_per_L"],
                         "flow": 1000, "flow_unit": d["flow_unit"]})
    assert close(float(value(page, "#dose-feed-L-per-h")), want["product"]["feed_L_per_h"])
    # typing another strength leaves the preset: the source line goes with it
    page.fill("#dose-strength", "30")
    expect(page.locator("#dose-product")).to_have_value("")
    expect(details).to_be_hidden()
    # other chemicals have their own products (hypochlorite, sulfuric acid 93 %)
    page.select_option("#dose-chemical", "NaOCl")
    expect(page.locator("#dose-product option", has_text="Sodium hypochlorite solution 12.5 %")).to_have_count(1)
    page.select_option("#dose-chemical", "H2SO4")
    page.select_option("#dose-product", "h2so4-93")
    assert page.input_value("#dose-strength") == "93"
