"""End-to-end: numbers are read as people type them, and a bad value is explained in words beside
its field.

- A decimal comma ("12,5") gives the same water as "12.5", and a temperature typed in °F gives
  the same water as its °C equivalent ((54.5 − 32) × 5/9 = 12.5 °C, the definition of the
  Fahrenheit scale); the page's pH is the core's (``dispatch.handle("solve")``) for 12.5 °C.
- A target pH typed with a decimal comma gives the same dose as with a point.
- A pH outside the one range (0 to 14, ``acidscape.checks.PH_RANGE``) shows, beside that field, a
  sentence in words ("The target pH must be from 0 to 14 ..."): no scenario key, no "PH".

Named ``test_page_messages.py`` (not ``test_messages.py``): the unit test of the core's messages
has that basename, and pytest collects both trees in one run.
"""

from __future__ import annotations

import json
import math
import re

import pytest
from conftest import core_handle, core_scenario, settled, show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000
STATE = "() => import('./state.js').then((m) => m.collectState())"
KEY = re.compile(r"\b[a-z][a-z0-9]*_[A-Za-z0-9_]+\b|\b[a-z]\w*\.[a-z]\w*\b")  # temperature_C, measured.pH


def open_page(page: Page) -> None:
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    settled(page, BOOT_MS)


def water_pH(page: Page) -> float:
    return float(page.get_attribute("#water-ph", "data-value"))


def typed(page: Page, selector: str, text: str) -> None:
    """Type ``text`` into an input and wait until the page has computed with it."""
    page.fill(selector, text)
    page.wait_for_function("(s) => document.querySelector(s).getAttribute('aria-invalid') !== 'true'",
                           arg=selector, timeout=15_000)
    settled(page)


def core_pH(scenario: dict) -> float:
    reply = json.loads(core_handle("solve", json.dumps(core_scenario(scenario))))
    assert reply["ok"], reply
    return reply["result"]["pH"]


def test_decimal_comma_and_fahrenheit_read_like_the_plain_number(page: Page, watch):
    open_page(page)
    show_job(page, "water")
    typed(page, "#water-temperature", "12.5")
    plain = water_pH(page)
    scenario = page.evaluate(STATE)["water"]["scenario"]
    assert scenario["temperature_C"] == 12.5
    assert math.isclose(plain, core_pH(scenario), rel_tol=1e-9)
    for text in ("12,5", "54,5 °F", "54.5 F", "285,65 K"):
        typed(page, "#water-temperature", "25")  # something else in between: each reading is fresh
        typed(page, "#water-temperature", text)
        expect(page.locator("#water-temperature-error")).to_be_empty()
        got = page.evaluate(STATE)["water"]["scenario"]["temperature_C"]
        assert math.isclose(got, 12.5, rel_tol=0, abs_tol=1e-9), (text, got)
        assert math.isclose(water_pH(page), plain, rel_tol=1e-9), text

    # the dose target: "8,5" and "8.5" give the same dose
    show_job(page, "treat")
    page.select_option("#dose-chemical", "NaOH")
    doses = []
    for text in ("8.5", "8,5"):
        page.fill("#dose-target-ph", "9")
        settled(page)
        page.fill("#dose-target-ph", text)
        page.wait_for_function("() => document.querySelector('#dose-result-mg').dataset.value !== ''",
                               timeout=30_000)
        settled(page)
        expect(page.locator("#dose-target-ph-error")).to_be_empty()
        doses.append(float(page.get_attribute("#dose-result-mg", "data-value")))
    assert math.isclose(doses[0], doses[1], rel_tol=1e-12), doses
    watch.assert_clean()


@pytest.mark.parametrize("job, selector, text, words", [
    ("treat", "#dose-target-ph", "20", "The target pH must be from 0 to 14 (you entered 20)."),
    ("treat", "#dose-target-ph", "−1,5", "must be from 0 to 14"),
    ("water", "#water-fixed-ph", "20", "must be from 0 to 14 (you entered 20)."),
])
def test_a_bad_pH_is_explained_in_words_beside_its_field(page: Page, watch, job, selector, text, words):
    open_page(page)
    show_job(page, job)
    if job == "treat":
        page.select_option("#dose-chemical", "NaOH")
    page.fill(selector, text)
    error = page.locator(f"{selector}-error")
    expect(error).to_contain_text(words, timeout=30_000)
    expect(page.locator(selector)).to_have_attribute("aria-invalid", "true")
    message = error.text_content()
    assert "PH" not in message and "pH" in message, message
    assert not KEY.search(message), message
    assert not re.search(r"\de[+-]?\d", message), message
    watch.assert_clean()
