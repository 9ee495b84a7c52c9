"""Benchmark of the one equilibrium model on CPython: prints JSON medians [ms].

    .venv/bin/python build_scripts/bench_model.py

Cases (invented waters, not checks of chemistry):
- ``acid_base_10``: ten acid-base systems and two strong ions, complexes off, Davies;
- ``hard_water``: a hard, sulfate-rich water with its ion pairs (about 10 components, 40 species);
- ``two_solids``: a hard water dosed to pH 10.5 with calcite and brucite allowed to form;
- ``hard_water_curves``: the 281-point distribution and log-C curves of the hard water;
- ``water6_headline``: the first part of the water section's request (``dispatch.stages("water_view")``:
  the solve, alkalinity, indices and tables the page draws first) for the six-system water of
  ``bench.py`` (``WATER_6``, the page's edit benchmark), the figure the page's headline waits for;
- ``default_water``: the page's starting water (carbonate 2.5, calcium 1, magnesium 0.3, sodium
  0.6, chloride 0.8 mmol/L, 25 °C): its headline part and its 281-point curves part (``_curves``:
  from the first part to the last);
- with ``--pyodide``: the same water-view parts in Pyodide (the page's interpreter) under Node.js,
  a wheel of the core installed into a temporary folder as ``bench_jobs.py --pyodide`` does
  (wall and Node's process CPU time, which counts its compiler and collector threads too).

``model_*`` figures time the equilibrium model alone (the scenario read once, then
``WaterModel.solve``); the others time the whole ``solve`` result a user gets (alkalinity,
buffer intensity, calcium carbonate indices and every table included). Medians of wall time
and of CPU time (``time.process_time``), in ms, with the load average and uptime (the machine is
shared: compare figures taken at the same time).
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "pycore"))
sys.path.insert(0, str(ROOT / "build_scripts"))

from acidscape.boundary.api import read_water, solve, water, water_model  # noqa: E402
from acidscape.boundary.dispatch import stages  # noqa: E402
from bench import WATER_6  # noqa: E402

ACID_BASE_10 = {
    "complexes": False, "temperature_C": 15,
    "systems": [{"id": i, "total": 0.2, "unit": "mmol/L"} for i in
                ("carbonate", "phosphate", "ammonium", "silicic", "boric", "acetic", "sulfide", "fluoride",
                 "hypochlorous", "nitrite")],
    "ions": [{"id": "sodium", "total": 1.5, "unit": "mmol/L"}, {"id": "chloride", "total": 0.5, "unit": "mmol/L"}],
}
HARD = {
    "temperature_C": 25,
    "systems": [{"id": "carbonate", "total": 5.2, "unit": "mmol/L"}, {"id": "sulfate", "total": 144, "unit": "mg/L"},
                {"id": "phosphate", "total": 0.02, "unit": "mmol/L"}, {"id": "fluoride", "total": 0.5, "unit": "mg/L"}],
    "ions": [{"id": "calcium", "total": 120, "unit": "mg/L"}, {"id": "magnesium", "total": 24, "unit": "mg/L"},
             {"id": "sodium", "total": 46, "unit": "mg/L"}, {"id": "potassium", "total": 4, "unit": "mg/L"},
             {"id": "chloride", "total": 71, "unit": "mg/L"}],
}
TWO_SOLIDS = dict(HARD, pH=10.5, precipitate=["calcite", "brucite"])
#: The page's starting water (site/water.js), an invented water.
DEFAULT_WATER = {
    "temperature_C": 25,
    "systems": [{"id": "carbonate", "total": 2.5, "unit": "mmol/L"}],
    "ions": [{"id": "calcium", "total": 1, "unit": "mmol/L"}, {"id": "magnesium", "total": 0.3, "unit": "mmol/L"},
             {"id": "sodium", "total": 0.6, "unit": "mmol/L"}, {"id": "chloride", "total": 0.8, "unit": "mmol/L"}],
}
#: The water section's requests (method "water_view", answered in parts by dispatch.stages).
WATER_VIEWS = {"water6": dict(WATER_6, curve={"points": 281}), "default_water": dict(DEFAULT_WATER, curve={"points": 281})}


def _parts_ms(params: dict, clock=time.perf_counter) -> list[float]:
    """Times [ms] from the request to each part of a water-view answer."""
    text = json.dumps(params)
    t = clock()
    out = []
    for part in stages("water_view", text):
        if part is not None:
            out.append((clock() - t) * 1e3)
    return out


def _headline_ms(params: dict, clock=time.perf_counter) -> float:
    """Time [ms] to the first part (the headline) of a water-view answer, the rest not asked for."""
    text = json.dumps(params)
    t = clock()
    gen = stages("water_view", text)
    next(gen)
    ms = (clock() - t) * 1e3
    gen.close()
    return ms


def water_views(n_head: int = 101, n_curves: int = 9) -> dict:
    """Medians [ms] of each water view's headline part, and of the default water's curves part."""
    out = {}
    for name, params in WATER_VIEWS.items():
        for clock, suffix in ((time.perf_counter, "ms"), (time.process_time, "cpu_ms")):
            _headline_ms(params, clock)
            out[f"{name}_headline_{suffix}"] = round(statistics.median(
                [_headline_ms(params, clock) for _ in range(n_head)]), 3)
    for clock, suffix in ((time.perf_counter, "ms"), (time.process_time, "cpu_ms")):
        runs = [_parts_ms(WATER_VIEWS["default_water"], clock) for _ in range(n_curves)]
        out[f"default_water_curves_{suffix}"] = round(statistics.median([r[-1] - r[0] for r in runs]), 3)
    return out


PYODIDE_RUNNER = r"""
import { readFileSync } from "node:fs";
const [dir, wheel, viewsFile, nHead, nCurves] = process.argv.slice(2);
const { loadPyodide } = await import(dir + "/pyodide.mjs");
const py = await loadPyodide({ indexURL: dir + "/" });
const site = py.runPython("import site; site.getsitepackages()[0]");
py.unpackArchive(new Uint8Array(readFileSync(wheel)), "wheel", { extractDir: site });
const parts = py.runPython(`
from acidscape.boundary.dispatch import stages
def parts(text, first_only):
    gen = stages("water_view", text)
    for part in gen:
        if part is not None and first_only:
            gen.close()
            return
parts`);
const views = JSON.parse(readFileSync(viewsFile, "utf8"));
const median = (a) => { const b = [...a].sort((x, y) => x - y); const m = b.length >> 1; return b.length % 2 ? b[m] : (b[m - 1] + b[m]) / 2; };
const out = { python: py.runPython("import sys; sys.version.split()[0]") };
for (const [name, params] of Object.entries(views)) {
  const text = JSON.stringify(params);
  parts(text, true);  // warm-up
  const wall = [], cpu = [];
  for (let k = 0; k < Number(nHead); k++) {
    const c0 = process.cpuUsage(), t0 = performance.now();
    parts(text, true);
    wall.push(performance.now() - t0);
    const c1 = process.cpuUsage(c0);
    cpu.push((c1.user + c1.system) / 1000);
  }
  out[name + "_headline_ms"] = median(wall);
  out[name + "_headline_cpu_ms"] = median(cpu);
}
const text = JSON.stringify(views.default_water);
const whole = [], head = [], wholeCpu = [], headCpu = [];
for (let k = 0; k < Number(nCurves); k++) {
  let c0 = process.cpuUsage(), t0 = performance.now();
  parts(text, true);
  head.push(performance.now() - t0);
  let c1 = process.cpuUsage(c0);
  headCpu.push((c1.user + c1.system) / 1000);
  c0 = process.cpuUsage();
  t0 = performance.now();
  parts(text, false);
  whole.push(performance.now() - t0);
  c1 = process.cpuUsage(c0);
  wholeCpu.push((c1.user + c1.system) / 1000);
}
out.default_water_curves_ms = median(whole) - median(head);
out.default_water_curves_cpu_ms = median(wholeCpu) - median(headCpu);
process.stdout.write(JSON.stringify(out));
"""


def pyodide_water_views(n_head: int = 51, n_curves: int = 5) -> dict:
    """The water views' medians [ms] in Pyodide under Node.js (``build_scripts/node_modules/pyodide``)."""
    from bench_jobs import run_in_pyodide

    return run_in_pyodide(PYODIDE_RUNNER, WATER_VIEWS, n_head, n_curves)


