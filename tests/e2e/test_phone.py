"""End-to-end: a phone-sized screen (390 px wide) shows no horizontal overflow, every input has
a label, and the scenario controls work from the keyboard."""

from __future__ import annotations

import pytest
from conftest import settled, show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000


def test_phone_width_has_no_horizontal_overflow_and_inputs_are_labelled(page: Page, watch):
    page.set_viewport_size({"width": 390, "height": 844})
    page.goto("/#preset=orthophosphate-dose")
    expect(page.locator("body")).to_have_attribute("data-share-ready", "true", timeout=BOOT_MS)
    page.click(".share-exports summary")
    show_job(page, "batch")
    page.fill("#batch-text", "Sample,pH,Temp C,Alk\nA,7.2,12,80\n")
    page.click("#batch-read")
    expect(page.locator("#batch-mapping")).to_be_visible()
    rows = page.locator("#batch-totals > *")
    count = rows.count()
    page.click("#batch-add-total")
    expect(rows).to_have_count(count + 1)
    settled(page)
    width = page.evaluate("() => [document.documentElement.scrollWidth, window.innerWidth]")
    page.screenshot(path="/tmp/acidscape-phone-390.png", full_page=True)
    assert width[0] <= width[1], f"page is {width[0]} px wide in a {width[1]} px window"
    unlabelled = page.evaluate(
        """() => [...document.querySelectorAll('main input, main select, main textarea')]
             .filter((el) => el.type !== 'hidden' && !el.labels?.length && !el.getAttribute('aria-label')
                      && !el.getAttribute('aria-labelledby'))
             .map((el) => el.id || el.outerHTML.slice(0, 60))"""
    )
    assert unlabelled == []


def test_examples_open_from_the_keyboard(page: Page, watch):
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-share-ready", "true", timeout=BOOT_MS)
    page.focus("#preset-select")
    page.keyboard.press("ArrowDown")  # Chromium changes a focused closed <select> with the arrow keys
    page.wait_for_function("() => location.hash.startsWith('#preset=')")
    expect(page.locator("#preset-summary")).to_contain_text("Example — invented")
    page.keyboard.press("Tab")
    assert page.evaluate("() => document.activeElement.id") == "recent-select"
