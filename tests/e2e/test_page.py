"""End-to-end: the built page in headless Chromium, checked against the core under CPython.

The oracle for every number on the page is ``acidscape.boundary.api`` run in this test process: the
page runs the same wheel in Pyodide, so its table must agree to floating-point round-off.
Each test boots Pyodide once (about 3 s).
"""

from __future__ import annotations

import json
import math

import pytest
from conftest import settled, show_job
from playwright.sync_api import Page, expect

from acidscape.boundary import api

from acidscape.boundary import dispatch
pytestmark = pytest.mark.e2e

BOOT_MS = 60_000

# The water's plots are embedded first (the water is the page's first view), the one-acid
# explorer's next: among the Bokeh documents with a source of this name, the explorer's is the second.
READ_SOURCE = """(name) => {
  for (const doc of Bokeh.documents.filter((d) => d.get_model_by_name(name)).slice(1)) {
    const model = doc.get_model_by_name(name);
    if (!model) continue;
    const data = model.data instanceof Map ? Object.fromEntries(model.data) : model.data;
    return {labels: Array.from(data.label), lengths: Array.from(data.ys, (y) => y.length),
            xs0: Array.from(data.xs[0] || []), ys: Array.from(data.ys, (y) => Array.from(y))};
  }
  return null;
}"""


def core(method: str, params: dict) -> dict:
    reply = json.loads(dispatch.handle(method, json.dumps(params)))
    assert reply["ok"], reply
    return reply["result"]


def open_page(page: Page) -> None:
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    show_job(page, "explorer")  # the one-acid explorer is one job of the workbench
    # it computes when shown: its first result is drawn before a test changes an input
    expect(page.locator("body")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)


def drawn(page: Page) -> int:
    return int(page.locator("body").get_attribute("data-drawn") or 0)


def wait_redrawn(page: Page, before: int) -> None:
    page.wait_for_function("(n) => Number(document.body.dataset.drawn) > n", arg=before, timeout=10_000)


def table_rows(page: Page) -> list[dict]:
    return page.evaluate(
        """() => Array.from(document.querySelectorAll('#species-table tbody tr'), (tr) => {
             const row = {name: tr.dataset.species};
             for (const td of tr.querySelectorAll('td')) row[td.dataset.key] = td.dataset.value;
             return row;
           })"""
    )


def set_field(page: Page, selector: str, text: str) -> None:
    before = drawn(page)
    page.fill(selector, text)
    wait_redrawn(page, before)


def eventually(page: Page, check) -> None:
    """Check once the page has settled: no computation scheduled or with the core (a redraw
    requested before an input must not be taken for ours)."""
    settled(page)
    check()


def assert_table_matches(rows: list[dict], expected: dict) -> None:
    want = expected["table"]["rows"]
    assert [r["name"] for r in rows] == [w["name"] for w in want]
    for got, w in zip(rows, want):
        assert int(got["charge"]) == w["charge"]
        for key in ("fraction", "concentration_M"):
            assert math.isclose(float(got[key]), w[key], rel_tol=1e-12, abs_tol=1e-300), (got, w, key)
        if w["log10_concentration_M"] is not None:
            assert math.isclose(float(got["log10_concentration_M"]), w["log10_concentration_M"], abs_tol=1e-12)


def test_boots_offers_the_library_and_plots_one_line_per_species(page: Page, watch):
    open_page(page)
    expect(page).to_have_title("Acidscape")
    library = core("systems", {})["systems"]
    options = page.eval_on_selector_all("#acid-select option", "(os) => os.map((o) => o.value)")
    assert options == [s["id"] for s in library] + ["custom"]

    # A triprotic and a diprotic acid from the library: n pKa values -> n + 1 lines.
    for system_id in ("citrate", "carbonate"):
        system = next(s for s in library if s["id"] == system_id)
        before = drawn(page)
        page.select_option("#acid-select", system_id)
        wait_redrawn(page, before)
        n = len(system["pKa_25C"])
        for source in ("fraction_src", "logc_src"):
            data = page.evaluate(READ_SOURCE, source)
            assert len(data["labels"]) == n + 1, (system_id, source, data["labels"])
            assert len(set(data["labels"])) == n + 1
            assert data["lengths"] == [len(data["xs0"])] * (n + 1)
        # Every line is the core's alpha curve, and the fractions add up to one at each pH.
        data = page.evaluate(READ_SOURCE, "fraction_src")
        expected = core("distribution", {"system": system_id, "total_M": 1e-3, "pH": 7})
        assert data["xs0"] == pytest.approx(expected["curve"]["pH"], abs=1e-12)
        for got, want in zip(data["ys"], expected["curve"]["fractions"]):
            assert got == pytest.approx(want, rel=1e-12, abs=1e-300)
        assert page.locator("#species-table tbody tr").count() == n + 1


