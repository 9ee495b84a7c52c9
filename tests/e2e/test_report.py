"""End-to-end: the printed report an operator files, and its short link.

The report is checked for what a filing needs (inputs in words, the plots as images, doses and
feeds with their units, the cautions, date and versions, a short link), and the short link is
opened again: it must give back the same inputs. Numbers are the core's (``acidscape.boundary``
run in this process); the example water is invented and is only compared with the core.
"""

from __future__ import annotations

import base64
import json
import re
from pathlib import Path

import pytest
from conftest import settled, show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000
PRESETS = {p["id"]: p for p in json.loads(
    (Path(__file__).resolve().parents[2] / "site" / "presets.json").read_text())["presets"]}
STATE = "async () => (await import('./state.js')).collectState()"
SHOTS = Path("/tmp/acidscape-report")


def print_report(page: Page) -> None:
    page.evaluate("() => { window.__printed = 0; window.print = () => { window.__printed += 1; }; }")
    page.click("#print-report")
    page.wait_for_function("() => window.__printed === 1", timeout=30_000)


def test_report_for_filing_with_a_short_link(page: Page, context, watch):
    page.goto("/#preset=upland-reservoir")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(page, "treat")
    page.select_option("#dose-chemical", "NaOH")
    page.wait_for_function("() => document.querySelectorAll('#dose-product option').length > 1", timeout=30_000)
    page.select_option("#dose-product", "naoh-25")
    page.select_option("#dose-flow-unit", "m3/d")
    page.fill("#dose-flow", "4000")
    page.wait_for_function("() => document.querySelector('#dose-feed-L-per-h').dataset.value !== ''", timeout=30_000)
    settled(page)
    # the operator then looks at the titration and prints from there: the dose worked out for this
    # water stays in the report, and the plots on screen go in as images
    show_job(page, "titrate")
    page.wait_for_function("() => Number(document.querySelector('#treatment-section').dataset.bufferDrawn || 0) > 0"
                           " && Number(document.querySelector('#treatment-section').dataset.titrationDrawn || 0) > 0",
                           timeout=60_000)
    settled(page)
    print_report(page)
    report = page.locator("#report")

    # date and versions
    expect(report).to_contain_text("Printed")
    expect(report).to_contain_text("UTC")
    expect(report).to_contain_text(re.compile(r"Acidscape \d+\.\d+"))
    expect(report).to_contain_text("Pyodide")
    expect(report).to_contain_text("sha256")

    # inputs in words, never key paths
    text = report.text_content()
    rows = dict(page.eval_on_selector_all(
        "#report table.report-inputs tr", "trs => trs.map((tr) => [tr.cells[0].textContent, tr.cells[1].textContent])"))
    scenario = PRESETS["upland-reservoir"]["state"]["water"]["scenario"]
    assert rows["Temperature"] == f"{scenario['temperature_C']:g} °C"
    assert rows["Total alkalinity"] == "12 mg/L as CaCO3"
    assert rows["Measured pH"] == "6.6"
    assert rows.get("Calcium (Ca²⁺)") == "3.5 mg/L", sorted(rows.items())  # the page's name of the ion
    assert rows["Product strength"] == "25 % w/w" and rows["Plant flow"].startswith("4000 m³/d")
    assert rows["Product"].startswith("Caustic soda solution 25 %")
    for key in ("temperature_C", "measured.pH", "density_kg_per_L", "strength_pct", "scenario."):
        assert key not in text, key

    # doses and feeds with their units, and the cautions
    dose_block = report.locator(".report-block", has_text="Dose to reach a target pH")
    expect(dose_block).to_have_count(1)
    for unit in ("mg/L", "mmol/L", "meq/L", "kg/d", "L/h", "gal/d"):
        expect(dose_block).to_contain_text(unit)
    for figure in ("#dose-result-mg", "#dose-feed-kg-per-d", "#dose-feed-L-per-h"):  # as the page shows them
        expect(dose_block).to_contain_text(page.text_content(figure).strip())
    for words in ("Cautions", "never pour water into acid", "jar or bench test", "licensed operators"):
        expect(report).to_contain_text(words)

    # the plots of the job in view, as images that were drawn (not blank)
    images = report.locator("img.report-plot")
    alts = images.evaluate_all("imgs => imgs.map((i) => i.alt)")
    assert any(a.startswith("pH as the titrant goes in") for a in alts), alts
    assert any(a.startswith("Buffer intensity against pH") for a in alts), alts
    sizes = images.evaluate_all("imgs => imgs.map((i) => [i.naturalWidth, i.naturalHeight, i.src.length])")
    assert all(w > 100 and h > 100 and n > 2000 for w, h, n in sizes), sizes
    assert page.locator("#report [id]").count() == 0

    # the short link: a compressed fragment, far shorter than the plain one, and it round-trips
    link = page.locator("#report .report-link").inner_text()
    assert "#y=2." in link, link[:80]  # the short form: raw DEFLATE of the JSON with table keys
    state = page.evaluate(STATE)
    plain = "s=2." + base64.urlsafe_b64encode(json.dumps(state, separators=(",", ":")).encode()).decode().rstrip("=")
    fragment = link.split("#", 1)[1]
    assert len(fragment) < 0.45 * len(plain), (len(fragment), len(plain))

    other = context.new_page()
    other.goto(link)
    expect(other.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    expect(other.locator("#share-message")).to_have_text("Opened the scenario from the link.", timeout=30_000)
    settled(other)
    assert other.evaluate(STATE) == state
    other.close()

    # what the printer gets: the report only, looked at as paper (kept for a human to look at)
    SHOTS.mkdir(exist_ok=True)
    page.emulate_media(media="print")
    assert page.locator("#report").is_visible() and not page.locator("main").is_visible()
    page.screenshot(path=str(SHOTS / "report-print.png"), full_page=True)
    page.pdf(path=str(SHOTS / "report.pdf"), format="A4")
    page.emulate_media(media="screen")
