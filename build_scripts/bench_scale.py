"""Benchmark of the "Scale and corrosion" job's requests on CPython: prints JSON with times in ms.

    .venv/bin/python build_scripts/bench_scale.py [--repeat N]

Cases (an invented hard groundwater, not a check of chemistry), each through
``acidscape.boundary.dispatch.handle`` as the page's worker calls it (JSON in and out):

- ``indices_with_ranges``: ``solve`` with the uncertainty ranges, two extra temperatures and the
  open CCPP (the job's numbers);
- ``curves_with_bands``: ``scale_curves`` at the page's grids (31 pH values, 20 temperatures)
  with the uncertainty bands (the job's two plots);
- ``curves_without_bands``: the same curves alone.

Times are the median and the minimum of ``--repeat`` runs after one warm-up run, with the CPU
time of the process beside the wall time (a loaded machine inflates the wall time). The page
runs the same code in Pyodide (WebAssembly), typically two to three times slower.
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "pycore"))

from acidscape.boundary.dispatch import handle  # noqa: E402

WATER = {
    "temperature_C": 12.0, "activity": "davies",
    "measured": {"pH": 7.2, "alkalinity": {"value": 265, "unit": "mg/L as CaCO3"}},
    "ions": [{"id": "calcium", "total": 104, "unit": "mg/L"}, {"id": "magnesium", "total": 9.5, "unit": "mg/L"},
             {"id": "sodium", "total": 16, "unit": "mg/L"}, {"id": "chloride", "total": 31, "unit": "mg/L"},
             {"id": "sulfate", "total": 42, "unit": "mg/L"}],
}
CURVE_T = {"from_C": 5, "to_C": 100, "points": 20}
CASES = {
    "indices_with_ranges": ("solve", {**WATER, "uncertainty": True, "ccpp_temperatures_C": [60, 100],
                                      "ccpp_open_CO2_partial_pressure_atm": 0.00042}),
    "curves_with_bands": ("scale_curves", {"scenario": WATER, "temperature": CURVE_T}),
    "curves_without_bands": ("scale_curves", {"scenario": WATER, "temperature": CURVE_T, "band": False}),
}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    out = {"median_ms": {}, "min_ms": {}, "median_cpu_ms": {}}
    for name, (method, params) in CASES.items():
        text = json.dumps(params)
        reply = json.loads(handle(method, text))  # warm-up, and a request that fails is not timed
        if not reply["ok"]:
            raise SystemExit(f"{name}: {reply['error']}")
        wall, cpu = [], []
        for _ in range(args.repeat):
            t, c = time.perf_counter(), time.process_time()
            handle(method, text)
            wall.append((time.perf_counter() - t) * 1e3)
            cpu.append((time.process_time() - c) * 1e3)
        out["median_ms"][name] = round(statistics.median(wall), 1)
        out["min_ms"][name] = round(min(wall), 1)
        out["median_cpu_ms"][name] = round(statistics.median(cpu), 1)
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
