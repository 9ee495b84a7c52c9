"""End-to-end: the "Softening" job (site/softening.js, softening-view.js) in headless Chromium.

The oracle is the core run in this test process (conftest.core_handle) on the page's own water
(read from the page's input-state registry); the page runs the same package in Pyodide, so the
numbers agree to round-off. The water is the invented example "lime-softening-plant"; no
chemistry is checked against it here (tests/test_treatment_jobs.py checks the softening
chemistry), only that the page shows what the core computes.
"""

from __future__ import annotations

import base64
import json
import math
from pathlib import Path

import pytest
from playwright.sync_api import Page, expect

from conftest import core_handle, core_scenario, settled, show_job

pytestmark = pytest.mark.e2e

BOOT_MS = 120_000
STATE = "async () => (await import('./state.js')).collectState()"


def core(method: str, params: dict) -> dict:
    reply = json.loads(core_handle(method, json.dumps(params)))
    assert reply["ok"], reply
    return reply["result"]


def drawn(page: Page) -> int:
    return int(page.evaluate("() => Number(document.getElementById('job-softening').dataset.softeningDrawn || 0)"))


def wait_drawn(page: Page, before: int = 0) -> None:
    page.wait_for_function(
        "(n) => Number(document.getElementById('job-softening').dataset.softeningDrawn || 0) > n", arg=before,
        timeout=BOOT_MS)


def num(page: Page, selector: str) -> float:
    text = page.get_attribute(selector, "data-value")
    assert text not in (None, ""), selector
    return float(text)


def close(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-9)


def test_softening_equals_the_core_with_its_comparison_and_cautions(page: Page, watch):
    page.goto("/#preset=lime-softening-plant")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(page, "softening")
    wait_drawn(page)
    settled(page, BOOT_MS)
    scenario = core_scenario(page.evaluate(STATE)["water"]["scenario"])
    before = drawn(page)
    page.select_option("#soften-mode", "magnesium")
    page.fill("#soften-target-hardness", "90")
    page.fill("#soften-flow", "25000")
    wait_drawn(page, before)
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
    page.goto("/#preset=lime-softening-plant")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(page, "softening")
    wait_drawn(page)
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
    before = drawn(page)
    wait_drawn(page, before - 1)
    expect(page.locator("#soften-recarb-value-error")).to_have_text("")
    expect(page.locator("#soften-lime-dose")).not_to_have_attribute("data-value", "", timeout=BOOT_MS)
    settled(page, BOOT_MS)


def plain_link(state: dict) -> str:
    """A plain s= link (site/share.js: base64url of the state's UTF-8 JSON, no padding)."""
    raw = json.dumps(state).encode()
    return f"#s={state['v']}." + base64.urlsafe_b64encode(raw).decode().rstrip("=")


def test_a_hostile_link_in_the_softening_inputs_keeps_the_valid_ones_names_the_rest_and_computes(page: Page, watch):
    # the job is not the one in view when the link opens: its inputs are still checked and named
    # at once, and computed when the job is shown
    presets = json.loads((Path(__file__).resolve().parents[2] / "site" / "presets.json").read_text(encoding="utf-8"))
    water = next(p for p in presets["presets"] if p["id"] == "lime-softening-plant")["state"]["water"]
    state = {"v": 2, "water": water, "softening": {
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
    wait_drawn(page)
    settled(page, BOOT_MS)
    scenario = core_scenario(page.evaluate(STATE)["water"]["scenario"])
    want = core("soften", {"scenario": scenario, "remove_magnesium": False, "lime_mg_per_L": 200,
                           "excess_lime_meq_per_L": 0.8, "recarbonation": {"target_LSI": 0}})
    assert close(num(page, "#soften-lime-dose"), want["lime"]["dose_mg_per_L"])
    assert close(num(page, "#soften-residual"), want["residual_hardness_mg_per_L_as_CaCO3"]["total"])
    assert close(num(page, "#soften-recarb"), want["recarbonation"]["dose_mg_per_L"])
    expect(page.locator("#soften-results")).to_have_attribute("data-state", "current")
    for sel in ("#soften-ph-error", "#soften-lime-error", "#soften-recarb-value-error"):
        expect(page.locator(sel)).to_have_text("")
