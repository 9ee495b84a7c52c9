"""End-to-end: the page's request contract for speed (issue 10, "Speed").

- One request to the worker per edit of the water while the water job is in view
  (dispatch.stages "water_view": the solved water first, its curves after); the jobs that are
  hidden ask nothing.
- A burst of 10 keystrokes computes at most 2 requests (the one with the core and the newest;
  the ones between are dropped before they are computed), and the result on screen is the
  core's answer for the last input.
- Opening the page or a link computes each hidden job's blocks once, when the job is shown,
  not twice (once on the water's solve and again when the link is settled).
- Boot order (issue 10: "load only what the first view needs before the first result"): with
  the water job in view, nothing but the water's one request and the core's library and
  catalogues is sent before the water's plots are drawn; no hidden job asks for a solve of
  the water or a distribution (the jobs get the water the page solved); the one-acid explorer
  computes when it is shown.

Requests are counted by the page itself (py.js: window.__acidscapeCalls). No timings here:
speed is measured by build_scripts/bench.py. The oracle for the numbers is
``acidscape.boundary.api.solve`` run in this process on the scenario the page holds; the waters
are the page's invented defaults, only checked for agreement with the core.
"""

from __future__ import annotations

import math

import pytest
from conftest import core_scenario, settled, show_job
from playwright.sync_api import Page, expect

from acidscape.boundary import api

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000

CALLS = "() => JSON.parse(JSON.stringify(window.__acidscapeCalls))"


def open_page(page: Page, fragment: str = "") -> None:
    page.goto("/" + (f"#{fragment}" if fragment else ""))
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)


def calls(page: Page) -> dict:
    return page.evaluate(CALLS)


def sent_since(before: dict, after: dict) -> dict:
    """Requests per method between two counts (methods with none left out)."""
    out = {m: n - before["byMethod"].get(m, 0) for m, n in after["byMethod"].items()}
    return {m: n for m, n in out.items() if n}


def page_scenario(page: Page) -> dict:
    return page.evaluate("() => import('./state.js').then((m) => m.collectState().water.scenario)")


def shown_pH(page: Page) -> float:
    return float(page.get_attribute("#water-ph", "data-value"))


def edit(page: Page, selector: str, text: str) -> dict:
    """Type a new value into a water input as a user does; the requests it caused."""
    assert page.input_value(selector) != text, "an edit must change the water"
    before = calls(page)
    page.fill(selector, text)
    settled(page)
    return sent_since(before, calls(page))


def test_one_request_per_edit_of_the_water_while_the_water_job_is_shown(page: Page, watch):
    open_page(page)
    show_job(page, "water")
    for selector, text in (("#water-system-0-total", "3.17"), ("#water-temperature", "12.3"),
                           ("#water-ion-0-total", "2.71"), ("#water-system-0-total", "1.23")):
        assert edit(page, selector, text) == {"water_view": 1}, selector
        # the answer on screen is the core's for what is typed now
        assert math.isclose(shown_pH(page), api.solve(core_scenario(page_scenario(page)))["pH"], rel_tol=1e-9)
    assert page.get_attribute("#water-results", "data-state") == "current"


def test_a_burst_of_keystrokes_computes_at_most_two_requests_and_shows_the_last(page: Page, watch):
    open_page(page)
    show_job(page, "water")
    before = calls(page)
    # The first keystroke reaches the core as soon as its event is handled; the other nine come
    # while it is there (in one go, so none of them can be answered in between): they wait, each
    # newer one replacing the one before, and only the last is sent.
    burst = page.evaluate("""async () => {
      const input = document.querySelector('#water-system-0-total');
      const sent = window.__acidscapeCalls.total;
      const type = (text) => {
        input.value = text;
        input.dispatchEvent(new Event('input', {bubbles: true}));
      };
      let text = '1';
      type(text);
      while (window.__acidscapeCalls.total === sent) {
        await new Promise((resolve) => requestAnimationFrame(resolve));
      }
      for (const key of '.72503125') {
        text += key;
        type(text);
      }
      return text;
    }""")
    settled(page)
    sent = sent_since(before, calls(page))
    assert burst == "1.72503125"
    assert set(sent) == {"water_view"}
    assert 1 <= sent["water_view"] <= 2, sent
    scenario = page_scenario(page)
    assert float(scenario["systems"][0]["total"]) == 1.72503125
    assert math.isclose(shown_pH(page), api.solve(core_scenario(scenario))["pH"], rel_tol=1e-9)
    assert page.get_attribute("#water-results", "data-state") == "current"


