"""End-to-end: worked examples, links, files, recent list and the printed report.

The oracle for every number is ``acidscape.boundary.api`` run in this process (the page runs the same
wheel in Pyodide). The examples are invented waters: they are only checked for agreeing with
the core, never against a chemistry value of their own.
"""

from __future__ import annotations

import base64
import json
import math
import zlib
from pathlib import Path

import pytest
from conftest import ION_WORDS, core_scenario, settled, show_job
from playwright.sync_api import Page, expect

from acidscape.boundary import api

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000
PRESETS = json.loads((Path(__file__).resolve().parents[2] / "site" / "presets.json").read_text())["presets"]


def open_at(page: Page, fragment: str = "") -> None:
    page.goto("/" + (f"#{fragment}" if fragment else ""))
    expect(page.locator("body")).to_have_attribute("data-share-ready", "true", timeout=BOOT_MS)


def opened(page: Page) -> int:
    """How many times the page has opened something (a link, example, file, recent item)."""
    return int(page.get_attribute("body", "data-opened") or 0)


def as_words(scenario: dict) -> dict:
    """A scenario with its ion ids as words (the core may answer with either)."""
    return {**scenario, "ions": [dict(e, id=ION_WORDS.get(e["id"], e["id"])) if "id" in e else e
                                 for e in scenario.get("ions", [])]}


def water_ph(page: Page, want: float) -> float:
    """Wait until the water section shows ``want`` (to round-off) and return the shown value."""
    page.wait_for_function(
        "(w) => { const v = Number(document.getElementById('water-ph').dataset.value);"
        " return Math.abs(v - w) <= 1e-9 * Math.max(1, Math.abs(w)); }", arg=want, timeout=60_000)
    return float(page.get_attribute("#water-ph", "data-value"))


# The page's own reader of a fragment (site/share.js readFragmentAsync: s=, z= and y= links).
HASH_STATE = """async () => { const m = await import('./share.js');
  const r = await m.readFragmentAsync(location.hash, ['distribution', 'water', 'treatment']);
  return r.kind === 'state' ? r.state : null; }"""


def state_of(page: Page) -> dict:
    """The state in the page's URL as the page reads it; the page writes the short form
    (#y=2.<base64url of raw DEFLATE of the JSON, keys from a fixed table>)."""
    fragment = page.evaluate("location.hash")
    assert fragment.startswith(("#y=2.", "#z=2.", "#s=2.")), fragment[:40]
    state = page.evaluate(HASH_STATE)
    assert state is not None, fragment[:60]
    return state


def link_for(state) -> str:
    raw = json.dumps(state).encode() if not isinstance(state, bytes) else state
    return "s=1." + base64.urlsafe_b64encode(raw).decode().rstrip("=")


def test_each_example_opens_from_the_menu_and_as_a_link_and_matches_the_core(page: Page, watch):
    open_at(page, f"preset={PRESETS[0]['id']}")
    for i, preset in enumerate(PRESETS):
        if i:
            page.select_option("#preset-select", preset["id"])
        want = api.solve(core_scenario(preset["state"]["water"]["scenario"]))
        got = water_ph(page, want["pH"])
        assert math.isclose(got, want["pH"], rel_tol=1e-12)
        ionic = float(page.get_attribute("#water-ionic-strength", "data-value"))
        assert math.isclose(ionic, want["ionic_strength_M"], rel_tol=1e-12)
        expect(page.locator("#preset-summary")).to_contain_text("Example — invented")
        page.wait_for_function("(h) => location.hash === h", arg=f"#preset={preset['id']}")
        # The species section shows the example's acid at its pH, as the core computes it (for the
        # examples that set the one-acid explorer).
        d = preset["state"].get("distribution")
        if d is None:
            continue
        page.wait_for_function("(id) => document.getElementById('acid-select').value === id", arg=d["acid"])
        expect(page.locator("#species-caption")).to_contain_text(f"{d['pH']:.2f}")


