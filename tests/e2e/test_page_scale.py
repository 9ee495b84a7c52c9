"""End-to-end: the "Scale and corrosion" job (site/scale.js, scale-view.js) in headless Chromium.

The oracle is the core run in this test process (conftest.core_handle, the entry the page's
worker calls) on the page's own water, read from the page's input-state registry: the page runs
the same package in Pyodide, so the numbers agree to round-off. The waters are the invented
examples of site/presets.json; no chemistry is checked against them here, only that the page
shows what the core computes (the chemistry is checked in tests/test_indices.py and
tests/test_scale_curves.py against an independent implementation).
"""

from __future__ import annotations

import functools
import json
import re

import pytest
from playwright.sync_api import Page, expect

import conftest
from conftest import (JOB_MS, STATE, core, core_handle, core_scenario, draw_marks, open_job, page_water, plain_link,
                      preset_water, settled, show_job)

pytestmark = pytest.mark.e2e

BOOT_MS = JOB_MS
drawn, wait_drawn = draw_marks("scale")
drawn_softening, wait_softening = draw_marks("softening")
num = conftest.data_number
close = functools.partial(conftest.close, abs_=1e-9)  # this file's tolerance: 1e-9 absolute too
READ_SOURCE = """(name) => {
  for (const doc of Bokeh.documents) {
    const m = doc.get_model_by_name(name);
    if (!m) continue;
    const d = m.data instanceof Map ? Object.fromEntries(m.data) : m.data;
    return Object.fromEntries(Object.entries(d).map(([k, v]) => [k, Array.from(v)]));
  }
  return null;
}"""


def open_scale(page: Page, hash_: str) -> dict:
    return open_job(page, hash_, "scale", ("indices", "curves", "dose", "steps"))


def test_indices_temperatures_and_plots_equal_the_core(page: Page, watch):
    scenario = open_scale(page, "#preset=hard-well-scale")
    before = drawn(page, "indices")
    page.fill("#scale-temperatures", "60")
    page.click(".scale-temp-preset[data-temp='100']")
    expect(page.locator("#scale-temperatures")).to_have_value("60, 100")
    page.fill("#scale-pco2", "0.00042")
    wait_drawn(page, "indices", before)
    settled(page, BOOT_MS)
    want = core("solve", {**scenario, "uncertainty": True, "ccpp_temperatures_C": [60, 100],
                          "ccpp_open_CO2_partial_pressure_atm": 0.00042})["calcium_carbonate"]
    u = want["uncertainty"]
    for key, value, rng in (("LSI", want["LSI"], u["LSI_range"]), ("pHs", want["pHs"], u["pHs_range"]),
                            ("RSI", want["RSI"], u["RSI_range"]),
                            ("CCPP", want["CCPP_mg_per_L_as_CaCO3"], u["CCPP_range_mg_per_L_as_CaCO3"]),
                            ("CCPP_open", want["CCPP_open_mg_per_L_as_CaCO3"], u["CCPP_open_range_mg_per_L_as_CaCO3"])):
        row = f"#scale-indices tr[data-key='{key}']"
        assert close(num(page, f"{row} td[data-key='value']"), value), key
        assert close(num(page, f"{row} td[data-key='range']", "data-low"), rng[0]), key
        assert close(num(page, f"{row} td[data-key='range']", "data-high"), rng[1]), key
    assert close(num(page, "#scale-indices tr[data-key='pH_after_CCPP'] td[data-key='value']"), want["pH_after_CCPP"])
    # the method beside the numbers, units visible, the verdict in words
    expect(page.locator("#scale-method")).to_contain_text(want["method_id"])
    expect(page.locator("#scale-indices")).to_contain_text("mg/L as CaCO₃")
    tendency = {"deposit": "will deposit", "dissolve": "will dissolve", "balanced": "at saturation"}[want["tendency"]]
    expect(page.locator("#scale-verdict")).to_contain_text(tendency)
    # the temperatures side by side, the water's own first
    rows = page.eval_on_selector_all("#scale-temperature-table tbody tr", """trs => trs.map((tr) => [
        Number(tr.dataset.temperature),
        Object.fromEntries(Array.from(tr.querySelectorAll('td[data-value]'), (td) => [td.dataset.key, Number(td.dataset.value)]))])""")
    assert [r[0] for r in rows] == pytest.approx([r["temperature_C"] for r in want["at_temperatures"]])
    for (_, cells), ref in zip(rows, want["at_temperatures"]):
        assert close(cells["CCPP"], ref["CCPP_mg_per_L_as_CaCO3"]) and close(cells["LSI"], ref["LSI"])
    # both plots carry the core's curves and bands
    curves = core("scale_curves", {"scenario": scenario, "temperature": {"from_C": 5, "to_C": 100, "points": 20}})
    si = page.evaluate(READ_SOURCE, "scale_si_src")
    ref = curves["saturation_against_pH"]
    assert si["pH"] == pytest.approx(ref["pH"], rel=1e-12)
    assert si["LSI"] == pytest.approx(ref["LSI"], rel=1e-9, abs=1e-9)
    assert si["low"] == pytest.approx(ref["LSI_low"], rel=1e-9, abs=1e-9)
    assert si["high"] == pytest.approx(ref["LSI_high"], rel=1e-9, abs=1e-9)
    cc = page.evaluate(READ_SOURCE, "scale_ccpp_src")
    ref = curves["ccpp_against_temperature"]
    assert cc["ccpp"] == pytest.approx(ref["CCPP_mg_per_L_as_CaCO3"], rel=1e-9, abs=1e-9)
    assert cc["high"] == pytest.approx(ref["CCPP_high"], rel=1e-9, abs=1e-9)
    marks = page.evaluate(READ_SOURCE, "scale_ccpp_pts_src")
    assert marks["t"] == pytest.approx([r["temperature_C"] for r in want["at_temperatures"]])
    water = page.evaluate(READ_SOURCE, "scale_si_water_src")
    assert water["LSI"] == pytest.approx([want["LSI"]], abs=1e-9)


