"""End-to-end: a few hundred generated samples through the page's batch section.

The file is written as a spreadsheet in a decimal-comma locale exports it (semicolons, decimal
commas, a byte-order mark, CRLF, a quoted ID holding the delimiter) with units in the column
names. The page must recognise the columns, stream the rows to the worker(s), list bad rows by
their spreadsheet row, say "no dose needed" where a water is past the dose target, show the
cautions with the dose, and download what ``acidscape.boundary.batch.batch_csv`` gives in this
process for the same text and mapping (the core is the oracle: same columns, rows, IDs and
messages; numbers to round-off). The page must keep answering while the batch runs. The 10,000
row throughput is measured by build_scripts/bench_share.py, not here. Sample values are
generated at random, not taken from any real plant.
"""

from __future__ import annotations

import csv
import io
import math
import random
from pathlib import Path

import pytest
from conftest import show_job
from playwright.sync_api import Page, expect

from acidscape.boundary.batch import guess_mapping, run_rows, template_csv

pytestmark = pytest.mark.e2e

BOOT_MS = 90_000
WAIT_MS = 120_000  # one worker call on a loaded two-core machine
ROWS = 300
BAD = {17: "no pH", 142: "<0.01", 250: "no alkalinity"}  # data index -> what is wrong
HEADER = ["Sample", "pH", "Temp (°C)", "Alkalinity (mg/L as CaCO3)", "PO4-P (mg/L)", "Ca (mg/L)", "Chloride mg/L"]
TARGET_PH = 8.2


def generated() -> str:
    rnd = random.Random(2024)
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=";", lineterminator="\r\n")
    w.writerow(HEADER)
    for i in range(ROWS):
        cells = [f"W{i:04d}" if i % 50 else f"W{i:04d}; east", f"{rnd.uniform(6.5, 9.5):.2f}",
                 f"{rnd.uniform(2, 30):.1f}", f"{rnd.uniform(20, 300):.1f}", f"{rnd.uniform(0, 2):.3f}",
                 f"{rnd.uniform(5, 80):.1f}", f"{rnd.uniform(5, 60):.1f}"]
        if BAD.get(i) == "no pH":
            cells[1] = ""
        elif BAD.get(i) == "<0.01":
            cells[4] = "<0,01"
        elif BAD.get(i) == "no alkalinity":
            cells[3] = ""
        w.writerow([c.replace(".", ",") if k else c for k, c in enumerate(cells)])
    return "\ufeff" + buf.getvalue()


def expected_mapping(digits_note: str = "") -> dict:
    g = guess_mapping(HEADER)
    mapping = {k: v for k, v in g.items() if k not in ("notes", "unmapped")}
    mapping["temperature"] = {**mapping["temperature"], "default_C": 25}
    mapping.update(delimiter=";", decimal=",", dose={"chemical": "NaOH", "target_pH": TARGET_PH})
    return mapping


def compare(got: str, want: str, digits: int) -> None:
    """Same columns, rows and text cells; numbers within one unit of the last digit written
    (Pyodide's libm and the host's differ in the last bits, which iterative solves carry)."""
    got_rows, want_rows = list(csv.reader(io.StringIO(got))), list(csv.reader(io.StringIO(want)))
    assert got_rows[0] == want_rows[0] and len(got_rows) == len(want_rows) == ROWS + 1
    for g, w in zip(got_rows[1:], want_rows[1:]):
        assert len(g) == len(w)
        for a, b, name in zip(g, w, want_rows[0]):
            try:
                fa, fb = float(a), float(b)
            except ValueError:
                assert a == b, (name, a, b)
                continue
            if digits == 0:
                assert math.isclose(fa, fb, rel_tol=1e-9, abs_tol=1e-12), (name, a, b)
            elif a != b:
                step = 10.0 ** (math.floor(math.log10(abs(fb))) - digits + 1) if fb else 0.0
                if name.startswith("pH") or name == "pH_after_dose":
                    step = 1e-3
                assert abs(fa - fb) <= step * 1.0001, (name, a, b)


