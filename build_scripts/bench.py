"""Timings of the core and the page (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench.py [--repeats N] [--chromium PATH]

- ``cpython_alpha_curve_1000pt_8protic_ms``: median over repeats of
  ``acidscape.science.speciation.alpha_curve`` for 1,000 pH values and an 8-step acid (pKa 1..15).
- In headless Chromium (fresh browser context each run, service workers blocked so every file
  comes over loopback, as on a first visit), alternating the two pages in the same run:
  ``page_first_result_ms``: navigation to the first drawn result (body[data-ready]);
  ``bare_pyodide_boot_ms``: navigation to the end of loadPyodide() on a page with nothing else
  (generated into a temp folder beside a copy of vendor/pyodide/);
  ``first_result_over_bare_boot``: the ratio of the two medians.
- ``warm_recompute_ms``: median of 20 pH edits, from the keystroke to the redrawn result.
- ``water6_recompute_ms``: median of 20 edits of a six-system water in the water section, from
  the input event to the drawn result (with the 120 ms debounce); ``water6_core_call_ms`` and
  ``water6_draw_ms`` split the work after the debounce into the core round trip and the redraw.

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
    from acidscape.science.speciation import alpha_curve

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
                water_figures = water_recompute_timings(page)
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
        **water_figures,
    }

# A six-system water for the water-section figure (invented for the benchmark, not a sample).
WATER_6 = {
    "temperature_C": 18, "activity": "davies",
    "systems": [
        {"id": "carbonate", "total": 2, "unit": "mmol/L"},
        {"id": "phosphate", "total": 0.05, "unit": "mmol/L"},
        {"id": "ammonium", "total": 0.1, "unit": "mmol/L"},
        {"id": "silicic", "total": 0.2, "unit": "mmol/L"},
        {"id": "boric", "total": 0.03, "unit": "mmol/L"},
        {"id": "hypochlorous", "total": 0.01, "unit": "mmol/L"},
    ],
    "ions": [{"id": "Na+", "total": 1.5, "unit": "mmol/L"}, {"id": "Ca+2", "total": 0.5, "unit": "mmol/L"},
             {"id": "Cl-", "total": 0.8, "unit": "mmol/L"}],
}

# One edit of the first system's total, timed inside the page: from the input event to the
# section's data-drawn change (the result drawn), and to the next animation frame after it.
WATER_EDIT_JS = """async (text) => {
  const section = document.querySelector('#water-section');
  const input = document.querySelector('#water-system-0-total');
  const before = section.dataset.drawn;
  const drawn = new Promise((resolve) => {
    const watch = new MutationObserver(() => {
      if (section.dataset.drawn !== before) { watch.disconnect(); resolve(performance.now()); }
    });
    watch.observe(section, {attributes: true, attributeFilter: ['data-drawn']});
  });
  const t0 = performance.now();
  input.value = text;
  input.dispatchEvent(new Event('input', {bubbles: true}));
  const t1 = await drawn;
  await new Promise((resolve) => requestAnimationFrame(() => resolve()));
  return [t1 - t0, performance.now() - t0];
}"""


def water_recompute_timings(page, edits: int = 20) -> dict:
    """Median time from an edit of a six-system water to its drawn result [ms].

    The page must be booted. Between edits the page is left idle (1.5 s) so the sections
    that follow the water (treatment) finish their own work first.
    """
    page.evaluate(
        "(sc) => import('./state.js').then((m) => m.applyState({v: 1, water: {scenario: sc, display: {unit: 'mmol/L'}}}))",
        WATER_6,
    )
    page.wait_for_timeout(2000)
    page.evaluate("() => performance.clearMeasures()")
    drawn, framed = [], []
    for i in range(edits):
        t_drawn, t_frame = page.evaluate(WATER_EDIT_JS, f"{2 + 0.05 * (i + 1):.2f}")
        drawn.append(t_drawn)
        framed.append(t_frame)
        page.wait_for_timeout(1500)
    split = page.evaluate(
        "() => ['water:core', 'water:draw'].map((n) => performance.getEntriesByName(n).map((e) => e.duration))"
    )
    return {
        "water6_core_call_ms": round(statistics.median(split[0][-edits:]), 1),
        "water6_draw_ms": round(statistics.median(split[1][-edits:]), 1),
        "water6_recompute_ms": round(statistics.median(drawn), 1),
        "water6_recompute_to_frame_ms": round(statistics.median(framed), 1),
        "water6_recompute_runs_ms": [round(v, 1) for v in drawn],
        "water6_recompute_note": "6 systems + 3 ions, Davies, 281-point curves; from the input event to "
                                 "the drawn result (table, both plots), including the 120 ms input debounce",
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