def _uptime() -> str | None:
    try:
        return subprocess.run(["uptime"], capture_output=True, text=True, timeout=10).stdout.strip()
    except (OSError, subprocess.SubprocessError):
        return None


def _median_ms(fn, n: int, clock=time.perf_counter) -> float:
    fn()
    times = []
    for _ in range(n):
        t = clock()
        fn()
        times.append((clock() - t) * 1e3)
    return round(statistics.median(times), 3)


def _model(scenario: dict):
    parsed, _ = read_water(scenario)
    wm = water_model(parsed)
    return lambda: wm.solve(pH=parsed.pH, allow_solids=parsed.precipitate)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--pyodide", action="store_true", help="also time the water views in Pyodide under Node.js")
    args = ap.parse_args()
    out = {
        "model_acid_base_10_ms": _median_ms(_model(ACID_BASE_10), 50),
        "model_acid_base_10_cpu_ms": _median_ms(_model(ACID_BASE_10), 50, time.process_time),
        "model_hard_water_ms": _median_ms(_model(HARD), 50),
        "model_hard_water_cpu_ms": _median_ms(_model(HARD), 50, time.process_time),
        "model_two_solids_ms": _median_ms(_model(TWO_SOLIDS), 30),
        "model_two_solids_cpu_ms": _median_ms(_model(TWO_SOLIDS), 30, time.process_time),
        "acid_base_10_ms": _median_ms(lambda: solve(ACID_BASE_10), 50),
        "hard_water_ms": _median_ms(lambda: solve(HARD), 50),
        "hard_water_species": len(solve(HARD)["species"]),
        "two_solids_ms": _median_ms(lambda: solve(TWO_SOLIDS), 30),
        "two_solids_precipitated": [r["id"] for r in solve(TWO_SOLIDS)["precipitated"]],
        "hard_water_curves_281_ms": _median_ms(lambda: water(dict(HARD, curve={"points": 281})), 5),
        **water_views(),
        "python": sys.version.split()[0],
        "load_average": list(os.getloadavg()) if hasattr(os, "getloadavg") else None,
        "uptime": _uptime(),
    }
    if args.pyodide:
        out["pyodide"] = pyodide_water_views()
        out["pyodide_uptime"] = _uptime()
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
