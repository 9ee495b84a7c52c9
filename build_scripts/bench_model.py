"""Benchmark of the one equilibrium model on CPython: prints JSON medians [ms].

    .venv/bin/python build_scripts/bench_model.py

Cases (invented waters, not checks of chemistry):
- ``acid_base_10``: ten acid-base systems and two strong ions, complexes off, Davies;
- ``hard_water``: a hard, sulfate-rich water with its ion pairs (about 10 components, 40 species);
- ``two_solids``: a hard water dosed to pH 10.5 with calcite and brucite allowed to form;
- ``hard_water_curves``: the 281-point distribution and log-C curves of the hard water.

``model_*`` figures time the equilibrium model alone (the scenario read once, then
``WaterModel.solve``); the others time the whole ``solve`` result a user gets (alkalinity,
buffer intensity, calcium carbonate indices and every table included). Medians of wall time
and of CPU time (``time.process_time``), in ms.
"""

from __future__ import annotations

import json
import os
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "pycore"))

from acidscape.boundary.api import read_water, solve, water, water_model  # noqa: E402

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
        "python": sys.version.split()[0],
        "load_average": list(os.getloadavg()) if hasattr(os, "getloadavg") else None,
    }
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
