"""End-to-end: the page as a workbench (site/workbench.js, workbench-view.js, style.css).

Behaviour checks at a desktop (1366 px, 1920 px) and a phone (390 px) width:
- the water's headline (pH, total alkalinity, ionic strength) is on screen without scrolling,
  and on a phone it stays on screen while the page scrolls and after an edit;
- every job opens in one step, from the switcher (mouse or keyboard) and from a link between
  jobs; one job is shown at a time and the switcher says which (aria-current);
- nothing is wider than a phone's screen in any job, and no table scrolls sideways there;
- the water's species table is not cut off at 1366 and 1920 px;
- axe-core finds no accessibility violation in any job at 1366 and 390 px.
"""

from __future__ import annotations

import json

import pytest
from conftest import AXE, settled, show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000

JOBS = ["water", "treat", "titrate", "scale", "softening", "lead", "hardness", "batch", "explorer"]
# The element each job brings into view (a job may show part of a shared section).
JOB_ELEMENT = {"water": "#job-water", "treat": "#dose-block", "titrate": "#titration-block",
               "scale": "#job-scale", "softening": "#job-softening", "lead": "#job-lead",
               "hardness": "#job-hardness", "batch": "#batch-section", "explorer": "#section-distribution"}

IN_VIEW = """(sel) => { const r = document.querySelector(sel).getBoundingClientRect();
  return r.width > 0 && r.height > 0 && r.top >= 0 && r.left >= 0 && r.bottom <= innerHeight && r.right <= innerWidth; }"""

# Elements (outside the batch table's own scroll region) whose box reaches past the window, and
# tables wider than their frame (a sideways scroll).
TOO_WIDE = """() => {
  const out = [];
  for (const el of document.querySelectorAll('body *')) {
    if (el.closest('.batch-table-wrap')) continue;
    const r = el.getBoundingClientRect();
    if (r.width > 0 && r.height > 0 && r.right > innerWidth + 0.5) out.push(`${el.tagName}#${el.id}.${el.className}`);
  }
  for (const wrap of document.querySelectorAll('.table-wrap:not(.batch-table-wrap)')) {
    if (wrap.offsetParent !== null && wrap.scrollWidth > wrap.clientWidth + 1) out.push(`scrolls sideways: ${wrap.getAttribute('aria-label')}`);
  }
  return out.slice(0, 8);
}"""

AXE_RUN = ("() => axe.run(document, {resultTypes: ['violations']}).then((r) => r.violations.map("
           "(v) => ({id: v.id, help: v.help, nodes: v.nodes.map((n) => n.target.join(' ')).slice(0, 5)})))")


def open_page(page: Page, fragment: str = "") -> None:
    page.goto("/" + (f"#{fragment}" if fragment else ""))
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page)


def shown_jobs(page: Page) -> list[str]:
    return [job for job in JOBS if page.locator(JOB_ELEMENT[job]).is_visible()]


def current_tabs(page: Page) -> list[str]:
    return page.eval_on_selector_all(".job-tab[aria-current='true']", "(bs) => bs.map((b) => b.dataset.job)")


def axe_context(browser, base_url, width):
    # add_script_tag injects axe inline, which the page's CSP rightly blocks: this context alone
    # bypasses the CSP (the other tests check that it holds).
    height = 844 if width < 600 else 900
    return browser.new_context(base_url=base_url, bypass_csp=True, viewport={"width": width, "height": height})


@pytest.mark.parametrize("width", [1366, 390])
def test_the_water_headline_is_in_view_and_every_job_is_one_step_away(browser, base_url, width):
    context = axe_context(browser, base_url, width)
    try:
        page = context.new_page()
        errors = []
        page.on("pageerror", lambda e: errors.append(str(e)))
        page.on("console", lambda m: m.type == "error" and errors.append(m.text))
        open_page(page)
        # The page opens on the water: its headline without scrolling, its job shown.
        for sel in ("#water-ph", "#water-alk-total", "#water-ionic-strength"):
            assert page.evaluate(IN_VIEW, sel), f"{sel} is not on screen at {width} px"
        assert page.get_attribute("#water-ph", "data-value") not in ("", None)
        assert shown_jobs(page) == ["water"] and current_tabs(page) == ["water"]
        assert page.get_attribute("body", "data-job") == "water"

        # Each job in one click of the switcher; one job at a time; the switcher says which.
        hash_before = page.evaluate("location.hash")
        for job in JOBS:
            page.click(f"#job-tab-{job}")
            expect(page.locator("body")).to_have_attribute("data-job", job)
            assert shown_jobs(page) == [job]
            assert current_tabs(page) == [job]
        # ... and from the keyboard: the switcher's buttons are in the tab order.
        page.focus("#job-tab-explorer")
        page.keyboard.press("Shift+Tab")
        assert page.evaluate("document.activeElement.id") == "job-tab-batch"
        page.keyboard.press("Enter")
        expect(page.locator("body")).to_have_attribute("data-job", "batch")
        page.keyboard.press("Shift+Tab")
        page.keyboard.press("Space")
        expect(page.locator("body")).to_have_attribute("data-job", "hardness")
        # The switcher wraps instead of scrolling sideways.
        tabs = page.evaluate("() => { const n = document.querySelector('#job-switcher');"
                             " return [n.scrollWidth, n.clientWidth, innerWidth, n.getBoundingClientRect().right]; }")
        assert tabs[0] <= tabs[1] and tabs[3] <= tabs[2], tabs

        # Links between jobs: from the water's headline area to a job, focus on its heading.
        page.click(".job-link[data-job='treat']")
        expect(page.locator("body")).to_have_attribute("data-job", "treat")
        assert shown_jobs(page) == ["treat"] and current_tabs(page) == ["treat"]
        assert page.evaluate("document.activeElement.id") == "treatment-title"
        assert page.evaluate(IN_VIEW, "#treatment-title")
        page.click(".job-link[data-job='scale']")
        expect(page.locator("body")).to_have_attribute("data-job", "scale")
        assert shown_jobs(page) == ["scale"]
        page.click(".job-link[data-job='water']")
        assert shown_jobs(page) == ["water"]
        # Choosing a job is page state: the scenario link in the address bar is untouched.
        settled(page)
        assert page.evaluate("location.hash") == hash_before
        assert "could not" not in (page.text_content("#share-message") or "")

        # Every job shown in turn passes axe-core with no violation.
        assert AXE.exists(), "axe-core is missing: npm ci --prefix build_scripts"
        page.add_script_tag(path=str(AXE))
        violations = {}
        for job in JOBS:
            show_job(page, job)
            settled(page)
            found = page.evaluate(AXE_RUN)
            if found:
                violations[job] = found
        assert violations == {}, f"at {width} px: " + json.dumps(violations, indent=1)
        assert errors == []
    finally:
        context.close()


