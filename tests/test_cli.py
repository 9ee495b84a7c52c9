"""The command line as a script or a user meets it: JSON out, errors on stderr."""

import json
import subprocess
import sys

import pytest


def _run(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "acidscape", *args], input=stdin, capture_output=True,
                          text=True, timeout=60)


def test_solve_from_stdin_prints_contract_keys():
    scenario = {"temperature_C": 15, "systems": [{"id": "carbonate", "total": 2, "unit": "mmol/L"}],
                "ions": [{"id": "Na+", "total": 2, "unit": "mmol/L"}]}
    proc = _run("solve", "-", stdin=json.dumps(scenario))
    assert proc.returncode == 0, proc.stderr
    out = json.loads(proc.stdout)
    for key in ("pH", "temperature_C", "ionic_strength_M", "pKw", "species",
                "charge_balance_residual_eq_per_L", "warnings"):
        assert key in out
    for key in ("name", "system", "charge", "concentration_M", "activity_M", "activity_coefficient", "fraction"):
        assert key in out["species"][0]
    # most to least protonated (contract): charges step down
    charges = [s["charge"] for s in out["species"] if s["system"] == "carbonate"]
    assert charges == sorted(charges, reverse=True)


def test_solve_from_file(tmp_path):
    f = tmp_path / "water.json"
    f.write_text(json.dumps({"systems": [{"id": "ammonium", "total": 1, "unit": "mg/L as N"}]}))
    proc = _run("solve", str(f))
    assert proc.returncode == 0, proc.stderr
    assert 7 < json.loads(proc.stdout)["pH"] < 11


def test_systems_lists_library():
    proc = _run("systems")
    assert proc.returncode == 0
    data = json.loads(proc.stdout)
    ids = {s["id"] for s in data["systems"]}
    assert {"carbonate", "phosphate", "edta", "ammonium", "hypochlorous"} <= ids
    assert len(ids) >= 25
    for s in data["systems"]:
        assert s["name"] and s["species"] and s["pKa_25C"]


@pytest.mark.parametrize(
    "stdin, field",
    [
        ("{not json", "FILE"),
        (json.dumps({"temperature_C": 150}), "temperature_C"),
        (json.dumps({"systems": [{"id": "nope", "total": 1}]}), "systems[0].id"),
        (json.dumps({"systems": [{"id": "acetic", "total": -2}]}), "systems[0].total"),
    ],
)
def test_bad_input_exits_nonzero_with_message(stdin, field):
    proc = _run("solve", "-", stdin=stdin)
    assert proc.returncode == 2
    assert proc.stdout == ""
    assert f"[{field}]" in proc.stderr