def test_samples_stream_and_match_the_core(page: Page, watch, tmp_path):
    text = generated()
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-share-ready", "true", timeout=BOOT_MS)
    show_job(page, "batch")

    # The template button downloads the accepted columns and an invented example row.
    with page.expect_download(timeout=WAIT_MS) as info:
        page.click("#batch-template")
    assert Path(info.value.path()).read_text(encoding="utf-8") == template_csv()

    samples = tmp_path / "samples.csv"
    samples.write_bytes(text.encode("utf-8"))
    page.set_input_files("#batch-file", str(samples))  # the file path reads the columns at once
    expect(page.locator("#batch-columns-note")).to_contain_text(f"7 columns, {ROWS} sample lines.", timeout=WAIT_MS)
    expect(page.locator("#batch-columns-note")).to_contain_text("Separated by semicolons, decimal commas.")
    # Every column is recognised from its name, totals included.
    assert page.input_value("#batch-col-id") == "Sample" and page.input_value("#batch-col-ph") == "pH"
    assert page.input_value("#batch-col-temp") == "Temp (°C)"
    assert page.input_value("#batch-col-alk") == "Alkalinity (mg/L as CaCO3)"
    want_totals = [(e["column"], f"{kind}:{e['id']}", e["unit"]) for kind, key in (("system", "systems"), ("ion", "ions"))
                   for e in guess_mapping(HEADER)[key]]
    got_totals = [(page.input_value(f"#batch-total-{i}-column"), page.input_value(f"#batch-total-{i}-id"),
                   page.input_value(f"#batch-total-{i}-unit")) for i in range(len(want_totals))]
    assert got_totals == want_totals and len(want_totals) == 3
    assert page.input_value("#batch-digits") == "4"
    page.select_option("#batch-dose-chemical", "NaOH")
    page.fill("#batch-dose-target", "8,2")
    page.click("#batch-run")

    # While it runs the page answers: the species section still recomputes.
    show_job(page, "explorer")  # a hidden job computes when it is shown: its first result first
    page.wait_for_selector("body[data-drawn]", state="attached", timeout=WAIT_MS)
    before = int(page.get_attribute("body", "data-drawn"))
    page.fill("#ph-input", "8.8")
    page.wait_for_function("(n) => Number(document.body.dataset.drawn) > n", arg=before, timeout=WAIT_MS)
    show_job(page, "batch")

    expect(page.locator("#batch-progress")).to_have_attribute("data-state", "finished", timeout=300_000)
    with page.expect_download(timeout=WAIT_MS) as info:
        page.click("#batch-download")
    got = Path(info.value.path()).read_text()
    mapping = expected_mapping()
    want = run_rows(text, mapping, digits=4)  # the rows in full, and the CSV lines as batch_csv writes them
    compare(got, ",".join(want["columns"]) + "\n" + want["csv"], 4)

    rows = [li.get_attribute("data-row") for li in page.locator("#batch-errors li").all()]
    assert rows == [str(i + 2) for i in sorted(BAD)]
    expect(page.locator("#batch-errors li").first).to_contain_text("Row 19 (W0017): pH is missing")
    expect(page.locator("#batch-errors li").last).to_contain_text("Row 252 (W0250; east): Alkalinity is missing")
    expect(page.locator("#batch-cautions")).to_be_visible()
    expect(page.locator("#batch-cautions")).to_contain_text("jar or bench test")
    statuses = [r["dose_status"] for r in csv.DictReader(io.StringIO(got))]
    assert statuses.count("no dose needed") > 20 and statuses.count("dosed") > 20
    assert page.locator("#batch-table tbody tr").count() == 200
    assert page.locator("#batch-table thead th[data-key='phosphate_HPO4_mol_per_L']").inner_text() == "HPO₄²⁻ (mol/L)"

    # The table keeps every number in full (data-value): the same as CPython to round-off.
    cells = page.eval_on_selector_all(
        "#batch-table tbody tr", "trs => trs.map(tr => Object.fromEntries([...tr.cells].map(td => [td.dataset.key, td.dataset.value])))")
    for shown, full in zip(cells, want["rows"][:200]):
        for key, value in full.items():
            if isinstance(value, float):
                assert math.isclose(float(shown[key]), value, rel_tol=1e-9, abs_tol=1e-12), (full["row"], key)
            else:
                assert shown[key] == ("" if value is None else str(value)), (full["row"], key)
