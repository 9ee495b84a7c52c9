"""End-to-end: the page's lists of units, activity models and flow units are the core's catalogue.

The core owns these lists (acidscape.boundary.catalogues, the page's "catalogues" request): every
select that offers one lists exactly the core's values, in its order, with its words; the default
choices are the core's; and the species table's numbers in each unit agree with
``acidscape.data.units`` applied to the core's own solution (the oracle is the core in this
process, run on the same scenario).
"""

from __future__ import annotations

import json
import math

import pytest
from conftest import core_handle, settled, show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000

SELECTS = {
    "water-activity": "activity_models",
    "batch-activity": "activity_models",
    "water-display-unit": "display_units",
    "water-alk-unit": "alkalinity_units",
    "batch-alk-unit": "alkalinity_units",
    "batch-temp-unit": "temperature_units",
    "dose-flow-unit": "flow_units",
    "soften-flow-unit": "flow_units",
    "scale-dose-flow-unit": "flow_units",
}


def core_catalogues() -> dict:
    reply = json.loads(core_handle("catalogues", "{}"))
    assert reply["ok"], reply
    return reply["result"]


def options(page: Page, select_id: str) -> list[list[str]]:
    return page.evaluate(
        "(id) => Array.from(document.getElementById(id).options, (o) => [o.value, o.textContent.trim()])",
        select_id,
    )


def test_every_catalogue_select_lists_exactly_the_cores_catalogue(page: Page):
    cat = core_catalogues()
    page.goto("/")
    expect(page.locator("#water-section")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)
    for select_id, name in SELECTS.items():
        if select_id in ("soften-flow-unit", "scale-dose-flow-unit"):
            job = "softening" if select_id.startswith("soften") else "scale"
            show_job(page, job)
        expect(page.locator(f"#{select_id} option").first).to_be_attached(timeout=BOOT_MS)
        assert options(page, select_id) == [[u["value"], u["label"]] for u in cat[name]], select_id
    # the default choices are the core's
    assert page.eval_on_selector("#water-activity", "s => s.value") == cat["default_activity"]
    assert page.eval_on_selector("#water-display-unit", "s => s.value") == cat["default_display_unit"]


def test_species_table_in_each_unit_follows_the_cores_factors(page: Page):
    """The shown value of each molar unit is the core's concentration divided by the catalogue's
    mol/L per unit (the factors units.py converts with, checked in tests/test_catalogues.py)."""
    cat = core_catalogues()
    page.goto("/")
    expect(page.locator("#water-section")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)
    for unit in (u for u in cat["display_units"] if u["kind"] == "molar"):
        page.select_option("#water-display-unit", unit["value"])  # a view change: redrawn at once
        rows = page.evaluate(
            """() => Array.from(document.querySelectorAll('#water-species-table tbody tr'), (tr) => ({
                 c: Number(tr.dataset.concentrationM),
                 shown: Number(tr.querySelector('td[data-key="concentration"]')?.dataset.value)}))"""
        )
        checked = [r for r in rows if math.isfinite(r["c"]) and math.isfinite(r["shown"]) and r["c"] > 0]
        assert checked, unit["value"]
        for r in checked:
            assert math.isclose(r["shown"], r["c"] / unit["mol_per_L"], rel_tol=1e-9), (unit["value"], r)