def test_a_link_round_trips_to_the_same_inputs_and_numbers(page: Page, context, watch):
    open_at(page, "preset=hatchery-tank")
    hatchery = next(p for p in PRESETS if p["id"] == "hatchery-tank")
    water_ph(page, api.solve(core_scenario(hatchery["state"]["water"]["scenario"]))["pH"])
    show_job(page, "explorer")
    page.fill("#ph-input", "6.85")
    # The link is written 300 ms after the edit (and compressed asynchronously). Playwright does
    # not await a predicate's Promise (an async predicate is truthy at once), so each poll starts
    # a read of the URL with the page's own reader and a later poll looks at what it found.
    page.wait_for_function(
        """(pH) => {
             import('./share.js')
               .then((m) => m.readFragmentAsync(location.hash, ['distribution', 'water', 'treatment']))
               .then((r) => { window.__linked = r.kind === 'state' ? r.state : null; });
             return window.__linked?.distribution?.pH === pH;
           }""", arg=6.85, timeout=60_000)
    settled(page)
    first = state_of(page)
    assert first["distribution"]["pH"] == 6.85
    assert first["water"]["scenario"]["temperature_C"] == 12.0
    shown = page.input_value("#share-url")
    assert shown == page.evaluate("location.href")
    species = page.eval_on_selector_all("#species-table td", "tds => tds.map((td) => td.dataset.value)")
    ph = page.get_attribute("#water-ph", "data-value")

    other = context.new_page()
    other.goto(shown)
    expect(other.locator("body")).to_have_attribute("data-share-ready", "true", timeout=BOOT_MS)
    water_ph(other, float(ph))
    other.wait_for_function("() => document.getElementById('ph-input').value === '6.85'")
    settled(other)
    assert state_of(other) == first
    assert other.get_attribute("#water-ph", "data-value") == ph
    assert other.eval_on_selector_all("#species-table td", "tds => tds.map((td) => td.dataset.value)") == species
    expect(other.locator("#share-message")).to_have_text("Opened the scenario from the link.")
    other.close()


OLD_FORMAT = base64.urlsafe_b64encode(json.dumps(
    {"version": 0, "acid": "custom", "pka": "4.76", "z": 0, "c": 0.01, "ph": 5}).encode()).decode().rstrip("=")
GOOD = link_for({"v": 1, "distribution": {"acid": "custom", "pKa": [4.2], "charge": 0, "total_M": 0.002, "pH": 5}})

# (fragment, words the message must hold); every payload tries to run code or break the parser.
HOSTILE = [
    (link_for({"v": 1, "distribution": {"acid": "<img src=x onerror=\"window.__pwned=1\">"}}), "not an acid this page knows"),
    (link_for({"v": 1, "water": {"scenario": {"systems": [{"custom": {"name": "<script>window.__pwned=1</script>",
                                                                      "pKa": [4.0]}, "total": 1}]}}}), ""),
    ("preset=javascript:window.__pwned=1", "not a valid name"),
    (link_for({"v": 1, "distribution": {"acid": "javascript:window.__pwned=1"}}), "not an acid this page knows"),
    (link_for(b'{"v":1,"distribution":{"total_M":1e999}}'), "too large"),
    (link_for({"v": 1, "distribution": {"pH": 1e300}}), "too large"),
    (link_for({"v": 1, "distribution": "abc"}), "expected a group of inputs"),
    (link_for({"v": 1, "distribution": {"pH": {"x": 1}, "charge": [1, 2]}}), "not usable here"),
    (GOOD[:-9], "cut short"),
    ("s=7." + link_for({"v": 7, "distribution": {}})[4:], "newer Acidscape (format 7)"),
    ("s=0." + GOOD[4:], "version marks disagree"),
    ("s=1." + "QUFB" * 25_000, "too long"),
    (link_for(b'{"v":1,"__proto__":{"polluted":1},"distribution":{"constructor":{"x":1},"pH":6}}'), "is not allowed"),
    (link_for(b"[1,2,3]"), "does not hold a scenario"),
    ("s=1.%3Cscript%3E", "characters"),
    (link_for({"v": 1, "spreadsheet": {"a": 1}}), "not a part of this page"),
    # short (compressed) links: damaged, cut, or inflating far past any scenario
    ("y=2.AAAA", "damaged"),
    ("y=2." + base64.urlsafe_b64encode(zlib.compress(b'{"v":2,"x":"' + b" " * 200_000 + b'"}')[2:-4]).decode().rstrip("="),
     "more than"),
]


