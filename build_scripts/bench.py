"""Timings of the core and the page (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench.py [--repeats N] [--chromium PATH]

- ``cpython_alpha_curve_1000pt_8protic_ms``: median over repeats of
  ``acidscape.speciation.alpha_curve`` for 1,000 pH values and an 8-step acid (pKa 1..15).
- In headless Chromium (fresh browser context each run, service workers blocked so every file
  comes over loopback, as on a first visit), alternating the two pages in the same run:
  ``page_first_result_ms``: navigation to the first drawn result (body[data-ready]);
  ``bare_pyodide_boot_ms``: navigation to the end of loadPyodide() on a page with nothing else
  (generated into a temp folder beside a copy of vendor/pyodide/);
  ``first_result_over_bare_boot``: the ratio of the two medians.
- ``warm_recompute_ms``: median of 20 pH edits, from the keystroke to the redrawn result.

Needs a built dist/ (python build_scripts/build.py) and /usr/bin/chromium.
"""

from __future__ import annotations

import argparse
import json
import platform
import shutil
import statistics
import sys
import tempfile
import threading
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
DIST = REPO / "dist"
sys.path.insert(0, str(REPO / "build_scripts"))
sys.path.insert(0, str(REPO / "pycore"))

from serve import make_server  # noqa: E402

BARE_HTML = """<!doctype html>
<html><head><meta charset="utf-8"><title>bare</title>
<script type="module" src="bare.js"></script></head><body></body></html>
"""
BARE_JS = """import { loadPyodide } from "./vendor/pyodide/pyodide.mjs";
await loadPyodide({ indexURL: new URL("./vendor/pyodide/", import.meta.url).href });
document.body.dataset.ready = "true";
"""


def cpython_alpha_curve(repeats: int) -> float:
    from acidscape.speciation import alpha_curve

    pKa = [1.0 + 2.0 * i for i in range(8)]  # 1, 3, ..., 15: an 8-step acid
    grid = [14.0 * k / 999 for k in range(1000)]
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        alpha_curve(grid, pKa)
        times.append(time.perf_counter() - t0)
    return statistics.median(times) * 1e3


def serve(folder: Path):
    server = make_server(folder, 0, quiet=True)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    host, port = server.server_address[:2]
    return server, f"http://{host}:{port}/"


def browser_timings(chromium: str, runs: int) -> dict:
    from playwright.sync_api import sync_playwright

    with tempfile.TemporaryDirectory() as tmp:
        bare = Path(tmp)
        shutil.copytree(DIST / "vendor" / "pyodide", bare / "vendor" / "pyodide")
        (bare / "index.html").write_text(BARE_HTML)
        (bare / "bare.js").write_text(BARE_JS)
        site_server, site_url = serve(DIST)
        bare_server, bare_url = serve(bare)
        page_ms, bare_ms, recompute_ms = [], [], []
        try:
            with sync_playwright() as p:
                browser = p.chromium.launch(executable_path=chromium, args=["--disable-gpu"])

                def time_to_ready(url: str) -> float:
                    context = browser.new_context(service_workers="block")
                    page = context.new_page()
                    t0 = time.perf_counter()
                    page.goto(url)
                    page.wait_for_selector("body[data-ready]", state="attached", timeout=120_000)
                    elapsed = (time.perf_counter() - t0) * 1e3
                    return elapsed, context, page

                for _ in range(runs):  # alternate so both see the same machine load
                    ms, context, _page = time_to_ready(bare_url)
                    bare_ms.append(ms)
                    context.close()
                    ms, context, page = time_to_ready(site_url)
                    page_ms.append(ms)
                    context.close()

                _, context, page = time_to_ready(site_url)
                for i in range(20):
                    before = int(page.get_attribute("body", "data-drawn"))
                    text = f"{5 + 0.1 * (i + 1):.1f}"
                    t0 = time.perf_counter()
                    page.fill("#ph-input", text)
                    page.wait_for_function("(n) => Number(document.body.dataset.drawn) > n", arg=before)
                    recompute_ms.append((time.perf_counter() - t0) * 1e3)
                context.close()
                browser.close()
        finally:
            site_server.shutdown()
            bare_server.shutdown()
    page_med, bare_med = statistics.median(page_ms), statistics.median(bare_ms)
    return {
        "page_first_result_ms": round(page_med, 1),
        "page_first_result_runs_ms": [round(v, 1) for v in page_ms],
        "bare_pyodide_boot_ms": round(bare_med, 1),
        "bare_pyodide_boot_runs_ms": [round(v, 1) for v in bare_ms],
        "first_result_over_bare_boot": round(page_med / bare_med, 3),
        "warm_recompute_ms": round(statistics.median(recompute_ms), 1),
        "warm_recompute_note": "includes the page's input debounce (120 ms) and the plot/table redraw",
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Acidscape timings, printed as JSON.")
    parser.add_argument("--repeats", type=int, default=21, help="CPython repeats (default 21)")
    parser.add_argument("--runs", type=int, default=5, help="page/bare boots each (default 5)")
    parser.add_argument("--chromium", default="/usr/bin/chromium", help="Chromium executable")
    args = parser.parse_args(argv)
    if not (DIST / "manifest.json").exists():
        print("bench.py: build first: python build_scripts/build.py", file=sys.stderr)
        return 1
    result = {
        "machine": f"{platform.machine()}, {platform.python_implementation()} {platform.python_version()}",
        "cpython_alpha_curve_1000pt_8protic_ms": round(cpython_alpha_curve(args.repeats), 3),
    }
    result.update(browser_timings(args.chromium, args.runs))
    print(json.dumps(result, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
