"""Throughput of the batch of samples (a benchmark, not a test). Prints one JSON object.

Usage:  .venv/bin/python build_scripts/bench_batch.py [--rows N] [--kinds K,K] [--page-kinds K,K]
                                                      [--dist DIR] [--no-browser] [--chromium PATH]

Kinds of sample sheets (values generated at random from a fixed seed, invented; the column
names are ones the page's column guess recognises, so page and command line use one mapping):

- ``speciation``: pH, temperature, phosphate and ammonia, no alkalinity column: each row is
  speciated at its measured pH (one model solve and one at the pH 4.5 end point per row).
- ``closure``: pH, temperature, alkalinity and phosphate: each row's carbonate total and
  balancing ion are inferred from its pH and alkalinity first (the closure,
  ``acidscape.operations.closure``), then the water is solved.
- ``hard``: the closure with calcium, magnesium, sulfate and chloride as well (ion pairs and
  complexes in every solve).
- ``dose``: ``closure`` plus a sodium hydroxide dose to pH 8.5 per row.

Figures:

- ``cpython.<kind>.jobs1`` / ``jobs2``: rows per second of
  ``acidscape.boundary.batch.batch_table`` (what ``python -m acidscape batch IN.csv --mapping
  MAP.json --jobs N`` runs) on the host CPython, in one process and in two; the two CSV texts
  are checked to be equal.
- ``page.<kind>.one_worker``: rows per second through the page's batch section with the page
  told it has one core (its own worker only), from the click on "Calculate" to the last
  chunk, as the page reports it (``#batch-progress[data-seconds]``); ``page.<kind>.pool``: the
  same with the extra worker(s) the page starts for this machine's cores, once they are ready
  (they start when the columns are read), and ``workers`` used. A fresh browser context per
  run, service workers blocked.

The machine has 2 cores shared with other work; the load averages before and after are
printed, and figures vary by tens of per cent between runs. The page figures need a built
site (``--dist``, default /tmp/dist-bench-batch, built here from site/ and pycore/ when
missing or older than them) and /usr/bin/chromium.
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import os
import platform
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO / "build_scripts"))
sys.path.insert(0, str(REPO / "pycore"))

KINDS = ("speciation", "closure", "hard", "dose")
DOSE = {"chemical": "NaOH", "target_pH": 8.5}

# (column name, generator) per kind; names as a lab sheet writes them
_COLUMNS = {
    "Sample": lambda r, i: f"B{i:05d}",
    "pH": lambda r, i: f"{r.uniform(6.3, 9.3):.2f}",
    "Temp (°C)": lambda r, i: f"{r.uniform(2, 30):.1f}",
    "Alkalinity (mg/L as CaCO3)": lambda r, i: f"{r.uniform(10, 300):.1f}",
    "PO4-P (mg/L)": lambda r, i: f"{r.uniform(0, 2):.3f}",
    "NH4-N (mg/L)": lambda r, i: f"{r.uniform(0, 3):.2f}",
    "Calcium (mg/L)": lambda r, i: f"{r.uniform(5, 120):.1f}",
    "Magnesium (mg/L)": lambda r, i: f"{r.uniform(1, 30):.1f}",
    "Sulfate (mg/L)": lambda r, i: f"{r.uniform(5, 150):.1f}",
    "Chloride (mg/L)": lambda r, i: f"{r.uniform(5, 150):.1f}",
}
_SHEETS = {
    "speciation": ["Sample", "pH", "Temp (°C)", "PO4-P (mg/L)", "NH4-N (mg/L)"],
    "closure": ["Sample", "pH", "Temp (°C)", "Alkalinity (mg/L as CaCO3)", "PO4-P (mg/L)"],
    "hard": ["Sample", "pH", "Temp (°C)", "Alkalinity (mg/L as CaCO3)", "Calcium (mg/L)", "Magnesium (mg/L)",
             "Sulfate (mg/L)", "Chloride (mg/L)"],
    "dose": ["Sample", "pH", "Temp (°C)", "Alkalinity (mg/L as CaCO3)", "PO4-P (mg/L)"],
}


def samples(kind: str, n: int) -> str:
    """A sample sheet of ``n`` generated rows (invented values, seed 1)."""
    rnd = random.Random(1)
    names = _SHEETS[kind]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(names)
    for i in range(n):
        w.writerow([_COLUMNS[c](rnd, i) for c in names])
    return buf.getvalue()


def mapping_of(kind: str) -> dict:
    """The mapping the page builds for the sheet: the core's column guess, blank temperatures
    at 25 °C (as the page reads them), and the dose for ``dose``."""
    from acidscape.boundary.batch import guess_mapping

    g = guess_mapping(_SHEETS[kind])
    if g["unmapped"]:
        raise AssertionError(f"the guess left out {g['unmapped']}")
    m = {k: v for k, v in g.items() if k not in ("notes", "unmapped")}
    m["temperature"] = {**m["temperature"], "default_C": 25}
    if kind == "dose":
        m["dose"] = dict(DOSE)
    return m


def cpython_rates(kind: str, n: int) -> dict:
    from acidscape.boundary.batch import batch_table

    text, mapping = samples(kind, n), mapping_of(kind)
    batch_table(samples(kind, 20), mapping)  # imports and library loaded before timing
    out, first = {}, None
    for jobs in (1, 2):
        t0 = time.perf_counter()
        csv_text, errors, done = batch_table(text, mapping, jobs=jobs)
        out[f"jobs{jobs}"] = round(done / (time.perf_counter() - t0), 1)
        if errors:
            raise AssertionError(f"{kind}: {len(errors)} rows failed, first: {errors[0]}")
        if first is None:
            first = csv_text
        elif csv_text != first:
            raise AssertionError(f"{kind}: --jobs 2 gave another text than --jobs 1")
    return out


def ensure_dist(dist: Path) -> None:
    """Build the site into ``dist`` unless it is newer than every source file."""
    stamp = dist / "manifest.json"
    sources = [p for d in ("site", "pycore/acidscape", "build_scripts") for p in (REPO / d).rglob("*")
               if p.is_file() and "node_modules" not in p.parts and "__pycache__" not in p.parts]
    if stamp.exists() and stamp.stat().st_mtime >= max(p.stat().st_mtime for p in sources):
        return
    subprocess.run([sys.executable, str(REPO / "build_scripts" / "build.py"), "--out", str(dist)], check=True,
                   stdout=subprocess.DEVNULL)


def page_run(browser, site_url: str, csv_path: Path, kind: str, n: int, one_core: bool) -> dict:
    ctx = browser.new_context(service_workers="block", accept_downloads=False)
    if one_core:
        ctx.add_init_script("Object.defineProperty(navigator, 'hardwareConcurrency', {get: () => 1});")
    page = ctx.new_page()
    page.goto(site_url)
    page.wait_for_selector("body[data-share-ready]", state="attached", timeout=180_000)
    if page.locator("#job-tab-batch").count():  # the workbench shows one job at a time
        page.click("#job-tab-batch")
    page.set_input_files("#batch-file", str(csv_path))
    page.wait_for_function("() => !document.getElementById('batch-run').disabled", timeout=60_000)
    if kind == "dose":
        page.select_option("#batch-dose-chemical", DOSE["chemical"])
        page.fill("#batch-dose-target", str(DOSE["target_pH"]))
    if not one_core:
        page.wait_for_selector("#batch-progress[data-helpers]", state="attached", timeout=180_000)
    page.click("#batch-run")
    page.wait_for_selector("#batch-progress[data-state=finished]", state="attached", timeout=1_800_000)
    seconds = float(page.get_attribute("#batch-progress", "data-seconds"))
    workers = int(page.get_attribute("#batch-progress", "data-workers"))
    done = int(page.get_attribute("#batch-progress", "data-done"))
    ctx.close()
    if done != n:
        raise AssertionError(f"the page computed {done} of {n} rows")
    return {"rows_per_s": round(n / seconds, 1), "seconds": round(seconds, 2), "workers": workers}


def page_rates(chromium: str, dist: Path, kinds: list[str], n: int) -> dict:
    from playwright.sync_api import sync_playwright

    from bench import serve

    out = {}
    server, url = serve(dist)
    try:
        with tempfile.TemporaryDirectory() as tmp, sync_playwright() as p:
            b = p.chromium.launch(executable_path=chromium, args=["--disable-gpu"])
            for kind in kinds:
                path = Path(tmp) / f"{kind}.csv"
                path.write_text(samples(kind, n), encoding="utf-8")
                out[kind] = {}
                for name, one_core in (("one_worker", True), ("pool", False)):
                    try:
                        out[kind][name] = page_run(b, url, path, kind, n, one_core=one_core)
                    except Exception as exc:  # a page that did not answer: say so, keep the other figures
                        out[kind][name] = {"error": f"{type(exc).__name__}: {str(exc).splitlines()[0]}"}
            b.close()
    finally:
        server.shutdown()
    return out


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Acidscape batch throughput, printed as JSON.")
    parser.add_argument("--rows", type=int, default=10_000, help="samples per sheet (default 10000)")
    parser.add_argument("--kinds", default=",".join(KINDS), help=f"CPython sheets (default {','.join(KINDS)})")
    parser.add_argument("--page-kinds", default="speciation,closure",
                        help="sheets run through the page (default speciation,closure; '' for none)")
    parser.add_argument("--dist", type=Path, default=Path(tempfile.gettempdir()) / "dist-bench-batch",
                        help="built site for the page figures (built here when missing or stale)")
    parser.add_argument("--keep-dist", action="store_true", help="use --dist as it is (no rebuild)")
    parser.add_argument("--chromium", default="/usr/bin/chromium", help="Chromium executable")
    parser.add_argument("--no-browser", action="store_true", help="CPython figures only")
    args = parser.parse_args(argv)
    kinds = [k for k in args.kinds.split(",") if k]
    page_kinds = [k for k in args.page_kinds.split(",") if k] if not args.no_browser else []
    for k in kinds + page_kinds:
        if k not in KINDS:
            parser.error(f"unknown kind {k!r}; kinds: {', '.join(KINDS)}")
    result = {
        "machine": f"{platform.machine()}, {platform.python_implementation()} {platform.python_version()}",
        "cores": os.cpu_count(),
        "rows": args.rows,
        "load_average_1min_before": round(os.getloadavg()[0], 2),
        "cpython_rows_per_s": {k: cpython_rates(k, args.rows) for k in kinds},
    }
    if page_kinds:
        if not args.keep_dist:
            ensure_dist(args.dist)
        result["page_rows_per_s"] = page_rates(args.chromium, args.dist, page_kinds, args.rows)
    result["load_average_1min_after"] = round(os.getloadavg()[0], 2)
    print(json.dumps(result, indent=2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
