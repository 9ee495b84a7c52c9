"""The build output (dist/) without a browser: manifest, service worker, licences, plot templates,
the memory snapshot, and the same bytes from two builds of the same tree.

Hashes are recomputed here with hashlib; file lists are walked independently of build.py.
"""

from __future__ import annotations

import base64
import gzip
import hashlib
import json
import re
import shutil
import subprocess
import sys
import zipfile
from importlib.metadata import version
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
BUILD = REPO / "build_scripts" / "build.py"


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
    assert "acidscape/boundary/api.py" in names
    source_data = {p.name for p in (REPO / "pycore" / "acidscape" / "data").glob("*") if p.suffix in (".csv", ".json")}
    assert source_data and source_data <= {Path(n).name for n in names if n.startswith("acidscape/data/")}
    assert not [n for n in names if n.endswith((".so", ".pyd"))]


def service_worker_caches(dist: Path) -> dict:
    sw = (dist / "sw.js").read_text()
    assert "/*@" not in sw  # every template marker was filled
    return json.loads(re.search(r"const CACHES = (\{.*?\n\});", sw, re.S).group(1))


def test_service_worker_caches_every_file_once_with_its_integrity_hash(dist):
    caches = service_worker_caches(dist)
    assert set(caches) == {"vendor", "snapshot", "app"}
    urls = [url for group in caches.values() for url, _ in group["assets"]]
    assert len(urls) == len(set(urls))
    assert set(urls) == {"./"} | {"./" + rel for rel in walk(dist) - {"sw.js"}}
    for group, entry in caches.items():
        for url, integrity in entry["assets"]:
            rel = "index.html" if url == "./" else url[2:]
            digest = base64.b64encode(hashlib.sha256((dist / rel).read_bytes()).digest()).decode()
            assert integrity == f"sha256-{digest}", url
            assert group == ("vendor" if rel.startswith("vendor/") else
                             "snapshot" if rel.startswith("snapshots/") else "app"), url


def test_each_cache_is_named_by_its_own_contents(dist):
    # A build that changes only the page or the core keeps the vendor cache's name: the name
    # hashes that group's URLs and integrity hashes and nothing else.
    for group, entry in service_worker_caches(dist).items():
        digest = hashlib.sha256()
        for url, integrity in entry["assets"]:
            digest.update(url.encode() + b"\0" + integrity.encode() + b"\n")
        assert entry["name"] == f"acidscape-{group}-{digest.hexdigest()[:12]}"


def test_snapshot_belongs_to_this_wheel_and_pyodide(dist):
    manifest = json.loads((dist / "manifest.json").read_text())
    entry = manifest["snapshot"]
    lock = json.loads((REPO / "build_scripts" / "package-lock.json").read_text())
    wheel_sha = hashlib.sha256((dist / manifest["wheel"]).read_bytes()).hexdigest()
    assert json.loads(entry["key"]) == {
        "pyodide": lock["packages"]["node_modules/pyodide"]["version"],
        "wheel_sha256": wheel_sha,
    }
    assert entry["encoding"] == "gzip" and entry["file"].endswith(".img.gz")
    image = gzip.decompress((dist / entry["file"]).read_bytes())
    assert len(image) == entry["image_bytes"] < entry["bytes"]
    sys.path.insert(0, str(REPO / "build_scripts"))
    import build

    heap = build.unpack_image(image)
    assert len(heap) == entry["bytes"]
    assert heap[:4] != b"ASNP"  # Pyodide's own header comes first
    # The key is a Python string inside the saved heap (__main__._acidscape_snapshot), and the
    # core's cached loaders were run before the heap was saved.
    assert entry["key"].encode() in heap
    assert any(name.endswith("library._systems") for name in entry["loaders"])


def test_packed_snapshot_image_round_trips():
    # Zero pages at the start, between runs and at the end, and a last page cut short.
    sys.path.insert(0, str(REPO / "build_scripts"))
    import build

    page = build.IMAGE_PAGE
    heap = bytearray(11 * page + 100)
    heap[page + 5] = 1
    heap[3 * page:5 * page] = bytes(range(256)) * (2 * page // 256)
    heap[-1] = 7
    image = build.pack_image(bytes(heap))
    assert len(image) == 20 + 8 * 3 + (1 + 2) * page + 100
    assert build.unpack_image(image) == bytes(heap)
    assert build.unpack_image(build.pack_image(bytes(page))) == bytes(page)


def test_wheel_entries_are_sorted_with_fixed_times_and_modes(dist):
    manifest = json.loads((dist / "manifest.json").read_text())
    infos = zipfile.ZipFile(dist / manifest["wheel"]).infolist()
    names = [i.filename for i in infos]
    assert names[-1].endswith(".dist-info/RECORD")
    body = [n for n in names if ".dist-info/" not in n]
    assert body == sorted(body) and names[: len(body)] == body
    assert {i.date_time for i in infos} == {infos[0].date_time}
    assert {i.external_attr >> 16 for i in infos} == {0o100644}


def test_two_builds_of_the_same_tree_are_byte_identical(tmp_path):
    # Two fresh builds of one copy of the tree (the working tree may change meanwhile): every
    # file, the wheel, the snapshot and sw.js (so the cache names) included.
    tree = tmp_path / "tree"
    ignore = shutil.ignore_patterns("node_modules", "__pycache__", "*.egg-info", "build")
    for name in ("pycore", "site", "build_scripts"):
        shutil.copytree(REPO / name, tree / name, ignore=ignore)
    for name in ("pyproject.toml", "LICENSE", "README.md"):
        shutil.copy2(REPO / name, tree / name)
    (tree / "build_scripts" / "node_modules").symlink_to(REPO / "build_scripts" / "node_modules")
    outs = [tmp_path / "one", tmp_path / "two"]
    for out in outs:
        done = subprocess.run([sys.executable, str(tree / "build_scripts" / "build.py"), "--out", str(out)],
                              capture_output=True, text=True, timeout=900)
        assert done.returncode == 0, done.stdout + done.stderr
    files = [walk(out) for out in outs]
    assert files[0] == files[1]
    differ = [rel for rel in sorted(files[0]) if (outs[0] / rel).read_bytes() != (outs[1] / rel).read_bytes()]
    assert differ == []
    manifest = json.loads((outs[0] / "manifest.json").read_text())
    assert manifest["wheel"].endswith(".whl") and manifest["snapshot"]["file"] in files[0]


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