def test_phone_keeps_the_headline_and_results_in_view_and_nothing_scrolls_sideways(page: Page, watch):
    page.set_viewport_size({"width": 390, "height": 844})
    open_page(page, "preset=orthophosphate-dose")
    # Scrolled to the bottom of the page, the headline strip is still on screen.
    page.evaluate("() => window.scrollTo(0, document.scrollingElement.scrollHeight)")
    assert page.evaluate(IN_VIEW, "#water-ph")
    # An edit of the water deep in its inputs: the new pH is on screen when it is drawn.
    before = page.get_attribute("#water-ph", "data-value")
    page.fill("#water-temperature", "12")
    settled(page)
    page.wait_for_function("(v) => document.querySelector('#water-ph').dataset.value !== v", arg=before)
    assert page.evaluate(IN_VIEW, "#water-temperature")
    for sel in ("#water-ph", "#water-alk-total"):
        assert page.evaluate(IN_VIEW, sel), f"{sel} is off screen after an edit"
    # The inputs fold away and come back.
    page.click("#water-inputs-toggle")
    expect(page.locator("#water-form")).to_be_hidden()
    expect(page.locator("#water-inputs-toggle")).to_have_attribute("aria-expanded", "false")
    page.click("#water-inputs-toggle")
    expect(page.locator("#water-form")).to_be_visible()

    # A job's result follows its inputs: after an edit of the dose target its dose is on screen.
    show_job(page, "treat")
    page.fill("#dose-target-ph", "8,6")
    settled(page)
    page.locator("#dose-result-mg").scroll_into_view_if_needed()
    assert page.evaluate(IN_VIEW, "#dose-result-mg")
    assert page.evaluate(IN_VIEW, "#water-ph")

    # No job is wider than the phone; tables stack their cells instead of scrolling sideways.
    too_wide = {}
    for job in JOBS:
        show_job(page, job)
        settled(page)
        width = page.evaluate("() => [document.scrollingElement.scrollWidth, innerWidth]")
        found = page.evaluate(TOO_WIDE)
        if width[0] > width[1] or found:
            too_wide[job] = [f"the page is {width[0]} px wide in a {width[1]} px window", *found]
    assert too_wide == {}, too_wide
    # A stacked cell names its column.
    show_job(page, "water")
    cell = page.locator("#water-species-table tbody tr").first.locator("td[data-key='concentration']")
    assert (cell.get_attribute("data-label") or "").startswith("Concentration")
    page.screenshot(path="/tmp/acidscape-layout-390.png")


@pytest.mark.parametrize("width", [1366, 1920])
def test_the_species_table_is_not_cut_off_on_a_desktop(page: Page, watch, width):
    page.set_viewport_size({"width": width, "height": 1000})
    open_page(page, "preset=orthophosphate-dose")
    fit = page.evaluate("""() => {
      const table = document.querySelector('#water-species-table');
      const wrap = table.closest('.table-wrap');
      const t = table.getBoundingClientRect(), w = wrap.getBoundingClientRect();
      return {scroll: wrap.scrollWidth, client: wrap.clientWidth, right: t.right, wrapRight: w.right,
              window: innerWidth, page: document.scrollingElement.scrollWidth};
    }""")
    assert fit["scroll"] <= fit["client"], fit
    assert fit["right"] <= fit["wrapRight"] + 0.5 and fit["right"] <= fit["window"], fit
    assert fit["page"] <= fit["window"], fit
    # Every column head is on screen (inside the window, not clipped by the frame).
    heads = page.eval_on_selector_all("#water-species-table thead th",
                                      "(ths) => ths.map((th) => th.getBoundingClientRect().right)")
    assert heads and max(heads) <= fit["wrapRight"] + 0.5
    page.screenshot(path=f"/tmp/acidscape-layout-{width}.png")
