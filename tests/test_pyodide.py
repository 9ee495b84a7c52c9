"""The core under Pyodide (CPython 3.14 compiled to WebAssembly, the browser's interpreter).

Runs build_scripts/pyodide_check.mjs with Node.js: it installs a freshly built wheel into
Pyodide, runs every module's doctests there, and answers the same requests as the host
CPython. The host results are the oracle; both interpreters must agree to the last few ulps.

Then boots from a memory snapshot made as build.py makes it (build_scripts/snapshot.mjs) with
build_scripts/snapshot_check.mjs, the way the page's worker does: the key inside the image, a
module imported lazily and data files read anew without and with the wheel's files written
before Python starts, and the same answers as the host.
"""

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from acidscape.boundary import api

from acidscape.boundary import dispatch
ROOT = Path(__file__).resolve().parents[1]
SCRIPT = ROOT / "build_scripts" / "pyodide_check.mjs"
PYODIDE = ROOT / "build_scripts" / "node_modules" / "pyodide" / "pyodide.asm.wasm"

REQUESTS = [
    {"method": "distribution", "params": {"system": "edta", "pH": 9.5, "points": 41}},
    {"method": "solve", "params": {"temperature_C": 8, "systems": [
        {"id": "carbonate", "total": 3, "unit": "mmol/L"}, {"id": "phosphate", "total": 0.5, "unit": "mg/L as P"},
        {"id": "ammonium", "total": 1, "unit": "mg/L as N"}],
        "ions": [{"id": "Na+", "total": 2.5, "unit": "mmol/L"}, {"id": "Ca+2", "total": 1, "unit": "meq/L"}]}},
    {"method": "solve", "params": {"activity": "extended-debye-huckel", "gas": {"CO2_partial_pressure_atm": 0.01}}},
    {"method": "water", "params": {"systems": [{"id": "hypochlorous", "total": 2, "unit": "mg/L as Cl2"}],
                                    "curve": {"points": 15}}},
    {"method": "solve", "params": {"systems": [{"id": "nope", "total": 1}]}},
]


def _close(a, b, path="$"):
    """Equal structure; floats equal within 1e-12 relative (libm may differ in the last bits).

    Residuals (paths naming one) are round-off left over by the solver, not results: both
    interpreters must leave them below 1e-12 (mol/L, eq/L or relative), their values may differ.
    """
    if (isinstance(a, float) or isinstance(b, float)) and "residual" in path:
        assert abs(a) < 1e-12 and abs(b) < 1e-12, f"{path}: {a}, {b}"
    elif isinstance(a, float) or isinstance(b, float):
        assert math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-300), f"{path}: {a} != {b}"
    elif isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for k in a:
            _close(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b)):
            _close(x, y, f"{path}[{i}]")
    else:
        assert a == b, f"{path}: {a!r} != {b!r}"


@pytest.fixture(scope="module")
def pyodide_run(tmp_path_factory):
    if not PYODIDE.exists():
        pytest.fail("Pyodide is not installed: run `npm ci --prefix build_scripts` (dev.sh does)")
    out = tmp_path_factory.mktemp("wheel")
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "--no-index",
                    "-q", "-w", str(out), str(ROOT)], check=True, capture_output=True, timeout=300)
    wheel = next(out.glob("acidscape-*.whl"))
    proc = subprocess.run(["node", str(SCRIPT), str(wheel)], input=json.dumps(REQUESTS), capture_output=True,
                          text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr[-3000:]
    return json.loads(proc.stdout)


def test_runs_on_python_3_14(pyodide_run):
    assert pyodide_run["python"].startswith("3.14")


def test_doctests_pass_in_pyodide(pyodide_run):
    assert pyodide_run["doctests_attempted"] > 50
    assert pyodide_run["doctests_failed"] == 0


@pytest.mark.parametrize("index", range(len(REQUESTS)))
def test_same_answers_as_host_cpython(pyodide_run, index):
    req = REQUESTS[index]
    host = json.loads(dispatch.handle(req["method"], json.dumps(req["params"])))
    _close(pyodide_run["answers"][index], host)


# -- booting from the build's memory snapshot ---------------------------------------------------

CHECK = ROOT / "build_scripts" / "snapshot_check.mjs"


@pytest.fixture(scope="module")
def snapshot_run(tmp_path_factory):
    """A wheel and a memory snapshot made as build.py makes them, booted by snapshot_check.mjs."""
    if not PYODIDE.exists():
        pytest.fail("Pyodide is not installed: run `npm ci --prefix build_scripts` (dev.sh does)")
    sys.path.insert(0, str(ROOT / "build_scripts"))
    import build

    out = tmp_path_factory.mktemp("snapshot-site")
    wheel = build.build_wheel(out)
    pyodide_version = json.loads((PYODIDE.parent / "package.json").read_text())["version"]
    entry = build.make_snapshot(out, wheel, pyodide_version, "gzip")
    manifest = {"wheel": wheel.relative_to(out).as_posix(), "snapshot": entry}
    (out / "manifest.json").write_text(json.dumps(manifest))
    proc = subprocess.run(["node", str(CHECK), str(out)], input=json.dumps(REQUESTS), capture_output=True,
                          text=True, timeout=300)
    # Node echoes the minified source line of a throw: show the readable lines only.
    assert proc.returncode == 0, "\n".join(line for line in proc.stderr.splitlines() if len(line) < 400)[-3000:]
    return entry, json.loads(proc.stdout)


def test_snapshot_carries_the_key_of_its_wheel(snapshot_run):
    entry, run = snapshot_run
    assert run["key_matches"]
    assert json.loads(entry["key"])["pyodide"] == run["pyodide"]


def test_snapshot_imported_every_core_module_and_ran_the_cached_loaders(snapshot_run):
    entry, _ = snapshot_run
    import pkgutil

    import acidscape

    names = {m.name for m in pkgutil.walk_packages(acidscape.__path__, "acidscape.")} - {"acidscape.__main__"}
    assert entry["modules"] == len(names) - len(entry["skipped_modules"])
    assert any(name.endswith("library._systems") for name in entry["loaders"])


def test_files_are_gone_after_a_snapshot_boot_unless_written_before_python_starts(snapshot_run):
    # From the snapshot alone, a module imported lazily and a data file read anew fail (files
    # of Pyodide's file system do not survive in a snapshot); with the wheel's files written
    # into site-packages before Python starts, as the worker does, both work.
    # acidscape.__main__ is never imported before the snapshot; each cached loader is called
    # with its cache cleared, so it reads its CSV file again.
    _, run = snapshot_run
    assert run["without_files"]["lazy_import"] == "ModuleNotFoundError"
    file_readers = {k: v for k, v in run["without_files"]["loaders"].items() if "library" in k}
    assert file_readers and all(v != "ok" for v in file_readers.values())
    assert run["with_files"]["lazy_import"] == "ok"
    assert set(run["with_files"]["loaders"].values()) == {"ok"}


@pytest.mark.parametrize("index", range(len(REQUESTS)))
def test_snapshot_boot_gives_the_same_answers_as_host_cpython(snapshot_run, index):
    _, run = snapshot_run
    req = REQUESTS[index]
    host = json.loads(dispatch.handle(req["method"], json.dumps(req["params"])))
    _close(run["answers"][index], host)