def test_bad_inputs_get_their_message_and_no_stale_figures(page: Page, watch):
    open_scale(page, "#preset=hard-well-scale")
    page.fill("#scale-temperatures", "60, 150")
    expect(page.locator("#scale-temperatures-error")).to_contain_text("must be from 0 to 100 °C (you entered 150)")
    expect(page.locator("#scale-indices tbody tr")).to_have_count(0)
    expect(page.locator("#scale-results")).to_have_attribute("data-state", "empty")
    page.fill("#scale-temperatures", "")
    page.fill("#scale-pco2", "-1")
    expect(page.locator("#scale-pco2-error")).to_contain_text("above 0")
    expect(page.locator("#scale-temperatures-error")).to_have_text("")
    page.fill("#scale-pco2", "")
    page.fill("#scale-dose-target", "x")
    expect(page.locator("#scale-dose-target-error")).to_contain_text("not a number")
    expect(page.locator("#scale-dose-mg")).to_have_attribute("data-value", "")
    page.fill("#scale-step-0-value", "")
    expect(page.locator("#scale-step-0-value-error")).to_contain_text("Enter a target pH")
    expect(page.locator("#scale-steps-table tbody tr")).to_have_count(0)
    settled(page, BOOT_MS)


def test_dose_to_a_target_index_unreachable_and_no_dose_needed(page: Page, watch):
    scenario = open_scale(page, "#preset=upland-conditioning")
    before = drawn(page, "dose")
    page.select_option("#scale-dose-chemical", "Ca(OH)2")
    page.select_option("#scale-dose-target-kind", "CCPP")
    page.fill("#scale-dose-target", "4")
    page.fill("#scale-dose-flow", "9500")
    wait_drawn(page, "dose", before)
    settled(page, BOOT_MS)
    want = core("dose", {"scenario": scenario, "chemical": "Ca(OH)2", "target_CCPP": 4, "flow": 9500, "flow_unit": "m3/d"})
    assert close(num(page, "#scale-dose-mg"), want["dose_mg_per_L"])
    assert close(num(page, "#scale-dose-mmol"), want["dose_mmol_per_L"])
    assert close(num(page, "#scale-dose-kg-per-d"), want["pure_chemical_kg_per_d"])
    assert close(num(page, "#scale-dose-reached", "data-ccpp"), want["reached"]["CCPP_mg_per_L_as_CaCO3"])
    cautions = page.eval_on_selector_all("#scale-dose-cautions li", "lis => lis.map((li) => li.textContent)")
    assert cautions == want["cautions"]
    expect(page.locator("#scale-dose-precipitated")).not_to_have_text("—")
    # a CCPP no amount of caustic reaches: which way and the best value, beside the field
    page.select_option("#scale-dose-chemical", "NaOH")
    page.fill("#scale-dose-target", "500")
    err = json.loads(core_handle("dose", json.dumps({"scenario": scenario, "chemical": "NaOH", "target_CCPP": 500})))
    assert not err["ok"] and err["error"]["type"] == "UnreachableError" and err["error"]["detail"]["direction"] == "above"
    expect(page.locator("#scale-dose-target-error")).to_contain_text("above the highest CCPP")
    tail = err["error"]["message"][len("target_CCPP"):]  # the best value and dose are in the core's words
    expect(page.locator("#scale-dose-target-error")).to_contain_text(tail, timeout=BOOT_MS)
    expect(page.locator("#scale-dose-mg")).to_have_attribute("data-value", "")
    # CO2 cannot raise the LSI: already below the target is "no dose needed", not an error
    before = drawn(page, "dose")
    page.select_option("#scale-dose-chemical", "CO2")
    page.select_option("#scale-dose-target-kind", "LSI")
    page.fill("#scale-dose-target", "0")
    wait_drawn(page, "dose", before)
    expect(page.locator("#scale-dose-status")).to_have_attribute("data-status", "no dose needed")
    expect(page.locator("#scale-dose-status")).to_contain_text("No dose needed")
    assert num(page, "#scale-dose-mg") == 0
    expect(page.locator("#scale-dose-target-error")).to_have_text("")
    settled(page, BOOT_MS)


