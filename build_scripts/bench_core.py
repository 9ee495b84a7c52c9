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
  (alkalinity report and buffer intensity included).

The waters are made-up benchmark inputs, not reference data. Run:
``.venv/bin/python build_scripts/bench_core.py [--repeat N]``. The machine's load shows in the
numbers; compare figures taken on the same machine at the same time.
"""

from __future__ import annotations

import argparse
import json
import platform
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pycore"))

from acidscape.boundary.api import solve  # noqa: E402
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


def median_ms(fn, repeat: int) -> float:
    fn()  # warm caches (library, chemicals)
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times) * 1e3


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
    out = {
        "python": platform.python_version(),
        "implementation": platform.python_implementation(),
        "repeat": n,
        "median_ms": {
            "titration_400_points_hard_water": median_ms(
                lambda: titration_curve(hard, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.0, points=400), n),
            "titration_400_points_6_systems": median_ms(
                lambda: titration_curve(six, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.0, points=400), n),
            "dose_inverse": median_ms(lambda: dose_amount(closed(HARD), naoh, 8.8), n),
            "dose_inverse_with_calcite": median_ms(lambda: dose_amount(hard, lime, 10.0, ("calcite",)), n),
            "dose_full": median_ms(lambda: dose_to_pH(closed(HARD), "NaOH", 8.8, describe=solve), n),
            "curves_281_points_hard_water": median_ms(lambda: water_curves(wm, sol, grid), n),
            "solve_10_systems_davies": median_ms(lambda: solve(WATER_10), n),
        },
        "targets_ms": {"titration_400_points_hard_water": 40.0, "dose_inverse": 5.0},
    }
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