def test_hidden_jobs_ask_nothing_and_are_computed_once_when_shown(page: Page, watch):
    open_page(page)
    at_ready = calls(page)["byMethod"]
    # titration, buffer and dose wait for their jobs: the page did not compute them on load
    # (and not twice: once on the water's solve and again when the state was settled)
    assert {m: at_ready.get(m, 0) for m in ("titrate", "buffer", "dose")} == {"titrate": 0, "buffer": 0, "dose": 0}
    before = calls(page)
    show_job(page, "titrate")
    page.wait_for_function(
        "() => Number(document.querySelector('#treatment-section').dataset.bufferDrawn || 0) > 0 &&"
        " Number(document.querySelector('#treatment-section').dataset.titrationDrawn || 0) > 0",
        timeout=BOOT_MS)
    settled(page)
    assert sent_since(before, calls(page)) == {"titrate": 1, "buffer": 1}
    # back and forth without a change: nothing is asked again
    before = calls(page)
    show_job(page, "water")
    show_job(page, "titrate")
    settled(page)
    assert sent_since(before, calls(page)) == {}
    # an edit of the water with the titration job in view: the water and that job's blocks only
    sent = edit(page, "#water-system-0-total", "2.83")
    assert sent == {"water_view": 1, "titrate": 1, "buffer": 1}, sent


# Installed before the page's scripts: every request the page posts to its worker, in order,
# with whether the water's plots were drawn (#water-section[data-drawn]) when it was sent.
SENT_LOG = """(() => {
  window.__sent = [];
  const post = Worker.prototype.postMessage;
  Worker.prototype.postMessage = function (message, ...rest) {
    if (message && message.method) {
      window.__sent.push({method: message.method,
                          plotted: Boolean(document.querySelector('#water-section[data-drawn]'))});
    }
    return post.call(this, message, ...rest);
  };
})();"""

# What the first view needs from the core: its library (systems, ions, limits) and catalogues
# (units, activity models, molar masses), and the water's one request.
FIRST_VIEW = {"systems", "catalogues", "water_view"}
# Lists the jobs are filled from once the water is drawn (no computation of a job).
LISTS = {"chemicals", "products"}


def sent(page: Page) -> list[dict]:
    return page.evaluate("() => window.__sent")


@pytest.mark.parametrize("fragment", ["", "preset=upland-reservoir"])
def test_boot_sends_only_what_the_first_view_needs_before_the_water_is_plotted(page: Page, watch, fragment):
    page.add_init_script(SENT_LOG)
    open_page(page, fragment)
    log = sent(page)
    before = [r["method"] for r in log if not r["plotted"]]
    assert set(before) <= FIRST_VIEW, before
    assert before.count("water_view") == 1, before
    assert page.get_attribute("#water-section", "data-drawn") is not None
    # No job asks the core to solve the water again: it has the page's solve.
    assert "solve" not in [r["method"] for r in log], log


def test_hidden_jobs_compute_nothing_at_boot_and_the_explorer_computes_when_shown(page: Page, watch):
    page.add_init_script(SENT_LOG)
    open_page(page)
    assert set(calls(page)["byMethod"]) <= FIRST_VIEW | LISTS, calls(page)["byMethod"]
    assert calls(page)["byMethod"]["water_view"] == 1
    assert page.get_attribute("body", "data-drawn") is None  # the explorer drew nothing yet
    before = calls(page)
    show_job(page, "explorer")
    expect(page.locator("body")).to_have_attribute("data-drawn", "1", timeout=BOOT_MS)
    settled(page, timeout=BOOT_MS)
    assert sent_since(before, calls(page)) == {"distribution": 1}
    # the core's answer for the explorer's inputs on screen (phosphate, 0.001 mol/L, pH 7)
    want = api.distribution({"system": page.input_value("#acid-select"), "total_M": float(page.input_value("#total-input")),
                             "pH": float(page.input_value("#ph-input"))})
    fraction = float(page.get_attribute("#species-table tbody tr td[data-key='fraction']", "data-value"))
    assert math.isclose(fraction, want["table"]["rows"][0]["fraction"], rel_tol=1e-12)
    # A job shown after the boot computes its own blocks; the water it works on is the page's
    # solve (no request for the water again).
    for job in ("lead", "hardness"):
        before = calls(page)
        show_job(page, job)
        settled(page, timeout=BOOT_MS)
        asked = sent_since(before, calls(page))
        assert asked and "solve" not in asked and "water_view" not in asked, (job, asked)