def test_sequence_shows_the_water_after_each_step(page: Page, watch):
    scenario = open_scale(page, "#preset=upland-conditioning")
    before = drawn(page, "steps")
    page.select_option("#scale-step-0-chemical", "Ca(OH)2")
    page.select_option("#scale-step-0-kind", "target_CCPP")
    page.fill("#scale-step-0-value", "6")
    page.select_option("#scale-step-1-chemical", "CO2")
    page.select_option("#scale-step-1-kind", "target_pH")
    page.fill("#scale-step-1-value", "8.2")
    wait_drawn(page, "steps", before)
    settled(page, BOOT_MS)
    want = core("treat", {"scenario": scenario, "steps": [{"chemical": "Ca(OH)2", "target_CCPP": 6},
                                                          {"chemical": "CO2", "target_pH": 8.2}]})
    rows = page.eval_on_selector_all("#scale-steps-table tbody tr", """trs => trs.map((tr) =>
        Object.fromEntries(Array.from(tr.querySelectorAll('td[data-value]'), (td) => [td.dataset.key, td.dataset.value])))""")
    assert len(rows) == 1 + len(want["steps"])
    assert close(float(rows[0]["pH"]), want["water_before"]["pH"])
    for row, step in zip(rows[1:], want["steps"]):
        assert close(float(row["dose"]), step["dose_mg_per_L"])
        assert close(float(row["pH"]), step["water_after"]["pH"])
        assert close(float(row["CCPP"]), step["water_after"]["CCPP_mg_per_L_as_CaCO3"])
        assert close(float(row["hardness"]), step["water_after"]["total_hardness_mg_per_L_as_CaCO3"])
    cautions = page.eval_on_selector_all("#scale-steps-cautions li", "lis => lis.map((li) => li.textContent)")
    assert cautions == want["cautions"] and any("Lime is caustic" in c for c in cautions)
    # blending with another water: fractions that do not add up to 1 are refused beside the field
    page.fill("#scale-blend-f2", "0.5")
    expect(page.locator("#scale-blend-f2-error")).to_contain_text("must add up to 1")
    expect(page.locator("#scale-blend-table tbody tr")).to_have_count(0)
    before = drawn(page, "blend")
    page.select_option("#scale-blend-with", "hard-well-scale")
    page.fill("#scale-blend-f1", "0.6")
    page.fill("#scale-blend-f2", "0.4")
    wait_drawn(page, "blend", before)
    settled(page, BOOT_MS)
    other = preset_water("hard-well-scale")["scenario"]
    want = core("blend", {"waters": [scenario, core_scenario(other)], "fractions": [0.6, 0.4]})
    cells = page.eval_on_selector_all("#scale-blend-table tbody tr", """trs => Object.fromEntries(trs.map((tr) => [tr.dataset.key,
        Object.fromEntries(Array.from(tr.querySelectorAll('td'), (td) => [td.dataset.key, Number(td.dataset.value)]))]))""")
    for key in ("pH", "LSI", "CCPP_mg_per_L_as_CaCO3", "total_hardness_mg_per_L_as_CaCO3"):
        assert close(cells[key]["blend"], want["blend"][key]), key
    expect(page.locator("#scale-blend-f2-error")).to_have_text("")