def test_hostile_and_broken_links_are_refused_with_a_message_and_run_nothing(page: Page, watch):
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    open_at(page, HOSTILE[0][0])
    for i, (fragment, needle) in enumerate(HOSTILE):
        if i:
            before = opened(page)
            page.evaluate("(h) => { location.hash = h; }", fragment)
            page.wait_for_function("(n) => Number(document.body.dataset.opened) > n", arg=before, timeout=60_000)
        settled(page)
        message = page.locator("#share-message")
        expect(message).to_be_visible()
        if needle:
            expect(message).to_contain_text(needle)
        assert page.evaluate("() => window.__pwned") is None, fragment[:60]
        assert page.evaluate("() => ({}).polluted === undefined && Object.prototype.polluted === undefined")
        assert page.locator("img[src='x'], main script").count() == 0
    assert dialogs == []
    # The page still computes after all that: a good link opens and its numbers are the core's.
    before = opened(page)
    page.evaluate("(h) => { location.hash = h; }", GOOD)
    page.wait_for_function("(n) => Number(document.body.dataset.opened) > n", arg=before, timeout=60_000)
    expect(page.locator("#share-message")).to_have_text("Opened the scenario from the link.")
    want = api.distribution({"pKa": [4.2], "charge_most_protonated": 0, "total_M": 0.002, "pH": 5})
    page.wait_for_function("() => document.getElementById('pka-input').value === '4.2'")
    page.wait_for_function(
        "(f) => { const td = document.querySelector('#species-table td[data-key=fraction]');"
        " return td && Math.abs(Number(td.dataset.value) - f) < 1e-12; }", arg=want["table"]["rows"][0]["fraction"])


def test_a_format_0_link_opens_migrated(page: Page, watch):
    open_at(page, f"s=0.{OLD_FORMAT}")
    expect(page.locator("#share-message")).to_contain_text("an older link (format 0) was brought up to date")
    page.wait_for_function("() => document.getElementById('pka-input').value === '4.76'")
    assert page.input_value("#total-input") == "0.01" and page.input_value("#ph-input") == "5"
    page.wait_for_function("() => location.hash.startsWith('#y=2.')")
    assert state_of(page)["distribution"] == {
        "acid": "custom", "pKa": [4.76], "charge": 0, "total_M": 0.01, "pH": 5}


def test_copy_file_recent_list_and_report(page: Page, context, watch, tmp_path):
    open_at(page, "preset=co2-well")
    water_ph(page, api.solve(core_scenario(PRESETS[1]["state"]["water"]["scenario"]))["pH"])
    # Copy link: the clipboard (granted here) or the selected-text fallback; either says so.
    context.grant_permissions(["clipboard-read", "clipboard-write"])
    page.click("#share-copy")
    expect(page.locator("#share-message")).to_contain_text("Link copied")
    assert page.evaluate("() => navigator.clipboard.readText()") == page.evaluate("location.href")

    # Save to a file and open it again: same state.
    with page.expect_download() as info:
        page.click("#save-json")
    saved = tmp_path / "scenario.json"
    info.value.save_as(saved)
    state = json.loads(saved.read_text())
    # The water section writes an empty list where the example leaves a key out.
    assert as_words({k: v for k, v in state["water"]["scenario"].items() if v != []}) == PRESETS[1]["state"]["water"]["scenario"]
    show_job(page, "explorer")
    page.fill("#ph-input", "3.3")
    before = opened(page)
    page.set_input_files("#load-json", str(saved))
    # Opening a file applies it and computes every section before it says so: wait for that.
    page.wait_for_function("(n) => Number(document.body.dataset.opened) > n", arg=before, timeout=60_000)
    expect(page.locator("#share-message")).to_contain_text('Opened the scenario from the file "scenario.json"')
    page.wait_for_function("(v) => document.getElementById('ph-input').value === v", arg=str(state["distribution"]["pH"]))
    bad = tmp_path / "bad.json"
    bad.write_text('{"v": 1, "distribution": ')
    page.set_input_files("#load-json", str(bad))
    expect(page.locator("#share-message")).to_contain_text('"bad.json" could not be opened: it is not valid JSON')

    # Recent scenarios: kept in localStorage only, listed, and cleared by the button.
    page.wait_for_function("() => document.querySelectorAll('#recent-select option').length > 1", timeout=10_000)
    assert page.evaluate("() => JSON.parse(localStorage.getItem('acidscape.recent.v1')).length") >= 1
    page.click("#recent-clear")
    assert page.evaluate("() => localStorage.getItem('acidscape.recent.v1')") is None
    expect(page.locator("#recent-select option")).to_have_count(1)

    # Printed report: inputs, results, trail, cautions, date and versions; print() is stubbed.
    page.evaluate("() => { window.__printed = 0; window.print = () => { window.__printed += 1; }; }")
    page.click("#print-report")
    page.wait_for_function("() => window.__printed === 1")
    report = page.locator("#report")
    for words in ("Acidscape report", "Tool version", "Acidscape 0.", "Constants version", "sha256",
                  "Cautions", "never pour water into acid", "Temperature"):
        expect(report).to_contain_text(words)
    assert report.locator("table").count() >= 3
    assert page.locator("#report [id]").count() == 0  # copies carry no duplicate ids

    # Exports: a table as CSV with the numbers in its header's units, and a plot as a PNG.
    # The menus fill when the details open (an asynchronous toggle): wait for the option.
    page.click(".share-exports summary")
    option = page.locator("#export-table-select option", has_text="Species at")
    expect(option).to_have_count(1)
    page.select_option("#export-table-select", label=option.inner_text())
    with page.expect_download() as info:
        page.click("#export-table-csv")
    csv_text = Path(info.value.path()).read_text()
    first_value = page.get_attribute("#water-species-table tbody td[data-export]:not([data-export=''])", "data-export")
    assert first_value in csv_text
    expect(page.locator("#export-plot-select option").first).to_be_attached()
    with page.expect_download() as info:
        page.click("#export-plot-png")
    assert Path(info.value.path()).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# A y= link the page wrote before the scale, softening and workbench keys were appended to its
