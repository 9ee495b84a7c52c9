"""Timings of the core and the page (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench.py [--repeats N] [--chromium PATH]

- ``cpython_alpha_curve_1000pt_8protic_ms``: median over repeats of
  ``acidscape.science.speciation.alpha_curve`` for 1,000 pH values and an 8-step acid (pKa 1..15).
- In headless Chromium, alternating the pages in the same run so all see the same load:
  first visit (fresh browser context, service workers blocked, so every file, the Python
  snapshot included, comes over loopback):
  ``page_first_result_ms``: navigation to the page's body[data-ready] (the page shows what it
  was opened with); ``page_first_drawn_ms``: navigation to the first drawn result of the
  species section (body[data-drawn]);
  ``bare_pyodide_boot_ms``: navigation to the end of loadPyodide() on a page with nothing else
  (generated into a temp folder beside a copy of vendor/pyodide/);
  ``first_result_over_bare_boot`` / ``first_drawn_over_bare_boot``: ratios of the medians;
  ``preset_link_first_result_ms``: the same from ``#preset=<first example>``, and
  ``preset_link_first_drawn_ms`` to that example's water drawn (#water-section[data-drawn]);
  ``booted_from_snapshot`` and ``boot_stages_median_ms``: how the worker started and when
  (page clock) it had the manifest, the snapshot, the runtime, the wheel and was ready.
  Returning visit (``warm_*``): a new tab in a context whose service worker holds the site.
  ``page_headline_ms`` / ``preset_link_headline_ms``: navigation to the water's headline
  drawn (pH, alkalinity, indices, tables: the first part of its answer), and
  ``page_water_plotted_ms``: to the water's plots drawn (#water-section[data-drawn]), each with
  its ratio over the bare boot.
- ``warm_recompute_ms``: median of 20 pH edits, from the keystroke to the redrawn result.
- ``water6_recompute_ms``: median of 20 edits of a six-system water in the water section, from
  the input event to the drawn result, plots included (``water6_headline_ms``: to the headline and
  tables drawn, the first part of the one request, by the time of water.js's mark;
  ``_to_frame``: to the animation frame that shows it, water.js's "water:headline-frame" mark);
  ``water6_headline_breakdown_ms`` splits the headline's time into its stages; ``water6_core_call_ms`` and ``water6_draw_ms`` split the work into the core round
  trip and the redraw (``water6_core_headline_ms`` / ``water6_draw_headline_ms`` for the first
  part); ``water6_worker_calls_per_edit``: requests sent to the worker per edit.

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


# The water's headline has been drawn (water.js marks it after the first part of its answer).
HEADLINE_JS = "() => performance.getEntriesByName('water:headline').length > 0"

BOOT_INFO = """() => import('./py.js').then((m) => m.sharedPython().boot).then((b) => {
  const offset = b.origin - performance.timeOrigin;
  const start = performance.getEntriesByName('py:worker-start')[0];
  const steps = Object.fromEntries(Object.entries(b.ms).map(([k, v]) => [k, v + offset]));
  return {snapshot: b.snapshot, worker_created: start ? start.startTime : null, worker_started: offset, ...steps};
})"""


def show_job(page, name: str) -> None:
    """Bring a job of the workbench into view (site/workbench.js), if the page has a switcher."""
    tab = page.locator(f"#job-tab-{name}")
    if tab.count():
        tab.click()
        page.wait_for_function("(n) => document.body.dataset.job === n", arg=name, timeout=60_000)
    page.wait_for_function("() => document.body.dataset.pending === '0'", timeout=120_000)


def first_preset(dist: Path) -> str | None:
    try:
        presets = json.loads((dist / "presets.json").read_text())["presets"]
    except (OSError, KeyError, ValueError):
        return None
    return presets[0]["id"] if presets else None


def _median(values: list[float]) -> float | None:
    values = [v for v in values if v is not None]
    return round(statistics.median(values), 1) if values else None


def _spread(values: list[float]) -> list[float]:
    return [round(v, 1) for v in values]


def browser_timings(chromium: str, runs: int) -> dict:
    from playwright.sync_api import sync_playwright

    preset = first_preset(DIST)
    with tempfile.TemporaryDirectory() as tmp:
        bare = Path(tmp)
        shutil.copytree(DIST / "vendor" / "pyodide", bare / "vendor" / "pyodide")
        (bare / "index.html").write_text(BARE_HTML)
        (bare / "bare.js").write_text(BARE_JS)
        site_server, site_url = serve(DIST)
        bare_server, bare_url = serve(bare)
        page_ms, drawn_ms, bare_ms, preset_ms, preset_drawn_ms, boots = [], [], [], [], [], []
        warm_ms, warm_drawn_ms, warm_bare_ms, warm_boots = [], [], [], []
        recompute_ms = []
        headline_ms, plotted_ms, preset_headline_ms = [], [], []
        try:
            with sync_playwright() as p:
                browser = p.chromium.launch(executable_path=chromium, args=["--disable-gpu"])

                def time_to_ready(url: str, context=None, drawn: list | None = None, first="body[data-drawn]",
                                  headline: list | None = None, plotted: list | None = None):
                    context = context or browser.new_context(service_workers="block")
                    page = context.new_page()
                    t0 = time.perf_counter()
                    page.goto(url)
                    if headline is not None:  # the water's headline (performance mark "water:headline")
                        page.wait_for_function(HEADLINE_JS, timeout=120_000, polling="raf")
                        headline.append((time.perf_counter() - t0) * 1e3)
                    if drawn is not None:  # the first drawn result (``first``)
                        page.wait_for_selector(first, state="attached", timeout=120_000)
                        drawn.append((time.perf_counter() - t0) * 1e3)
                    if plotted is not None:  # the water's plots
                        page.wait_for_selector("#water-section[data-drawn]", state="attached", timeout=120_000)
                        plotted.append((time.perf_counter() - t0) * 1e3)
                    page.wait_for_selector("body[data-ready]", state="attached", timeout=120_000)
                    elapsed = (time.perf_counter() - t0) * 1e3
                    return elapsed, context, page

                # First visit: fresh context, empty cache, no service worker; every file
                # (the snapshot included) comes over loopback. The pages alternate so all
                # see the same machine load.
                for _ in range(runs):
                    ms, context, _page = time_to_ready(bare_url)
                    bare_ms.append(ms)
                    context.close()
                    ms, context, page = time_to_ready(site_url, drawn=drawn_ms, headline=headline_ms,
                                                      plotted=plotted_ms)
                    page_ms.append(ms)
                    boots.append(page.evaluate(BOOT_INFO))
                    context.close()
                    if preset:
                        ms, context, _page = time_to_ready(f"{site_url}#preset={preset}", drawn=preset_drawn_ms,
                                                           first="#water-section[data-drawn]",
                                                           headline=preset_headline_ms)
                        preset_ms.append(ms)
                        context.close()

                # Returning visit: one context whose service worker has cached the site; each
                # run opens a new tab. The bare page's second visit uses the HTTP cache.
                site_context = browser.new_context()
                _, _, page = time_to_ready(site_url, site_context)
                page.evaluate("() => navigator.serviceWorker.ready")
                page.wait_for_function("() => Boolean(navigator.serviceWorker.controller)", timeout=60_000)
                page.wait_for_function(
                    "() => caches.keys().then((k) => k.filter((n) => n.startsWith('acidscape-')).length >= 3)",
                    timeout=120_000)
                page.close()
                bare_context = browser.new_context(service_workers="block")
                bare_context.new_page().goto(bare_url)
                for _ in range(runs):
                    ms, _, page = time_to_ready(bare_url, bare_context)
                    warm_bare_ms.append(ms)
                    page.close()
                    ms, _, page = time_to_ready(site_url, site_context, drawn=warm_drawn_ms)
                    warm_ms.append(ms)
                    warm_boots.append(page.evaluate(BOOT_INFO))
                    page.close()
                bare_context.close()
                site_context.close()

                _, context, page = time_to_ready(site_url)
                show_job(page, "explorer")  # the one-acid explorer is one job of the workbench
                for i in range(20):
                    before = int(page.get_attribute("body", "data-drawn"))
                    text = f"{5 + 0.1 * (i + 1):.1f}"
                    t0 = time.perf_counter()
                    page.fill("#ph-input", text)
                    page.wait_for_function("(n) => Number(document.body.dataset.drawn) > n", arg=before)
                    recompute_ms.append((time.perf_counter() - t0) * 1e3)
                show_job(page, "water")
                water_figures = water_recompute_timings(page)
                context.close()
                browser.close()
        finally:
            site_server.shutdown()
            bare_server.shutdown()
    page_med, bare_med = statistics.median(page_ms), statistics.median(bare_ms)
    warm_med, warm_bare_med = statistics.median(warm_ms), statistics.median(warm_bare_ms)
    stages = sorted({k for b in boots for k in b if k != "snapshot"}, key=lambda k: _median([b.get(k) for b in boots]) or 0)
    figures = {
        "page_first_result_ms": round(page_med, 1),
        "page_first_result_runs_ms": _spread(page_ms),
        "bare_pyodide_boot_ms": round(bare_med, 1),
        "bare_pyodide_boot_runs_ms": _spread(bare_ms),
        "first_result_over_bare_boot": round(page_med / bare_med, 3),
        "first_visit_note": "fresh context, empty cache, service workers blocked: every file (the Python "
                            "snapshot included) is downloaded over loopback; page = navigation to body[data-ready]",
        "page_first_drawn_ms": _median(drawn_ms),
        "page_first_drawn_runs_ms": _spread([v for v in drawn_ms if v is not None]),
        "first_drawn_over_bare_boot": round(_median(drawn_ms) / bare_med, 3) if _median(drawn_ms) else None,
        "booted_from_snapshot": [b.get("snapshot") for b in boots],
        "boot_stages_median_ms": {k: _median([b.get(k) for b in boots]) for k in stages},
        "warm_first_result_ms": round(warm_med, 1),
        "warm_first_result_runs_ms": _spread(warm_ms),
        "warm_bare_pyodide_boot_ms": round(warm_bare_med, 1),
        "warm_bare_pyodide_boot_runs_ms": _spread(warm_bare_ms),
        "warm_first_result_over_bare_boot": round(warm_med / bare_med, 3),
        "warm_first_drawn_ms": _median(warm_drawn_ms),
        "warm_first_drawn_runs_ms": _spread(warm_drawn_ms),
        "warm_note": "a returning visit: new tab in a context whose service worker holds the site; the bare page's "
                     "return visit uses the HTTP cache; ratio over the first-visit bare boot",
        "warm_boot_stages_median_ms": {k: _median([b.get(k) for b in warm_boots]) for k in stages},
        "warm_recompute_ms": round(statistics.median(recompute_ms), 1),
        "warm_recompute_note": "one-acid explorer: from the keystroke to the redrawn table and plots",
        "page_headline_ms": _median(headline_ms),
        "page_headline_runs_ms": _spread(headline_ms),
        "page_headline_over_bare_boot": round(_median(headline_ms) / bare_med, 3) if headline_ms else None,
        "page_water_plotted_ms": _median(plotted_ms),
        "page_water_plotted_runs_ms": _spread(plotted_ms),
        "page_water_plotted_over_bare_boot": round(_median(plotted_ms) / bare_med, 3) if plotted_ms else None,
        **water_figures,
    }
    if preset_ms:
        preset_med = statistics.median(preset_ms)
        figures.update({
            "preset_link_first_result_ms": round(preset_med, 1),
            "preset_link_runs_ms": _spread(preset_ms),
            "preset_link_over_bare_boot": round(preset_med / bare_med, 3),
            "preset_link_first_drawn_ms": _median(preset_drawn_ms),
            "preset_link_first_drawn_runs_ms": _spread(preset_drawn_ms),
            "preset_link_first_drawn_over_bare_boot": round(_median(preset_drawn_ms) / bare_med, 3),
            "preset_link_headline_ms": _median(preset_headline_ms),
            "preset_link_headline_over_bare_boot": round(_median(preset_headline_ms) / bare_med, 3)
            if preset_headline_ms else None,
            "preset_link_note": f"first visit of #preset={preset}: navigation to body[data-ready] (every section "
                                "computed), and to the example's water drawn (#water-section[data-drawn])",
        })
    return figures

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
# headline drawn (performance mark "water:headline", the first part of the answer) and to the
# section's data-drawn change (the plots drawn), each also to the next animation frame after it.
WATER_EDIT_JS = """async (text) => {
  const section = document.querySelector('#water-section');
  const input = document.querySelector('#water-system-0-total');
  const before = section.dataset.drawn;
  const marks = performance.getEntriesByName('water:headline').length;
  const frame = () => new Promise((resolve) => requestAnimationFrame(() => resolve(performance.now())));
  // The headline's time is the mark's own (written right after the headline and tables), and
  // its frame the "water:headline-frame" mark water.js makes in the next animation frame: a
  // PerformanceObserver is told of a mark only when the page is idle, so the time of its
  // callback is no measure of when the headline was drawn.
  const frames = performance.getEntriesByName('water:headline-frame').length;
  const headline = new Promise((resolve) => {
    const seen = () => {
      const mark = performance.getEntriesByName('water:headline')[marks];
      const painted = performance.getEntriesByName('water:headline-frame').slice(frames).find((e) => mark && e.startTime >= mark.startTime);
      return mark && painted ? [mark.startTime, painted.startTime] : null;
    };
    const watch = new PerformanceObserver(() => {
      const both = seen();
      if (both) { watch.disconnect(); resolve(both); }
    });
    watch.observe({type: 'mark', buffered: false});
  });
  const drawn = new Promise((resolve) => {
    const watch = new MutationObserver(() => {
      if (section.dataset.drawn !== before) { watch.disconnect(); resolve(performance.now()); }
    });
    watch.observe(section, {attributes: true, attributeFilter: ['data-drawn']});
  }).then(async (t) => [t, await frame()]);
  const calls = window.__acidscapeCalls ? window.__acidscapeCalls.total : null;
  const t0 = performance.now();
  input.value = text;
  input.dispatchEvent(new Event('input', {bubbles: true}));
  const [[h1, h2], [d1, d2]] = await Promise.all([headline, drawn]);  // h1, h2: page clock
  const sent = window.__acidscapeCalls ? window.__acidscapeCalls.total - calls : null;
  return [d1 - t0, d2 - t0, h1 - t0, h2 - t0, sent];
}"""


def water_recompute_timings(page, edits: int = 20) -> dict:
    """Median time from an edit of a six-system water to its drawn result [ms].

    The page must be booted. Between edits the page is left idle (1.5 s) so the sections
    that follow the water finish their own work first.
    """
    page.evaluate(
        "(sc) => import('./state.js').then((m) => m.applyState({v: 1, water: {scenario: sc, display: {unit: 'mmol/L'}}}))",
        WATER_6,
    )
    page.wait_for_timeout(2000)
    page.evaluate("() => performance.clearMeasures()")
    drawn, framed, headline, headline_framed, calls = [], [], [], [], []
    for i in range(edits):
        t_drawn, t_frame, t_head, t_head_frame, sent = page.evaluate(WATER_EDIT_JS, f"{2 + 0.05 * (i + 1):.2f}")
        drawn.append(t_drawn)
        framed.append(t_frame)
        headline.append(t_head)
        headline_framed.append(t_head_frame)
        calls.append(sent)
        page.wait_for_timeout(1500)
    names = ["water:core", "water:draw", "water:core-curves", "water:draw-headline", "water:listeners"]
    split = page.evaluate("(names) => names.map((n) => performance.getEntriesByName(n).map((e) => e.duration))", names)
    med = lambda values: round(statistics.median(values[-edits:]), 1) if values else None  # noqa: E731
    # Where an edit's time to its headline goes: input event to request (read the inputs),
    # request to first part on the page (the worker: Python and the message both ways), the
    # headline's drawing, and the wait for the frame that shows it.
    before_request = [h - c - d for h, c, d in zip(headline, split[0][-edits:], split[3][-edits:])]
    return {
        "water6_core_call_ms": med(split[2]),
        "water6_draw_ms": med(split[1]),
        "water6_core_headline_ms": med(split[0]),
        "water6_draw_headline_ms": med(split[3]),
        "water6_headline_breakdown_ms": {
            "input_to_request": round(statistics.median(before_request), 1),
            "request_to_first_part": med(split[0]),
            "draw_headline": med(split[3]),
            "to_frame": round(statistics.median([f - h for f, h in zip(headline_framed, headline)]), 1),
            "jobs_told_after_frame": med(split[4]),
        },
        "water6_recompute_ms": round(statistics.median(drawn), 1),
        "water6_recompute_to_frame_ms": round(statistics.median(framed), 1),
        "water6_recompute_runs_ms": [round(v, 1) for v in drawn],
        "water6_headline_ms": round(statistics.median(headline), 1),
        "water6_headline_to_frame_ms": round(statistics.median(headline_framed), 1),
        "water6_headline_runs_ms": [round(v, 1) for v in headline],
        "water6_worker_calls_per_edit": calls,
        "water6_recompute_note": "6 systems + 3 ions, Davies, 281-point curves, the water job in view; from the "
                                 "input event to the drawn result, plots included (water6_headline_ms: to the "
                                 "headline and tables, the first part of the one request); no input debounce "
                                 "(the edit is computed at the next frame)",
    }


def main(argv: list[str] | None = None) -> int:
    global DIST
    parser = argparse.ArgumentParser(description="Acidscape timings, printed as JSON.")
    parser.add_argument("--repeats", type=int, default=21, help="CPython repeats (default 21)")
    parser.add_argument("--runs", type=int, default=5, help="page/bare boots each (default 5)")
    parser.add_argument("--chromium", default="/usr/bin/chromium", help="Chromium executable")
    parser.add_argument("--dist", type=Path, default=DIST, help="built site to measure (default: dist/)")
    args = parser.parse_args(argv)
    DIST = args.dist.resolve()
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
