"""End-to-end: free and bound metals, the saturation table and 'let it form' on the page.

The page runs the same wheel in Pyodide, so the two new tables must agree with the core run in
this process (the oracle) for the scenario the page holds; the water is an invented example
(`#preset=co2-well`), and nothing here checks its chemistry against published numbers.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from conftest import core_handle, core_scenario, settled
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 120_000
PRESETS = Path(__file__).resolve().parents[2] / "site" / "presets.json"


def _preset_scenario(pid: str) -> dict:
    data = json.loads(PRESETS.read_text(encoding="utf-8"))
    items = data if isinstance(data, list) else data["presets"]
    return next(p for p in items if p["id"] == pid)["state"]["water"]["scenario"]


def _solve(scenario: dict) -> dict:
    reply = json.loads(core_handle("solve", json.dumps(core_scenario(scenario))))
    assert reply["ok"], reply
    return reply["result"]


def _drawn(page: Page) -> int:
    return int(page.locator("#water-section").get_attribute("data-drawn") or 0)


def _table(page: Page, table: str, key: str, attr: str) -> dict:
    return page.eval_on_selector_all(
        f"#{table} tbody tr",
        f"(rows) => Object.fromEntries(rows.map((r) => [r.dataset.{key}, r.dataset.{attr}]))",
    )


def test_free_bound_and_saturation_tables_follow_the_core(page: Page):
    page.goto("/#preset=co2-well")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)
    scenario = _preset_scenario("co2-well")
    core = _solve(scenario)

    free = _table(page, "water-components-table", "component", "freeFraction")
    expected = {c["id"]: c["free_fraction"] for c in core["components"] if c["total_M"] > 0}
    assert set(free) == set(expected)
    for cid, value in expected.items():
        assert float(free[cid]) == pytest.approx(value, rel=1e-9), cid
    assert float(free["calcium"]) < 0.999  # some calcium is paired: the table shows it

    si = _table(page, "water-saturation-table", "solid", "si")
    assert list(si) == [r["id"] for r in core["saturation"]]  # highest SI first, as the core orders it
    for row in core["saturation"]:
        assert float(si[row["id"]]) == pytest.approx(row["SI"], abs=1e-9), row["id"]

    # Complexes off: every component is free, as the core says for the same scenario.
    before = _drawn(page)
    page.locator("#water-complexes").uncheck()
    page.wait_for_function("(n) => Number(document.querySelector('#water-section').dataset.drawn) > n",
                           arg=before, timeout=60_000)
    settled(page, timeout=60_000)
    off = _solve({**scenario, "complexes": False})
    free_off = _table(page, "water-components-table", "component", "freeFraction")
    for c in off["components"]:
        if c["total_M"] > 0:
            assert float(free_off[c["id"]]) == pytest.approx(c["free_fraction"], rel=1e-9)
            assert float(free_off[c["id"]]) == pytest.approx(1.0, rel=1e-12)


def test_let_a_solid_form_from_the_saturation_table(page: Page):
    page.goto("/#preset=co2-well")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)
    # Raise the measured pH so that calcite is oversaturated, then let it form.
    before = _drawn(page)
    page.fill("#water-measured-ph", "8.6")
    page.wait_for_function("(n) => Number(document.querySelector('#water-section').dataset.drawn) > n",
                           arg=before, timeout=60_000)
    settled(page, timeout=60_000)
    si = _table(page, "water-saturation-table", "solid", "si")
    assert float(si["calcite"]) > 0
    before = _drawn(page)
    page.locator("#water-saturation-table input.water-precipitate[data-solid='calcite']").check()
    page.wait_for_function("(n) => Number(document.querySelector('#water-section').dataset.drawn) > n",
                           arg=before, timeout=60_000)
    settled(page, timeout=60_000)
    scenario = _preset_scenario("co2-well")
    scenario = {**scenario, "measured": {**scenario["measured"], "pH": 8.6}, "precipitate": ["calcite"]}
    core = _solve(scenario)
    si = _table(page, "water-saturation-table", "solid", "si")
    assert float(si["calcite"]) == pytest.approx(0.0, abs=1e-9)
    formed = {p["id"]: p for p in core["precipitated"]}
    assert "calcite" in formed
    expect(page.locator("#water-precipitated")).to_contain_text("calcite")
    assert page.locator("#water-saturation-table input[data-solid='calcite']").is_checked()