def test_table_matches_the_core_for_a_library_acid_and_for_own_values(page: Page, watch):
    open_page(page)
    page.select_option("#acid-select", "phosphate")
    set_field(page, "#total-input", "0.0025")
    set_field(page, "#ph-input", "6.8")
    expected = core("distribution", {"system": "phosphate", "total_M": 0.0025, "pH": 6.8})
    eventually(page, lambda: assert_table_matches(table_rows(page), expected))
    expect(page.locator("#species-caption")).to_contain_text("6.80")

    # Typing pKa values switches to "your own values"; a +1 charged base (an ammonium-like acid).
    before = drawn(page)
    page.fill("#pka-input", "3.1, 9.25")
    page.fill("#charge-input", "1")
    page.wait_for_function(
        "(n) => Number(document.body.dataset.drawn) > n && "
        "document.querySelectorAll('#species-table tbody tr').length === 3 && "
        "document.querySelector('#species-table tbody tr').dataset.species === 'H2A+'",
        arg=before,
    )
    expect(page.locator("#acid-select")).to_have_value("custom")
    expected = core(
        "distribution", {"pKa": [3.1, 9.25], "charge_most_protonated": 1, "total_M": 0.0025, "pH": 6.8}
    )
    eventually(page, lambda: assert_table_matches(table_rows(page), expected))


@pytest.mark.parametrize(
    "selector, text, needle",
    [
        ("#ph-input", "seven", "not a number"),
        ("#total-input", "", "Enter the total concentration"),
        ("#total-input", "-0.001", "must be from 0 to 5 mol/L"),
        ("#pka-input", ", ".join(f"{1 + 0.2 * i:.1f}" for i in range(50)), "50 pKa values"),
        ("#pka-input", "4.76, abc", "not a number"),
        ("#charge-input", "1.5", "whole number"),
        ("#pka-input", "9, 3", "must rise from step to step"),
    ],
)
def test_bad_input_is_explained_beside_its_field_and_the_last_result_stays(page: Page, watch, selector, text, needle):
    open_page(page)
    before = drawn(page)
    page.select_option("#acid-select", "custom")
    wait_redrawn(page, before)
    kept_rows = table_rows(page)
    kept_plot = page.evaluate(READ_SOURCE, "fraction_src")
    kept_count = drawn(page)

    page.fill(selector, text)
    error = page.locator(f"{selector}-error")
    expect(error).to_contain_text(needle, timeout=10_000)
    expect(page.locator(selector)).to_have_attribute("aria-invalid", "true")
    settled(page)  # any (wrongly) scheduled redraw has happened by now
    assert drawn(page) == kept_count
    assert table_rows(page) == kept_rows
    assert page.evaluate(READ_SOURCE, "fraction_src") == kept_plot

    # A good value clears the message and computes again.
    good = {"#ph-input": "7", "#total-input": "0.001", "#pka-input": "2.15, 7.20, 12.35", "#charge-input": "0"}
    set_field(page, selector, good[selector])
    expect(error).to_be_empty()


def test_only_own_origin_no_csp_violations_and_the_detectors_work(page: Page, watch, base_url):
    open_page(page)
    page.evaluate("() => navigator.serviceWorker.ready")
    assert watch.requests, "no requests were recorded"
    assert watch.foreign_requests() == []
    assert watch.csp_violations() == []
    # The watchers must see a foreign load when there is one: a deliberate image from a
    # documentation address (RFC 5737) is blocked by the CSP, reported, and logged.
    probe = "http://192.0.2.1/probe.png"
    page.evaluate("(url) => { const img = new Image(); img.src = url; }", probe)
    page.wait_for_function("() => window.__cspViolations.length > 0")
    assert watch.csp_violations() == [f"img-src {probe}"]
    assert watch.foreign_requests() == [probe]
    deliberate = [m for m in watch.console_errors if probe in m]
    assert len(deliberate) == 1
    # Leave the record clean for the teardown check: drop exactly the deliberate probe.
    page.evaluate("() => { window.__cspViolations.length = 0; }")
    watch.console_errors.remove(deliberate[0])
    watch.requests.remove(probe)


def test_works_offline_once_the_service_worker_controls_the_page(page: Page, context, watch):
    open_page(page)
    page.evaluate("() => navigator.serviceWorker.ready")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null", timeout=20_000)
    context.set_offline(True)
    try:
        served = []
        context.on("response", lambda r: served.append((r.url, r.from_service_worker)))
        page.reload()
        expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
        show_job(page, "explorer")
        expect(page.locator("body")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)  # computed when shown
        set_field(page, "#ph-input", "9.1")
        expected = core("distribution", {"system": "phosphate", "total_M": 0.001, "pH": 9.1})
        assert_table_matches(table_rows(page), expected)
        page_files = [url for url, _ in served]
        assert any(u.endswith(".wasm") for u in page_files) and any(u.endswith(".whl") for u in page_files)
        assert all(from_sw for _, from_sw in served), [u for u, sw in served if not sw]
    finally:
        context.set_offline(False)


def test_a_failed_boot_says_so_instead_of_spinning(browser, base_url):
    # No service worker here: page.route() must see every request (platform notes §3).
    context = browser.new_context(base_url=base_url, service_workers="block")
    try:
        page = context.new_page()
        page.route("**/wheels/*.whl", lambda route: route.fulfill(status=404, body="gone"))
        page.goto("/")
        status = page.locator("#status")
        expect(status).to_have_attribute("data-state", "fatal", timeout=BOOT_MS)
        expect(status).to_contain_text("could not start")
        expect(status).to_contain_text("HTTP 404")
        assert page.locator("body").get_attribute("data-ready") is None
    finally:
        context.close()
