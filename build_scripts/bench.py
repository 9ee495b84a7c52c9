"""Timings of the core and the page (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench.py [--runs N] [--repeats N] [--dist DIR] [--chromium PATH]

- ``cpython_alpha_curve_1000pt_8protic_ms``: median over repeats of
  ``acidscape.science.speciation.alpha_curve`` for 1,000 pH values and an 8-step acid (pKa 1..15).

Page boots, in headless Chromium. Every boot time is the page's own clock: milliseconds from
the start of its navigation (``performance.timeOrigin``) to the event, read inside the page
(performance marks, and attribute changes recorded by a MutationObserver installed before the
page's scripts run), so each event is timed on its own (a later one is never held up by the wait
for an earlier one) and the bare boot is timed the same way. Medians over ``--runs``; the
``*_runs_ms`` lists hold every run. The pages alternate in each round, so all see the same load.

First visit (cold cache: a fresh browser context, empty cache, service workers blocked, so
every file, the Python snapshot included, comes over loopback):
  ``bare_pyodide_boot_ms``: to the end of ``loadPyodide()`` (performance mark "bare:ready") on
  a page with nothing else (generated into a temp folder beside a copy of vendor/pyodide/);
  ``page_first_drawn_ms``: to the first result drawn in the page's first view, the water job:
  its headline and tables (water.js's mark "water:headline", the first part of its answer);
  ``page_headline_ms``: the same event (kept under its own name);
  ``page_first_plotted_ms``: to the water's plots drawn (#water-section[data-drawn] set): the
  first plotted result, the figure issue 10 ("Speed") sets its target on;
  ``page_water_plotted_ms``: the same event (kept under its own name);
  ``page_first_result_ms``: to body[data-ready]: every section mounted and what the URL opened
  applied (hidden jobs compute when shown);
  ``*_over_bare_boot``: each median over the median bare boot (``first_result_``,
  ``first_drawn_``, ``first_plotted_``, ``page_headline_``, ``page_water_plotted_``);
  ``page_calls_at_ready``: the requests the page sent the worker by then (last run; py.js
  window.__acidscapeCalls), to see that hidden jobs asked nothing;
  ``preset_link_*``: the same from ``#preset=<first example>`` (``first_result_ms``,
  ``first_drawn_ms`` = headline, ``headline_ms``, ``first_plotted_ms``, with their ratios;
  ``preset_link_over_bare_boot`` is the first result's);
  ``booted_from_snapshot`` and ``boot_stages_median_ms``: how the worker started and when (page
  clock) it was created, had the manifest, the snapshot, the runtime, the wheel and was ready;
  ``after_worker_ready_ms``: for the cold and warm visits of the page and of the link, the
  median time from the worker's "ready" to each event (``ready``, ``headline``,
  ``water_plotted``): the page's own share of the boot, the part its boot order decides.
Returning visit (warm: a new tab in a context whose service worker holds the site; the bare
page's return visit uses the HTTP cache): ``warm_first_result_ms``, ``warm_first_drawn_ms``
(headline), ``warm_first_plotted_ms``, ``warm_preset_link_first_plotted_ms``,
``warm_bare_pyodide_boot_ms``; ``warm_*_over_bare_boot`` are over the FIRST-VISIT bare boot (as
before), ``warm_*_over_warm_bare_boot`` over the warm bare boot (like with like).

Edits, timed after the boot:
- ``warm_recompute_ms``: median of 20 pH edits in the one-acid explorer, from the keystroke to
  the redrawn result.
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
performance.mark("bare:ready");
document.body.dataset.ready = "true";
"""

# Installed before any script of the page runs: the page clock of the first time body gets
# data-ready, body gets data-drawn (the one-acid explorer) and #water-section gets data-drawn.
EVENTS_INIT_JS = """(() => {
  const times = (window.__benchTimes = {});
  const seen = (key) => { if (!(key in times)) times[key] = performance.now(); };
  new MutationObserver((records) => {
    for (const r of records) {
      const el = r.target;
      if (el === document.body) seen(r.attributeName === 'data-ready' ? 'ready' : 'explorer_drawn');
      else if (el.id === 'water-section') seen('water_plotted');
    }
  }).observe(document, {subtree: true, attributes: true, attributeFilter: ['data-ready', 'data-drawn']});
})();"""

# Every event of a boot on the page clock (ms from navigation start); null if it did not happen.
EVENTS_JS = """() => {
  const t = window.__benchTimes || {};
  const mark = (name) => { const e = performance.getEntriesByName(name)[0]; return e ? e.startTime : null; };
  return {ready: t.ready ?? null, water_plotted: t.water_plotted ?? null, explorer_drawn: t.explorer_drawn ?? null,
          headline: mark('water:headline'), bare: mark('bare:ready'),
          calls: window.__acidscapeCalls ? JSON.parse(JSON.stringify(window.__acidscapeCalls.byMethod)) : null};
}"""


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
    if name == "explorer":  # a hidden job computes when shown: its first result
        page.wait_for_selector("body[data-drawn]", state="attached", timeout=120_000)


