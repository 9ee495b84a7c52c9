"""Benchmark of the core on CPython: prints JSON with median times in milliseconds.

Cases (targets from issue 4 and the solver issue):
* ``titration_400_points_6_systems``: 400-point titration curve (HCl) of a 6-system water with
  Davies activities, equivalence and half-equivalence points included (target < 20 ms);
* ``dose_inverse``: the dose of NaOH to a target pH for the same water, the explicit inverse
  alone (closing the water and solving for the dose; target < 2 ms);
* ``dose_full``: the same through :func:`acidscape.operations.dosing.dose_to_pH`, which also solves the
  water before and after and reports both (no target; for information);
* ``solve_10_systems_davies``: :func:`acidscape.boundary.api.solve` of a 10-system water with Davies
  activities, including the alkalinity report and buffer intensity (target < 1 ms);
* ``equilibrate_10_systems_davies``: the charge-balance solve alone, for comparison.

The waters are made-up benchmark inputs, not reference data. Run:
``.venv/bin/python build_scripts/bench_core.py [--repeat N]``.
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
from acidscape.operations.dosing import dose_amount, dose_to_pH, get_chemical  # noqa: E402
from acidscape.operations.closure import close_scenario  # noqa: E402
from acidscape.boundary.scenario import read_scenario  # noqa: E402
from acidscape.science.solver import equilibrate  # noqa: E402
from acidscape.operations.titration import titration_curve  # noqa: E402

MM = "mmol/L"
WATER_6 = {
    "temperature_C": 20, "activity": "davies",
    "systems": [
        {"id": "carbonate", "total": 2.5, "unit": MM}, {"id": "phosphate", "total": 0.1, "unit": MM},
        {"id": "ammonium", "total": 0.2, "unit": MM}, {"id": "boric", "total": 0.05, "unit": MM},
        {"id": "silicic", "total": 0.3, "unit": MM}, {"id": "acetic", "total": 0.1, "unit": MM},
    ],
    "ions": [{"id": "Na+", "total": 2.0, "unit": MM}, {"id": "Ca+2", "total": 1.0, "unit": MM},
             {"id": "Cl-", "total": 1.5, "unit": MM}],
}
WATER_10 = {
    "temperature_C": 15, "activity": "davies",
    "systems": WATER_6["systems"] + [
        {"id": "sulfate", "total": 0.5, "unit": MM}, {"id": "fluoride", "total": 0.05, "unit": MM},
        {"id": "citrate", "total": 0.02, "unit": MM}, {"id": "sulfide", "total": 0.01, "unit": MM},
    ],
    "ions": WATER_6["ions"] + [{"id": "Mg+2", "total": 0.5, "unit": MM}],
}


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
    ap.add_argument("--repeat", type=int, default=30)
    n = ap.parse_args().repeat
    naoh = get_chemical("NaOH")
    p10 = read_scenario(WATER_10)
    out = {
        "python": platform.python_version(),
        "implementation": platform.python_implementation(),
        "repeat": n,
        "median_ms": {
            "titration_400_points_6_systems": median_ms(
                lambda: titration_curve(WATER_6, "HCl", titrant_M=0.02, sample_mL=100, to_pH=3.0, points=400), n),
            "dose_inverse": median_ms(lambda: dose_amount(close_scenario(WATER_6), naoh, 8.8), n),
            "dose_full": median_ms(lambda: dose_to_pH(WATER_6, "NaOH", 8.8), n),
            "solve_10_systems_davies": median_ms(lambda: solve(WATER_10), n),
            "equilibrate_10_systems_davies": median_ms(
                lambda: equilibrate(p10.components, p10.ions, T=p10.T, pKw=p10.pKw, model=p10.model), n),
        },
        "targets_ms": {"titration_400_points_6_systems": 20.0, "dose_inverse": 2.0, "solve_10_systems_davies": 1.0},
    }
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
