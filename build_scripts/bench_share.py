"""Timings of sharing and batch work (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench_share.py [--rows N] [--runs N] [--chromium PATH]
                                                      [--no-browser]

- ``cpython_batch_rows_per_s_jobs1`` / ``_jobs2``: acidscape.boundary.batch.batch_table (the
  command line's ``batch``) on N generated samples (pH, temperature, alkalinity, phosphate) on
  the host CPython, in one process and in two (``--jobs 2``); the two texts are checked equal.
- ``browser_batch_rows_per_s_one_worker``: the same CSV through the page's batch section with
  the page told it has one core (no extra workers), from the click to the last chunk, as the
  page reports it; ``browser_batch_rows_per_s``: the same with the extra worker(s) the page
  starts on this machine's cores, once they are ready (a user reads the columns, then maps
  them; the workers start when the columns are read); ``browser_batch_workers``: workers used;
  ``helper_ready_ms``: from reading the columns to the extra workers being ready (medians of
  ``--batch-runs`` alternated runs).
- ``bare_pyodide_boot_ms``: navigation to the end of loadPyodide() on an empty page;
  ``preset_link_first_result_ms``: navigation to ``#preset=<id>`` until that example's water pH
  is on screen (link decoded and applied, every section recomputed);
  ``preset_link_over_bare_boot``: the ratio of the medians. Fresh context per run, service
  workers blocked (a first visit), the two pages alternated.

The machine has 2 cores shared with other work; figures vary by tens of per cent between runs,
and the load averages before and after are printed with them.
Needs a built dist/ (python build_scripts/build.py) and /usr/bin/chromium.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import random
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
DIST = REPO / "dist"
sys.path.insert(0, str(REPO / "build_scripts"))
sys.path.insert(0, str(REPO / "pycore"))

from bench import BARE_HTML, BARE_JS, serve  # noqa: E402

MAPPING = {"id": "Sample", "pH": "pH", "temperature": {"column": "Temp C", "unit": "C"},
           "alkalinity": {"column": "Alkalinity mg/L", "unit": "mg/L as CaCO3"},
           "systems": [{"id": "phosphate", "column": "PO4-P mg/L", "unit": "mg/L as P"}]}
PRESET = "orthophosphate-dose"


def samples(n: int) -> str:
    rnd = random.Random(1)
    lines = ["Sample,pH,Temp C,Alkalinity mg/L,PO4-P mg/L"]
    lines += [f"W{i},{rnd.uniform(6, 9.5):.2f},{rnd.uniform(2, 30):.1f},{rnd.uniform(5, 300):.1f},"
              f"{rnd.uniform(0, 2):.3f}" for i in range(n)]
    return "\n".join(lines) + "\n"


def cpython_rates(text: str, n: int) -> dict:
    from acidscape.boundary.batch import batch_table

    out, first = {}, None
    for jobs in (1, 2):
        t0 = time.perf_counter()
        csv_text, _, done = batch_table(text, MAPPING, jobs=jobs)
        out[f"cpython_batch_rows_per_s_jobs{jobs}"] = round(done / (time.perf_counter() - t0), 1)
        if first is None:
            first = csv_text
        elif csv_text != first:
            raise AssertionError("--jobs 2 gave another text than --jobs 1")
    return out


def page_batch(browser, site_url: str, csv_path: Path, n: int, one_core: bool) -> dict:
    """One batch of the CSV through the page; returns seconds, workers and helper start time."""
    ctx = browser.new_context(service_workers="block")
    if one_core:
        ctx.add_init_script("Object.defineProperty(navigator, 'hardwareConcurrency', {get: () => 1});")
    page = ctx.new_page()
    page.goto(site_url)
    page.wait_for_selector("body[data-share-ready]", state="attached", timeout=120_000)
    t0 = time.perf_counter()
    page.set_input_files("#batch-file", str(csv_path))
    page.wait_for_function("() => !document.getElementById('batch-run').disabled")
    # the column guess maps the phosphate column (PO4-P mg/L -> phosphate, mg/L as P) by itself
    assert page.input_value("#batch-total-0-id") == "system:phosphate"
    assert page.input_value("#batch-total-0-unit") == "mg/L as P"
    ready_ms = None
    if not one_core:
        page.wait_for_selector("#batch-progress[data-helpers]", state="attached", timeout=120_000)
        ready_ms = (time.perf_counter() - t0) * 1e3
    page.click("#batch-run")
    page.wait_for_selector("#batch-progress[data-state=finished]", state="attached", timeout=600_000)
    seconds = float(page.get_attribute("#batch-progress", "data-seconds"))
    workers = int(page.get_attribute("#batch-progress", "data-workers"))
    ctx.close()
    return {"seconds": seconds, "workers": workers, "ready_ms": ready_ms, "rate": n / seconds}


def browser(chromium: str, text: str, n: int, runs: int, batch_runs: int = 1) -> dict:
    from playwright.sync_api import sync_playwright

    sys.path.insert(0, str(REPO / "pycore"))
    from acidscape.boundary import api

    presets = json.loads((REPO / "site" / "presets.json").read_text())["presets"]
    want_pH = api.solve(next(p for p in presets if p["id"] == PRESET)["state"]["water"]["scenario"])["pH"]
    with tempfile.TemporaryDirectory() as tmp:
        bare = Path(tmp)
        shutil.copytree(DIST / "vendor" / "pyodide", bare / "vendor" / "pyodide")
        (bare / "index.html").write_text(BARE_HTML)
        (bare / "bare.js").write_text(BARE_JS)
        (bare / "samples.csv").write_text(text)
        site_server, site_url = serve(DIST)
        bare_server, bare_url = serve(bare)
        bare_ms, link_ms = [], []
        try:
            with sync_playwright() as p:
                b = p.chromium.launch(executable_path=chromium, args=["--disable-gpu"])
                for _ in range(runs):
                    ctx = b.new_context(service_workers="block")
                    page = ctx.new_page()
                    t0 = time.perf_counter()
                    page.goto(bare_url)
                    page.wait_for_selector("body[data-ready]", state="attached", timeout=120_000)
                    bare_ms.append((time.perf_counter() - t0) * 1e3)
                    ctx.close()
                    ctx = b.new_context(service_workers="block")
                    page = ctx.new_page()
                    t0 = time.perf_counter()
                    page.goto(f"{site_url}#preset={PRESET}")
                    page.wait_for_function(
                        "(w) => Math.abs(Number(document.getElementById('water-ph').dataset.value) - w) < 1e-9",
                        arg=want_pH, timeout=120_000, polling=20)
                    link_ms.append((time.perf_counter() - t0) * 1e3)
                    ctx.close()
                ones, manys = [], []
                for _ in range(batch_runs):  # alternated, medians reported
                    ones.append(page_batch(b, site_url, bare / "samples.csv", n, one_core=True))
                    manys.append(page_batch(b, site_url, bare / "samples.csv", n, one_core=False))
                one = sorted(ones, key=lambda r: r["seconds"])[len(ones) // 2]
                many = sorted(manys, key=lambda r: r["seconds"])[len(manys) // 2]
                b.close()
        finally:
            site_server.shutdown()
            bare_server.shutdown()
    bm, lm = statistics.median(bare_ms), statistics.median(link_ms)
    return {
        "browser_batch_rows": n,
        "browser_batch_rows_per_s_one_worker": round(one["rate"], 1),
        "browser_batch_seconds_one_worker": round(one["seconds"], 2),
        "browser_batch_rows_per_s": round(many["rate"], 1),
        "browser_batch_seconds": round(many["seconds"], 2),
        "browser_batch_workers": many["workers"],
        "browser_batch_runs": batch_runs,
        "helper_ready_ms": round(many["ready_ms"], 1),
        "bare_pyodide_boot_ms": round(bm, 1),
        "preset_link_first_result_ms": round(lm, 1),
        "preset_link_runs_ms": [round(v, 1) for v in link_ms],
        "preset_link_over_bare_boot": round(lm / bm, 3),
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Acidscape share/batch timings, printed as JSON.")
    parser.add_argument("--rows", type=int, default=10_000, help="samples in the batch (default 10000)")
    parser.add_argument("--runs", type=int, default=3, help="boots of each page (default 3)")
    parser.add_argument("--chromium", default="/usr/bin/chromium", help="Chromium executable")
    parser.add_argument("--no-browser", action="store_true", help="CPython figures only")
    parser.add_argument("--batch-runs", type=int, default=1, help="page batches of each kind (median; default 1)")
    args = parser.parse_args(argv)
    if not args.no_browser and not (DIST / "manifest.json").exists():
        print("bench_share.py: build first: python build_scripts/build.py", file=sys.stderr)
        return 1
    text = samples(args.rows)
    result = {
        "machine": f"{platform.machine()}, {platform.python_implementation()} {platform.python_version()}",
        "cores": os.cpu_count(),
        "load_average_1min_before": round(os.getloadavg()[0], 2),
        **cpython_rates(text, args.rows),
    }
    if not args.no_browser:
        result.update(browser(args.chromium, text, args.rows, args.runs, args.batch_runs))
    result["load_average_1min_after"] = round(os.getloadavg()[0], 2)
    print(json.dumps(result, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