def test_a_water_without_calcium_says_what_is_missing(page: Page, watch):
    # the page's starting water with its calcium taken out, opened from a link (the starting
    # water itself holds calcium and magnesium)
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    state = page.evaluate(STATE)
    ions = state["water"]["scenario"].get("ions", [])
    state["water"]["scenario"]["ions"] = [i for i in ions if i.get("id") not in ("calcium", "Ca+2")]
    link = page.evaluate("async (s) => '#' + (await import('./share.js')).encodeState(s)", state)
    page.goto("about:blank")
    page.goto("/" + link)
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    scenario = page_water(page)
    assert not any(i.get("id") in ("calcium", "Ca+2") for i in scenario.get("ions", []))
    assert core("solve", scenario)["calcium_carbonate"] is None  # the core finds no calcium to work with
    show_job(page, "scale")
    expect(page.locator("#scale-error")).to_contain_text("need calcium and alkalinity", timeout=BOOT_MS)
    expect(page.locator("#scale-indices tbody tr")).to_have_count(0)
    settled(page, BOOT_MS)


def test_a_shared_link_reproduces_the_indices(page: Page, context, watch):
    open_scale(page, "#preset=hard-well-scale")
    lsi = page.get_attribute("#scale-indices tr[data-key='LSI'] td[data-key='value']", "data-value")
    ccpp = page.get_attribute("#scale-indices tr[data-key='CCPP'] td[data-key='value']", "data-value")
    link = page.evaluate("""async () => (await import('./share.js')).encodeState(
        (await import('./state.js')).collectState())""")
    assert link.startswith("s=")
    other = context.new_page()
    other.goto("/#" + link)
    expect(other.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(other, "scale")
    wait_drawn(other, "indices")
    assert other.get_attribute("#scale-indices tr[data-key='LSI'] td[data-key='value']", "data-value") == lsi
    assert other.get_attribute("#scale-indices tr[data-key='CCPP'] td[data-key='value']", "data-value") == ccpp
    settled(other, BOOT_MS)
    other.close()


# -- the job's inputs travel in links, files and the report (state keys "scale", "softening",
#    "workbench") --------------------------------------------------------------------------------

# The page's own reader of the link in the address bar (site/share.js readFragmentAsync).
HASH_STATE = """() => { import('./share.js')
  .then((m) => m.readFragmentAsync(location.hash, ['water', 'scale', 'softening', 'workbench']))
  .then((r) => { window.__linked = r.kind === 'state' ? r.state : null; });
  return window.__linked || null; }"""


SCALE_INPUTS = {
    "ccpp_temperatures_C": [5, 60], "CO2_partial_pressure_atm": 0.00042,
    "dose": {"chemical": "Ca(OH)2", "target_CCPP": 4, "flow": 9500, "flow_unit": "m3/d"},
    "steps": [{"chemical": "Ca(OH)2", "target_pH": 9.8}, {"chemical": "CO2", "target_LSI": 0.2}],
    "blend": {"other": "upland-conditioning", "fractions": [0.6, 0.4]},
}
SOFTENING_INPUTS = {
    "remove_magnesium": True, "softening_pH": None, "lime_mg_per_L": None, "soda_ash_mg_per_L": None,
    "target_hardness_mg_per_L_as_CaCO3": 90, "excess_lime_meq_per_L": None, "flow": 25000, "flow_unit": "m3/d",
    "recarbonation": {"target_pH": 8.6},
}


def open_linked(page: Page, state: dict) -> None:
    """Open a plain link to ``state``, made with the scale job in view: that job is shown, and
    each of its blocks that the link's inputs fill is drawn before the page settles."""
    page.goto("/" + plain_link(state))
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    expect(page.locator("body")).to_have_attribute("data-job", "scale", timeout=BOOT_MS)
    for block in ("indices", "dose", "steps", "blend"):
        wait_drawn(page, block)
    settled(page, BOOT_MS)


def read_linked(page: Page) -> dict:
    """The state in the address bar's link, once the page has written one (a y= link)."""
    page.wait_for_function(HASH_STATE, timeout=BOOT_MS)
    assert page.evaluate("location.hash").startswith("#y=2.")
    return page.evaluate("() => window.__linked")


def test_a_link_reopens_the_scale_and_softening_inputs_and_the_job_and_the_numbers_are_the_cores(page: Page, watch, tmp_path):
    state = {"v": 2, "water": preset_water("hard-well-scale"), "scale": SCALE_INPUTS, "softening": SOFTENING_INPUTS,
             "workbench": {"job": "scale"}}
    open_linked(page, state)  # the job the link was made on is in view, computed on the link's inputs
    expect(page.locator("#share-message")).to_have_text("Opened the scenario from the link.")
    # the fields hold the link's inputs, and the page's state is exactly the link's
    for sel, value in (("#scale-temperatures", "5, 60"), ("#scale-pco2", "0.00042"), ("#scale-dose-chemical", "Ca(OH)2"),
                       ("#scale-dose-target-kind", "CCPP"), ("#scale-dose-target", "4"), ("#scale-dose-flow", "9500"),
                       ("#scale-step-0-chemical", "Ca(OH)2"), ("#scale-step-0-kind", "target_pH"), ("#scale-step-0-value", "9.8"),
                       ("#scale-step-1-chemical", "CO2"), ("#scale-step-1-kind", "target_LSI"), ("#scale-step-1-value", "0.2"),
                       ("#scale-blend-with", "upland-conditioning"), ("#scale-blend-f1", "0.6"), ("#scale-blend-f2", "0.4")):
        expect(page.locator(sel)).to_have_value(value)
    expect(page.locator("#scale-steps .scale-step")).to_have_count(2)
    mine = page.evaluate(STATE)
    assert mine["scale"] == SCALE_INPUTS and mine["softening"] == SOFTENING_INPUTS and mine["workbench"] == {"job": "scale"}
    # ... and the numbers are the core's for those inputs (the core run in this process)
    scenario = core_scenario(mine["water"]["scenario"])
    want = core("solve", {**scenario, "uncertainty": True, "ccpp_temperatures_C": [5, 60],
                          "ccpp_open_CO2_partial_pressure_atm": 0.00042})["calcium_carbonate"]
    assert close(num(page, "#scale-indices tr[data-key='CCPP_open'] td[data-key='value']"), want["CCPP_open_mg_per_L_as_CaCO3"])
    temps = page.eval_on_selector_all("#scale-temperature-table tbody tr", """trs => trs.map((tr) => [
        Number(tr.dataset.temperature), Number(tr.querySelector('td[data-key=CCPP]').dataset.value)])""")
    assert [t for t, _ in temps] == pytest.approx([r["temperature_C"] for r in want["at_temperatures"]])
    assert [5, 60] == pytest.approx([t for t, _ in temps][1:])
    for (_, ccpp), ref in zip(temps, want["at_temperatures"]):
        assert close(ccpp, ref["CCPP_mg_per_L_as_CaCO3"])
    dose = core("dose", {"scenario": scenario, "chemical": "Ca(OH)2", "target_CCPP": 4, "flow": 9500, "flow_unit": "m3/d"})
    assert close(num(page, "#scale-dose-mg"), dose["dose_mg_per_L"])
    assert close(num(page, "#scale-dose-kg-per-d"), dose["pure_chemical_kg_per_d"])
    steps = core("treat", {"scenario": scenario, "steps": [{"chemical": "Ca(OH)2", "target_pH": 9.8},
                                                           {"chemical": "CO2", "target_LSI": 0.2}]})
    rows = page.eval_on_selector_all("#scale-steps-table tbody tr[data-step]:not([data-step='0'])",
                                     "trs => trs.map((tr) => Number(tr.querySelector('td[data-key=dose]').dataset.value))")
    assert len(rows) == 2 and all(close(a, s["dose_mg_per_L"]) for a, s in zip(rows, steps["steps"]))
    other = core_scenario(preset_water("upland-conditioning")["scenario"])
    blend = core("blend", {"waters": [scenario, other], "fractions": [0.6, 0.4]})
    assert close(num(page, "#scale-blend-table tr[data-key='LSI'] td[data-key='blend']"), blend["blend"]["LSI"])

    # the softening job, put away meanwhile, holds its inputs and computes them when shown
    before = drawn_softening(page, "softening")
    show_job(page, "softening")
    wait_softening(page, "softening", before)
    settled(page, BOOT_MS)
    for sel, value in (("#soften-mode", "magnesium"), ("#soften-ph", ""), ("#soften-target-hardness", "90"),
                       ("#soften-flow", "25000"), ("#soften-recarb-kind", "pH"), ("#soften-recarb-value", "8.6")):
        expect(page.locator(sel)).to_have_value(value)
    soft = core("soften", {"scenario": scenario, "remove_magnesium": True, "target_hardness_mg_per_L_as_CaCO3": 90,
                           "flow": 25000, "flow_unit": "m3/d", "recarbonation": {"target_pH": 8.6}})
    assert close(num(page, "#soften-lime-dose"), soft["lime"]["dose_mg_per_L"])
    assert close(num(page, "#soften-soda-dose"), soft["soda_ash"]["dose_mg_per_L"])
    assert close(num(page, "#soften-residual"), soft["residual_hardness_mg_per_L_as_CaCO3"]["total"])
    assert close(num(page, "#soften-recarb"), soft["recarbonation"]["dose_mg_per_L"])

    # the link the page writes (y=, short keys) carries them, and the job in view when it is made
    linked = read_linked(page)
    assert linked["scale"] == SCALE_INPUTS and linked["softening"] == SOFTENING_INPUTS
    page.click("#share-copy")
    expect(page.locator("#share-message")).to_contain_text(re.compile("Link copied|copy it"))  # clipboard or not
    page.evaluate("() => { window.__linked = null; }")
    assert read_linked(page)["workbench"] == {"job": "softening"}
    assert page.input_value("#share-url") == page.evaluate("location.href")

    # the printed report lists them in words with their units
    page.evaluate("() => { window.__printed = 0; window.print = () => { window.__printed += 1; }; }")
    page.click("#print-report")
    page.wait_for_function("() => window.__printed === 1")
    inputs = page.eval_on_selector_all("#report table.report-inputs", """ts => Object.fromEntries(ts.flatMap((t) =>
        Array.from(t.tBodies[0].rows, (tr) => [`${t.caption.textContent}/${tr.cells[0].textContent}`, tr.cells[1].textContent])))""")
    scale = "Scale and corrosion: "
    assert inputs[f"{scale}calcium carbonate indices/CCPP also at"] == "5, 60 °C"
    assert inputs[f"{scale}calcium carbonate indices/CCPP also open to CO₂ at a partial pressure of"] == "0.00042 atm"
    assert inputs[f"{scale}condition to a target LSI or CCPP/Target"] == "a CCPP of 4 mg/L as CaCO₃"
    assert inputs[f"{scale}condition to a target LSI or CCPP/Plant flow"] == "9500 m³/d"
    assert inputs[f"{scale}chemicals in sequence/Step 1"].endswith("to pH 9.8")
    assert inputs[f"{scale}chemicals in sequence/Step 2"].endswith("to an LSI of 0.2")
    assert inputs[f"{scale}blend with another water/Flow fractions"] == "0.6 of the water above, 0.4 of the other water"
    assert "invented" in inputs[f"{scale}blend with another water/The other water"]  # the example's title
    assert inputs["Softening/Remove"] == "calcium and magnesium"
    assert inputs["Softening/Soda ash to a total hardness of"] == "90 mg/L as CaCO₃"
    assert inputs["Softening/Plant flow"] == "25000 m³/d"
    assert inputs["Softening/Recarbonation"] == "with CO₂ to pH 8.6"
    assert inputs["Job in view/Job"].startswith("Softening")

    # a saved file holds them too (with the job in view), and opening it puts them back
    with page.expect_download() as info:
        page.click("#save-json")
    saved = tmp_path / "scale.json"
    info.value.save_as(saved)
    filed = json.loads(saved.read_text(encoding="utf-8"))
    assert filed["scale"] == SCALE_INPUTS and filed["softening"] == SOFTENING_INPUTS
    assert filed["workbench"] == {"job": "softening"}
    page.fill("#soften-target-hardness", "120")
    show_job(page, "scale")
    page.fill("#scale-pco2", "0.001")
    settled(page, BOOT_MS)
    before = int(page.get_attribute("body", "data-opened") or 0)
    page.set_input_files("#load-json", str(saved))
    page.wait_for_function("(n) => Number(document.body.dataset.opened) > n", arg=before, timeout=BOOT_MS)
    expect(page.locator("#share-message")).to_have_text('Opened the scenario from the file "scale.json".')
    expect(page.locator("body")).to_have_attribute("data-job", "softening")
    expect(page.locator("#soften-target-hardness")).to_have_value("90")
    settled(page, BOOT_MS)
    mine = page.evaluate(STATE)
    assert mine["scale"] == SCALE_INPUTS and mine["softening"] == SOFTENING_INPUTS
    assert close(num(page, "#soften-soda-dose"), soft["soda_ash"]["dose_mg_per_L"])  # soda ash to 90, not 120


def test_a_hostile_link_in_the_scale_inputs_keeps_the_valid_ones_names_the_rest_and_computes(page: Page, watch):
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    state = {"v": 2, "water": preset_water("hard-well-scale"), "workbench": {"job": "scale"}, "scale": {
        "ccpp_temperatures_C": [60, 250], "CO2_partial_pressure_atm": "lots",
        "dose": {"chemical": "<img src=x onerror=\"window.__pwned=1\">", "target_LSI": "abc", "flow": -5,
                 "flow_unit": "furlongs"},
        "steps": [{"chemical": "Ca(OH)2", "target_pH": 9.5}, {"chemical": "CO2", "target_LSI": "zero"},
                  {"chemical": "XYZ", "target_pH": 8}, "junk"],
        "blend": {"other": "nowhere", "fractions": [2, -1]},
    }}
    open_linked(page, state)
    message = page.locator("#share-message")
    expect(message).to_have_attribute("data-kind", "warning")
    for words in ('CCPP temperatures "60, 250" could not be used', "no further temperatures are used",
                  'CO₂ partial pressure of the open CCPP "lots" could not be used', "the CCPP open to CO₂ is left out",
                  "the dose's chemical \"<img", 'dose target "abc" could not be used', "0 is used instead",
                  'plant flow of the dose "-5" could not be used', 'flow unit "furlongs" is not known',
                  "step 2 (", "could not be used", "step 3's chemical \"XYZ\" is not offered here",
                  "step 4 names no target or dose", 'the water to blend with "nowhere" is not an example',
                  'blend flow fractions "2" and "-1" could not be used', "0.7 and 0.3 are used instead"):
        expect(message).to_contain_text(words)
    # nothing of it ran or was put in the page as markup
    assert page.evaluate("() => window.__pwned") is None and dialogs == []
    assert page.locator("main img[src='x']").count() == 0
    # every valid part is kept; what was dropped is back at its default
    mine = page.evaluate(STATE)["scale"]
    assert mine["ccpp_temperatures_C"] == [] and mine["CO2_partial_pressure_atm"] is None
    assert mine["dose"] == {"chemical": "NaOH", "target_LSI": 0, "flow": None, "flow_unit": "m3/d"}
    assert mine["steps"] == [{"chemical": "Ca(OH)2", "target_pH": 9.5}]
    assert mine["blend"]["fractions"] == [0.7, 0.3]
    # ... and the page computes them: the numbers are the core's
    scenario = page_water(page)
    want = core("solve", {**scenario, "uncertainty": True, "ccpp_temperatures_C": []})["calcium_carbonate"]
    assert close(num(page, "#scale-indices tr[data-key='LSI'] td[data-key='value']"), want["LSI"])
    dose = core("dose", {"scenario": scenario, "chemical": "NaOH", "target_LSI": 0})
    assert close(num(page, "#scale-dose-mg"), dose["dose_mg_per_L"])
    steps = core("treat", {"scenario": scenario, "steps": [{"chemical": "Ca(OH)2", "target_pH": 9.5}]})
    got = page.get_attribute("#scale-steps-table tbody tr[data-step='1'] td[data-key='dose']", "data-value")
    assert close(float(got), steps["steps"][0]["dose_mg_per_L"])
    for sel in ("#scale-results", "#scale-dose-results", "#scale-steps-results", "#scale-blend-results"):
        expect(page.locator(sel)).to_have_attribute("data-state", "current")
