"""Benchmark of the core's water operations on CPython: prints JSON with median times in milliseconds.

Every operation runs on the one equilibrium model (acidscape.science.model). Cases:
* ``titration_400_points_hard_water``: 400-point titration curve (HCl) of a hard water with its
  ion pairs, equivalence and half-equivalence points included (target < 40 ms);
* ``titration_400_points_6_systems``: the same for a 6-system water with Davies activities;
* ``dose_inverse``: the dose of NaOH to a target pH for the hard water, closing the water and
  solving for the dose (target: a few ms);
* ``dose_inverse_with_calcite``: lime to pH 10 with calcite allowed to form;
* ``dose_full``: :func:`acidscape.operations.dosing.dose_to_pH` with the waters before and after
  described by :func:`acidscape.boundary.api.solve` (no target; for information);
* ``curves_281_points_hard_water``: distribution and log-C curves of the hard water;
* ``solve_10_systems_davies``: :func:`acidscape.boundary.api.solve` of a 10-system water
  (alkalinity report and buffer intensity included);
* ``batch_row_measured``: one row of :func:`acidscape.boundary.batch.batch_table` with a
  measured pH and alkalinity (the carbonate total and a balancing ion closed at that pH,
  :mod:`acidscape.operations.closure`), temperature and phosphate; the median over 100
  generated rows (``batch_rows_per_s`` is its inverse, one core).

Medians of wall time (``median_ms``) and of this process's CPU time (``median_cpu_ms``,
``time.process_time``; less disturbed when other work shares the cores).

The waters are made-up benchmark inputs, not reference data. Run:
``.venv/bin/python build_scripts/bench_core.py [--repeat N]``. The machine's load shows in the
numbers; compare figures taken on the same machine at the same time.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import random
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pycore"))

from acidscape.boundary.api import solve  # noqa: E402
from acidscape.boundary.batch import batch_table  # noqa: E402
from acidscape.boundary.scenario import read_scenario  # noqa: E402
from acidscape.operations.closure import close_scenario  # noqa: E402
from acidscape.operations.curves import pH_grid, water_curves  # noqa: E402
from acidscape.operations.dosing import dose_amount, dose_to_pH, get_chemical  # noqa: E402
from acidscape.operations.probe import model_of  # noqa: E402
from acidscape.operations.titration import titration_curve  # noqa: E402

MM = "mmol/L"
WATER_6 = {
    "temperature_C": 20, "activity": "davies",
    "systems": [
        {"id": "carbonate", "total": 2.5, "unit": MM}, {"id": "phosphate", "total": 0.1, "unit": MM},
        {"id": "ammonium", "total": 0.2, "unit": MM}, {"id": "boric", "total": 0.05, "unit": MM},
        {"id": "silicic", "total": 0.3, "unit": MM}, {"id": "acetic", "total": 0.1, "unit": MM},
    ],
    "ions": [{"id": "sodium", "total": 2.0, "unit": MM}, {"id": "calcium", "total": 1.0, "unit": MM},
             {"id": "chloride", "total": 1.5, "unit": MM}],
}
WATER_10 = {
    "temperature_C": 15, "activity": "davies",
    "systems": WATER_6["systems"] + [
        {"id": "sulfate", "total": 0.5, "unit": MM}, {"id": "fluoride", "total": 0.05, "unit": MM},
        {"id": "citrate", "total": 0.02, "unit": MM}, {"id": "sulfide", "total": 0.01, "unit": MM},
    ],
    "ions": WATER_6["ions"] + [{"id": "magnesium", "total": 0.5, "unit": MM}],
}
HARD = {
    "temperature_C": 25, "activity": "davies",
    "systems": [{"id": "carbonate", "total": 5.2, "unit": MM}, {"id": "sulfate", "total": 144, "unit": "mg/L"},
                {"id": "phosphate", "total": 0.02, "unit": MM}, {"id": "fluoride", "total": 0.5, "unit": "mg/L"}],
    "ions": [{"id": "calcium", "total": 120, "unit": "mg/L"}, {"id": "magnesium", "total": 24, "unit": "mg/L"},
             {"id": "sodium", "total": 46, "unit": "mg/L"}, {"id": "potassium", "total": 4, "unit": "mg/L"},
             {"id": "chloride", "total": 71, "unit": "mg/L"}],
}


def closed(scenario):
    return close_scenario(scenario, read_scenario(scenario))


def median_ms(fn, repeat: int, clock=time.perf_counter) -> float:
    fn()  # warm caches (library, chemicals)
    times = []
    for _ in range(repeat):
        t = clock()
        fn()
        times.append(clock() - t)
    return statistics.median(times) * 1e3


#: Batch mapping of the measured rows (pH, temperature, alkalinity, phosphate).
BATCH_MAPPING = {"id": "Sample", "pH": "pH", "temperature": {"column": "Temp C", "unit": "C"},
                 "alkalinity": {"column": "Alkalinity mg/L", "unit": "mg/L as CaCO3"},
                 "systems": [{"id": "phosphate", "column": "PO4-P mg/L", "unit": "mg/L as P"}]}


def batch_text(n: int) -> str:
    """n invented sample rows (random but fixed: seed 1)."""
    rnd = random.Random(1)
    lines = ["Sample,pH,Temp C,Alkalinity mg/L,PO4-P mg/L"]
    lines += [f"W{i},{rnd.uniform(6, 9.5):.2f},{rnd.uniform(2, 30):.1f},{rnd.uniform(5, 300):.1f},"
              f"{rnd.uniform(0, 2):.3f}" for i in range(n)]
    return "\n".join(lines) + "\n"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=15)
    n = ap.parse_args().repeat
    naoh, lime = get_chemical("NaOH"), get_chemical("Ca(OH)2")
    hard, six = closed(HARD), closed(WATER_6)
    p = read_scenario(HARD)
    wm = model_of(p)
    sol = wm.solve()
    grid = pH_grid(0.0, 14.0, 281)
    rows = batch_text(100)
    cases = {
        "titration_400_points_hard_water":
            lambda: titration_curve(hard, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.0, points=400),
        "titration_400_points_6_systems":
            lambda: titration_curve(six, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.0, points=400),
        "dose_inverse": lambda: dose_amount(closed(HARD), naoh, 8.8),
        "dose_inverse_with_calcite": lambda: dose_amount(hard, lime, 10.0, ("calcite",)),
        "dose_full": lambda: dose_to_pH(closed(HARD), "NaOH", 8.8, describe=solve),
        "curves_281_points_hard_water": lambda: water_curves(wm, sol, grid),
        "solve_10_systems_davies": lambda: solve(WATER_10),
    }
    wall = {k: round(median_ms(f, n), 3) for k, f in cases.items()}
    cpu = {k: round(median_ms(f, n, time.process_time), 3) for k, f in cases.items()}
    batch_repeat = max(3, n // 5)
    wall["batch_row_measured"] = round(median_ms(lambda: batch_table(rows, BATCH_MAPPING), batch_repeat) / 100, 4)
    cpu["batch_row_measured"] = round(
        median_ms(lambda: batch_table(rows, BATCH_MAPPING), batch_repeat, time.process_time) / 100, 4)
    out = {
        "python": platform.python_version(),
        "implementation": platform.python_implementation(),
        "repeat": n,
        "median_ms": wall,
        "median_cpu_ms": cpu,
        "batch_rows_per_s": round(1e3 / wall["batch_row_measured"], 1),
        "batch_rows_per_s_cpu": round(1e3 / cpu["batch_row_measured"], 1),
        "targets_ms": {"titration_400_points_hard_water": 40.0, "dose_inverse": 5.0},
        "load_average": list(os.getloadavg()) if hasattr(os, "getloadavg") else None,
    }
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
