"""The build output (dist/) without a browser: manifest, service worker, licences, plot templates.

Hashes are recomputed here with hashlib; file lists are walked independently of build.py.
"""

from __future__ import annotations

import hashlib
import json
import re
import zipfile
from importlib.metadata import version
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def dist(site_dir) -> Path:
    return site_dir


def walk(dist: Path) -> set[str]:
    return {p.relative_to(dist).as_posix() for p in dist.rglob("*") if p.is_file()}


def test_manifest_lists_every_file_with_its_sha256(dist):
    manifest = json.loads((dist / "manifest.json").read_text())
    assert set(manifest["files"]) == walk(dist) - {"manifest.json", "sw.js"}
    for rel, digest in manifest["files"].items():
        assert hashlib.sha256((dist / rel).read_bytes()).hexdigest() == digest, rel


def test_manifest_versions_match_the_pinned_inputs(dist):
    manifest = json.loads((dist / "manifest.json").read_text())
    lock = json.loads((REPO / "build_scripts" / "package-lock.json").read_text())
    assert manifest["versions"]["pyodide"] == lock["packages"]["node_modules/pyodide"]["version"] == "314.0.8"
    assert manifest["versions"]["bokeh"] == version("bokeh")
    bokeh_js = (dist / "vendor" / "bokeh" / "bokeh.min.js").read_text(errors="replace")
    assert f'"{version("bokeh")}"' in bokeh_js or f"'{version('bokeh')}'" in bokeh_js
    import acidscape

    assert manifest["versions"]["acidscape"] == acidscape.__version__


def test_wheel_is_pure_python_and_carries_the_data_files(dist):
    manifest = json.loads((dist / "manifest.json").read_text())
    wheel = dist / manifest["wheel"]
    assert re.fullmatch(r"acidscape-[\w.]+-py3-none-any\.whl", wheel.name)
    names = zipfile.ZipFile(wheel).namelist()
    assert "acidscape/api.py" in names
    source_data = {p.name for p in (REPO / "pycore" / "acidscape" / "data").glob("*") if p.suffix in (".csv", ".json")}
    assert source_data and source_data <= {Path(n).name for n in names if n.startswith("acidscape/data/")}
    assert not [n for n in names if n.endswith((".so", ".pyd"))]


def test_service_worker_caches_every_file_under_a_content_hash_name(dist):
    sw = (dist / "sw.js").read_text()
    assets = json.loads(re.search(r"const ASSETS = (\[.*?\]);", sw, re.S).group(1))
    assert set(assets) == {"./"} | {"./" + rel for rel in walk(dist) - {"sw.js"}}
    cache = re.search(r'const CACHE_NAME = "(acidscape-[0-9a-f]{12})";', sw)
    assert cache, "cache name missing"
    assert "/*@" not in sw  # every template marker was filled


def test_third_party_licence_texts_are_shipped(dist):
    folder = dist / "licenses"
    assert "Mozilla Public License" in (folder / "pyodide-MPL-2.0.txt").read_text()
    assert "Version 2.0" in (folder / "pyodide-MPL-2.0.txt").read_text()
    assert "PYTHON SOFTWARE FOUNDATION LICENSE" in (folder / "cpython-LICENSE.txt").read_text()
    bokeh_licence = (folder / "bokehjs-LICENSE.txt").read_text()
    assert "Redistribution and use in source and binary forms" in bokeh_licence
    notice = (folder / "NOTICE.txt").read_text()
    assert "MPL" in notice and "BSD 3-Clause" in notice


def test_plot_templates_name_the_models_the_page_updates(dist):
    templates = json.loads((dist / "plots.json").read_text())
    text = json.dumps(templates)
    for name in ("fraction_fig", "logc_fig", "fraction_src", "fraction_marker", "fraction_legend", "logc_src", "logc_marker", "logc_legend", "logc_y"):
        assert text.count(f'"name": "{name}"') == 1, name
    assert len(templates["palette"]) >= 13  # one colour per species of a 12-step acid
    assert len(set(templates["palette"])) == len(templates["palette"])
    for key in ("distribution", "log_concentration"):
        assert templates[key]["version"] == version("bokeh")
    # The hover shows species, pH and the plotted value.
    assert "@label" in text and "$snap_x" in text and "$snap_y" in text


def test_page_has_the_csp_and_no_inline_script(dist):
    html = (dist / "index.html").read_text()
    assert "script-src 'self' 'wasm-unsafe-eval'" in html
    for script in re.findall(r"<script\b[^>]*>(.*?)</script>", html, re.S):
        assert script.strip() == ""
    assert not re.search(r"\son[a-z]+=", html)  # no inline event handlers


def test_manifest_carries_the_constants_fingerprint(dist):
    # Recomputed here with hashlib over the same files: the report prints this as the
    # version of the constants.
    core = Path(__file__).resolve().parents[2] / "pycore" / "acidscape"
    manifest = json.loads((dist / "manifest.json").read_text())
    digest = hashlib.sha256()
    for rel in manifest["constants"]["files"]:
        path = core / rel
        digest.update(path.name.encode() + b"\0" + path.read_bytes())
    assert manifest["constants"]["sha256"] == digest.hexdigest()
    assert any(rel.endswith("systems.csv") for rel in manifest["constants"]["files"])
