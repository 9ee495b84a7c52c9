"""End-to-end: the "Softening" job (site/softening.js, softening-view.js) in headless Chromium.

The oracle is the core run in this test process (conftest.core_handle) on the page's own water
(read from the page's input-state registry); the page runs the same package in Pyodide, so the
numbers agree to round-off. The water is the invented example "lime-softening-plant"; no
chemistry is checked against it here (tests/test_treatment_jobs.py checks the softening
chemistry), only that the page shows what the core computes.
"""

from __future__ import annotations

import functools

import pytest
from playwright.sync_api import Page, expect

import conftest
from conftest import JOB_MS, STATE, core, draw_marks, open_job, page_water, plain_link, preset_water, settled, show_job

pytestmark = pytest.mark.e2e

BOOT_MS = JOB_MS
drawn, wait_drawn = draw_marks("softening")
num = conftest.data_number
close = functools.partial(conftest.close, abs_=1e-9)  # this file's tolerance: 1e-9 absolute too


def test_softening_equals_the_core_with_its_comparison_and_cautions(page: Page, watch):
    scenario = open_job(page, "#preset=lime-softening-plant", "softening", ["softening"])
    before = drawn(page, "softening")
    page.select_option("#soften-mode", "magnesium")
    page.fill("#soften-target-hardness", "90")
    page.fill("#soften-flow", "25000")
    wait_drawn(page, "softening", before)
    settled(page, BOOT_MS)
    want = core("soften", {"scenario": scenario, "remove_magnesium": True, "target_hardness_mg_per_L_as_CaCO3": 90,
                           "flow": 25000, "flow_unit": "m3/d", "recarbonation": {"target_LSI": 0}})
    assert close(num(page, "#soften-lime-dose"), want["lime"]["dose_mg_per_L"])
    assert close(num(page, "#soften-lime-kg"), want["lime"]["kg_per_d"])
    assert close(num(page, "#soften-soda-dose"), want["soda_ash"]["dose_mg_per_L"])
    assert close(num(page, "#soften-residual"), want["residual_hardness_mg_per_L_as_CaCO3"]["total"])
    assert close(num(page, "#soften-residual-mg"), want["residual_hardness_mg_per_L_as_CaCO3"]["magnesium"])
    assert close(num(page, "#soften-sludge"), want["sludge"]["dry_solids_mg_per_L"])
    assert close(num(page, "#soften-sludge-kg"), want["sludge"]["dry_solids_kg_per_d"])
    assert close(num(page, "#soften-recarb"), want["recarbonation"]["dose_mg_per_L"])
    first = want["first_stage_recarbonation"]
    assert first is not None and close(num(page, "#soften-first-stage"), first["dose_mg_per_L"])
    rows = page.eval_on_selector_all("#soften-comparison tbody tr", """trs => Object.fromEntries(trs.map((tr) => [tr.dataset.key,
        Object.fromEntries(Array.from(tr.querySelectorAll('td'), (td) => [td.dataset.key, Number(td.dataset.value)]))]))""")
    for key in ("lime_mg_per_L_as_CaO", "soda_ash_mg_per_L", "residual_hardness_mg_per_L_as_CaCO3", "sludge_mg_per_L"):
        for col in ("equilibrium", "stoichiometric", "difference"):
            assert close(rows[key][col], want["comparison"][key][col]), (key, col)
    why = page.eval_on_selector_all("#soften-why li", "lis => lis.map((li) => li.textContent)")
    assert why[: len(want["comparison"]["why"])] == want["comparison"]["why"]
    cautions = page.eval_on_selector_all("#soften-cautions li", "lis => lis.map((li) => li.textContent)")
    assert cautions == want["cautions"]
    for words in ("Lime is caustic", "Soda ash", "Carbon dioxide"):
        assert any(words in c for c in cautions), words
    expect(page.locator("#soften-results")).to_contain_text("mg/L as CaCO₃")