def first_preset(dist: Path) -> str | None:
    try:
        presets = json.loads((dist / "presets.json").read_text())["presets"]
    except (OSError, KeyError, ValueError):
        return None
    return presets[0]["id"] if presets else None


def _median(values: list[float]) -> float | None:
    values = [v for v in values if v is not None]
    return round(statistics.median(values), 1) if values else None


def _spread(values: list[float | None]) -> list[float | None]:
    return [None if v is None else round(v, 1) for v in values]


def _ratio(value: float | None, base: float | None) -> float | None:
    return round(value / base, 3) if value and base else None


def browser_timings(chromium: str, runs: int) -> dict:
    from playwright.sync_api import sync_playwright

    preset = first_preset(DIST)
    events = ("ready", "headline", "water_plotted")
    with tempfile.TemporaryDirectory() as tmp:
        bare = Path(tmp)
        shutil.copytree(DIST / "vendor" / "pyodide", bare / "vendor" / "pyodide")
        (bare / "index.html").write_text(BARE_HTML)
        (bare / "bare.js").write_text(BARE_JS)
        site_server, site_url = serve(DIST)
        bare_server, bare_url = serve(bare)
        bare_ms, warm_bare_ms, boots, warm_boots, recompute_ms = [], [], [], [], []
        cold = {e: [] for e in events}
        cold_preset = {e: [] for e in events}
        warm = {e: [] for e in events}
        warm_preset = {e: [] for e in events}
        calls_at_ready = None
        try:
            with sync_playwright() as p:
                browser = p.chromium.launch(executable_path=chromium, args=["--disable-gpu"])

                def new_context(**options):
                    context = browser.new_context(**options)
                    context.add_init_script(EVENTS_INIT_JS)
                    return context

                def visit(url: str, context=None, site: bool = True):
                    """Open url in a new tab; the page clock of its events once it is ready."""
                    context = context or new_context(service_workers="block")
                    page = context.new_page()
                    page.goto(url)
                    page.wait_for_selector("body[data-ready]", state="attached", timeout=120_000)
                    if site:
                        page.wait_for_selector("#water-section[data-drawn]", state="attached", timeout=120_000)
                        page.wait_for_function("() => performance.getEntriesByName('water:headline').length > 0",
                                               timeout=120_000)
                    return page.evaluate(EVENTS_JS), context, page

                def keep(into: dict, times: dict, page) -> dict:
                    """Keep a visit's events, and each one's time after the worker was ready."""
                    boot = page.evaluate(BOOT_INFO)
                    for e in events:
                        into[e].append(times[e])
                        ready = boot.get("ready")
                        into.setdefault(f"{e}_after_ready", []).append(
                            None if times[e] is None or ready is None else times[e] - ready)
                    return boot

                # First visit: fresh context, empty cache, no service worker; every file (the
                # snapshot included) comes over loopback. The pages alternate so all see the
                # same machine load.
                for _ in range(runs):
                    times, context, _page = visit(bare_url, site=False)
                    bare_ms.append(times["bare"])
                    context.close()
                    times, context, page = visit(site_url)
                    boots.append(keep(cold, times, page))
                    calls_at_ready = times["calls"]
                    context.close()
                    if preset:
                        times, context, page = visit(f"{site_url}#preset={preset}")
                        keep(cold_preset, times, page)
                        context.close()

                # Returning visit: one context whose service worker has cached the site; each
                # run opens a new tab. The bare page's second visit uses the HTTP cache.
                site_context = new_context()
                _, _, page = visit(site_url, site_context)
                page.evaluate("() => navigator.serviceWorker.ready")
                page.wait_for_function("() => Boolean(navigator.serviceWorker.controller)", timeout=60_000)
                page.wait_for_function(
                    "() => caches.keys().then((k) => k.filter((n) => n.startsWith('acidscape-')).length >= 3)",
                    timeout=120_000)
                page.close()
                bare_context = new_context(service_workers="block")
                bare_context.new_page().goto(bare_url)
                for _ in range(runs):
                    times, _, page = visit(bare_url, bare_context, site=False)
                    warm_bare_ms.append(times["bare"])
                    page.close()
                    times, _, page = visit(site_url, site_context)
                    warm_boots.append(keep(warm, times, page))
                    page.close()
                    if preset:
                        times, _, page = visit(f"{site_url}#preset={preset}", site_context)
                        keep(warm_preset, times, page)
                        page.close()
                bare_context.close()
                site_context.close()

                _, context, page = visit(site_url)
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
    bare_med, warm_bare_med = _median(bare_ms), _median(warm_bare_ms)
    med = {name: {e: _median(v) for e, v in group.items()}  # also "<event>_after_ready"
           for name, group in (("cold", cold), ("preset", cold_preset), ("warm", warm), ("warm_preset", warm_preset))}
    stages = sorted({k for b in boots for k in b if k != "snapshot"}, key=lambda k: _median([b.get(k) for b in boots]) or 0)
    c, w = med["cold"], med["warm"]
    figures = {
        "clock_note": "page clock: ms from navigation start (performance.timeOrigin) to the event, read in the page",
        "bare_pyodide_boot_ms": bare_med,
        "bare_pyodide_boot_runs_ms": _spread(bare_ms),
        "page_first_drawn_ms": c["headline"],
        "page_first_drawn_runs_ms": _spread(cold["headline"]),
        "first_drawn_over_bare_boot": _ratio(c["headline"], bare_med),
        "page_headline_ms": c["headline"],
        "page_headline_runs_ms": _spread(cold["headline"]),
        "page_headline_over_bare_boot": _ratio(c["headline"], bare_med),
        "page_first_plotted_ms": c["water_plotted"],
        "page_first_plotted_runs_ms": _spread(cold["water_plotted"]),
        "first_plotted_over_bare_boot": _ratio(c["water_plotted"], bare_med),
        "page_water_plotted_ms": c["water_plotted"],
        "page_water_plotted_runs_ms": _spread(cold["water_plotted"]),
        "page_water_plotted_over_bare_boot": _ratio(c["water_plotted"], bare_med),
        "page_first_result_ms": c["ready"],
        "page_first_result_runs_ms": _spread(cold["ready"]),
        "first_result_over_bare_boot": _ratio(c["ready"], bare_med),
        "page_calls_at_ready": calls_at_ready,
        "first_visit_note": "fresh context, empty cache, service workers blocked: every file (the Python "
                            "snapshot included) is downloaded over loopback; first_drawn = the water's headline, "
                            "first_plotted = its plots, first_result = body[data-ready]",
        "after_worker_ready_ms": {
            name: {e: med[name].get(f"{e}_after_ready") for e in events}
            for name in ("cold", "preset", "warm", "warm_preset")},
        "after_worker_ready_note": "per visit, the event's page-clock time minus the worker's ready (its boot "
                                   "stage 'ready'), medians: what the page does once Python is up, less "
                                   "sensitive to the machine's load than the boot itself",
        "booted_from_snapshot": [b.get("snapshot") for b in boots],
        "boot_stages_median_ms": {k: _median([b.get(k) for b in boots]) for k in stages},
        "warm_bare_pyodide_boot_ms": warm_bare_med,
        "warm_bare_pyodide_boot_runs_ms": _spread(warm_bare_ms),
        "warm_first_drawn_ms": w["headline"],
        "warm_first_drawn_runs_ms": _spread(warm["headline"]),
        "warm_first_plotted_ms": w["water_plotted"],
        "warm_first_plotted_runs_ms": _spread(warm["water_plotted"]),
        "warm_first_result_ms": w["ready"],
        "warm_first_result_runs_ms": _spread(warm["ready"]),
        "warm_first_result_over_bare_boot": _ratio(w["ready"], bare_med),
        "warm_first_plotted_over_bare_boot": _ratio(w["water_plotted"], bare_med),
        "warm_first_plotted_over_warm_bare_boot": _ratio(w["water_plotted"], warm_bare_med),
        "warm_first_result_over_warm_bare_boot": _ratio(w["ready"], warm_bare_med),
        "warm_note": "a returning visit: new tab in a context whose service worker holds the site; the bare page's "
                     "return visit uses the HTTP cache; *_over_bare_boot: over the first-visit bare boot, "
                     "*_over_warm_bare_boot: over the warm one",
        "warm_boot_stages_median_ms": {k: _median([b.get(k) for b in warm_boots]) for k in stages},
        "warm_recompute_ms": round(statistics.median(recompute_ms), 1),
        "warm_recompute_note": "one-acid explorer: from the keystroke to the redrawn table and plots",
        **water_figures,
    }
    if preset:
        cp, wp = med["preset"], med["warm_preset"]
        figures.update({
            "preset_link_first_drawn_ms": cp["headline"],
            "preset_link_first_drawn_runs_ms": _spread(cold_preset["headline"]),
            "preset_link_first_drawn_over_bare_boot": _ratio(cp["headline"], bare_med),
            "preset_link_headline_ms": cp["headline"],
            "preset_link_headline_over_bare_boot": _ratio(cp["headline"], bare_med),
            "preset_link_first_plotted_ms": cp["water_plotted"],
            "preset_link_first_plotted_runs_ms": _spread(cold_preset["water_plotted"]),
            "preset_link_first_plotted_over_bare_boot": _ratio(cp["water_plotted"], bare_med),
            "preset_link_first_result_ms": cp["ready"],
            "preset_link_runs_ms": _spread(cold_preset["ready"]),
            "preset_link_over_bare_boot": _ratio(cp["ready"], bare_med),
            "warm_preset_link_first_plotted_ms": wp["water_plotted"],
            "warm_preset_link_first_plotted_runs_ms": _spread(warm_preset["water_plotted"]),
            "warm_preset_link_first_plotted_over_warm_bare_boot": _ratio(wp["water_plotted"], warm_bare_med),
            "preset_link_note": f"#preset={preset}: the same events as the plain page's, first visit (and warm)",
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