# key table (site/share.js KEY_TABLE_1): the example "hard-well-scale" with lead and hardness
# inputs. Every such link keeps its meaning (tests/js/share.test.mjs decodes the same string).
OLD_Y_LINK = (
    "y=2.bZJBa8MwDIX_ynhn0cZO0na6ZocOCt19jODVbpPhxCFOy1jxfvtwU9oOchG29OlJPPuMBCwJEnxGFoMBC0nYg6HVqTYehEMsaPByJglVvNRgu"
    "cgJX2A0h_nmSfmnQhXbFCEQLPj9jAaMnbK7-tiA0IJFkt07EGhEGnVojb9Bz7N8AvJO32UWE0DnBuXvKnImJqBdZV1fazMy6RTij3avhiuRyQmirY"
    "f-RojVI_ERCHm0554KhDRmFjGIBJzMEkkQMtqREEQKzggiA-Pk7LGJwj9grAuLQFhe-nIwiq0EQSzBS4JYgdujtQTxfDupuPFF9DPOT-d6fA2j9EU"
    "lznh5LUDY964BC8Lv4K6LuH6oXFc531VqMKV23pTNoexMX25K5cu3uPqKsK-_jS67dfwNq1G89M7W2oOhrAVh57rY9i8bCJXqdWu8f3BCjE7kyaOuSE"
    "L4Aw")


def test_a_short_link_from_before_the_scale_and_softening_keys_still_opens(page: Page, watch):
    hard = next(p for p in PRESETS if p["id"] == "hard-well-scale")["state"]
    open_at(page, OLD_Y_LINK)
    expect(page.locator("#share-message")).to_have_text("Opened the scenario from the link.")
    water_ph(page, api.solve(core_scenario(hard["water"]["scenario"]))["pH"])
    settled(page)
    state = page.evaluate("async () => (await import('./state.js')).collectState()")
    assert state["water"]["scenario"]["temperature_C"] == 12
    assert state["treatment"]["dose"]["flow"] == 4200 and state["treatment"]["titration"]["to_pH"] == 4
    assert state["lead"] == {"axis": "DIC", "from": 1, "to": 100, "orthophosphate_dose_mg_per_L_as_P": 0.8,
                             "fixed_pH": 7.8, "lead_solids": "all", "copper_solids": "all"}
    assert state["hardness"] == {"sample_mL": 50, "titrant_M": 0.01, "fixed_pH": 10}
    assert page.get_attribute("body", "data-job") == "water"  # the link named no job: the page opens on the water
    # the link the page writes now reads back the same, with the job in view added
    page.wait_for_function("() => location.hash.startsWith('#y=2.') && location.hash !== '#" + OLD_Y_LINK + "'")
    again = page.evaluate("""async () => { const m = await import('./share.js');
      const r = await m.readFragmentAsync(location.hash, ['water', 'treatment', 'lead', 'hardness', 'workbench']);
      return r.kind === 'state' ? r.state : null; }""")
    assert again["lead"] == state["lead"] and again["hardness"] == state["hardness"]
    assert again["workbench"] == {"job": "water"}