def test_bad_softening_inputs_get_their_message_and_no_figures(page: Page, watch):
    open_job(page, "#preset=lime-softening-plant", "softening", ["softening"])
    page.fill("#soften-ph", "10.5")
    page.fill("#soften-lime", "200")
    expect(page.locator("#soften-lime-error")).to_contain_text("not both")
    expect(page.locator("#soften-lime-dose")).to_have_attribute("data-value", "")
    expect(page.locator("#soften-comparison tbody tr")).to_have_count(0)
    page.fill("#soften-lime", "")
    page.fill("#soften-flow", "-5")
    expect(page.locator("#soften-flow-error")).to_contain_text("above 0")
    expect(page.locator("#soften-lime-error")).to_have_text("")
    page.fill("#soften-flow", "")
    page.fill("#soften-recarb-value", "abc")
    expect(page.locator("#soften-recarb-value-error")).to_contain_text("not a number")
    page.fill("#soften-recarb-value", "0")
    before = drawn(page, "softening")
    wait_drawn(page, "softening", before - 1)
    expect(page.locator("#soften-recarb-value-error")).to_have_text("")
    expect(page.locator("#soften-lime-dose")).not_to_have_attribute("data-value", "", timeout=BOOT_MS)
    settled(page, BOOT_MS)


def test_a_hostile_link_in_the_softening_inputs_keeps_the_valid_ones_names_the_rest_and_computes(page: Page, watch):
    # the job is not the one in view when the link opens: its inputs are still checked and named
    # at once, and computed when the job is shown
    state = {"v": 2, "water": preset_water("lime-softening-plant"), "softening": {
        "remove_magnesium": "yes", "softening_pH": 15, "lime_mg_per_L": 200, "soda_ash_mg_per_L": "lots",
        "target_hardness_mg_per_L_as_CaCO3": None, "excess_lime_meq_per_L": 0.8, "flow": "<b>9</b>",
        "flow_unit": "furlongs", "recarbonation": {"target_pH": "abc"}}}
    page.goto("/" + plain_link(state))
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page, BOOT_MS)
    assert page.get_attribute("body", "data-job") == "water"
    message = page.locator("#share-message")
    expect(message).to_have_attribute("data-kind", "warning")
    for words in ('what to remove ("yes") is not yes or no', 'softening pH "15" could not be used', "it was left empty",
                  'soda ash dose "lots" could not be used', 'plant flow "<b>9</b>" could not be used',
                  'flow unit "furlongs" is not known', 'recarbonation to a pH of "abc" could not be used',
                  "to an LSI of 0 instead"):
        expect(message).to_contain_text(words)
    assert page.locator("main b").count() == 0
    # every valid part is kept (the lime dose, the excess lime), the rest back at its default
    mine = page.evaluate(STATE)["softening"]
    assert mine == {"remove_magnesium": False, "softening_pH": None, "lime_mg_per_L": 200, "soda_ash_mg_per_L": None,
                    "target_hardness_mg_per_L_as_CaCO3": None, "excess_lime_meq_per_L": 0.8, "flow": None,
                    "flow_unit": "m3/d", "recarbonation": {"target_LSI": 0}}
    # ... and computed when the job is shown: the numbers are the core's
    show_job(page, "softening")
    wait_drawn(page, "softening", settle=True)
    scenario = page_water(page)
    want = core("soften", {"scenario": scenario, "remove_magnesium": False, "lime_mg_per_L": 200,
                           "excess_lime_meq_per_L": 0.8, "recarbonation": {"target_LSI": 0}})
    assert close(num(page, "#soften-lime-dose"), want["lime"]["dose_mg_per_L"])
    assert close(num(page, "#soften-residual"), want["residual_hardness_mg_per_L_as_CaCO3"]["total"])
    assert close(num(page, "#soften-recarb"), want["recarbonation"]["dose_mg_per_L"])
    expect(page.locator("#soften-results")).to_have_attribute("data-state", "current")
    for sel in ("#soften-ph-error", "#soften-lime-error", "#soften-recarb-value-error"):
        expect(page.locator(sel)).to_have_text("")
