"""The worker boots Python from the build's memory snapshot, and falls back to an ordinary boot.

The snapshot (snapshots/*.bin.gz, named in manifest.json with its key: the Pyodide version and
the sha256 of the wheel) is used only when it was made by this Pyodide, loads, and carries the
manifest's key. Each fallback case serves a temporary copy of dist/ with one thing broken and
checks that the page still draws its first result, booted the ordinary way.
"""

from __future__ import annotations

import gzip
import json
import shutil
import sys
import threading
from pathlib import Path

import pytest
from playwright.sync_api import expect

pytestmark = pytest.mark.e2e

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "build_scripts"))
from serve import make_server  # noqa: E402

BOOT_MS = 90_000
BOOT_INFO = "() => import('./py.js').then((m) => m.sharedPython().boot)"


def test_page_boots_from_the_snapshot(page, watch):
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    boot = page.evaluate(BOOT_INFO)
    assert boot["snapshot"] is True
    assert boot["ms"]["snapshot_fetched"] <= boot["ms"]["runtime"] <= boot["ms"]["ready"]
    assert any("/snapshots/" in url for url in watch.requests)
    versions = page.evaluate("() => import('./py.js').then((m) => m.sharedPython().ready)")
    assert versions["protocol"] == page.evaluate("() => import('./py.js').then((m) => m.PROTOCOL_VERSION)")


@pytest.fixture
def broken_copy(site_dir, tmp_path):
    """A served copy of dist/ and its manifest, to break one thing in before opening it."""
    copy = tmp_path / "site"
    shutil.copytree(site_dir, copy)
    server = make_server(copy, 0, quiet=True)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    host, port = server.server_address[:2]
    manifest = json.loads((copy / "manifest.json").read_text())
    yield copy, manifest, f"http://{host}:{port}/"
    server.shutdown()
    server.server_close()


def write_manifest(copy: Path, manifest: dict) -> None:
    (copy / "manifest.json").write_text(json.dumps(manifest))


def boot_ordinary(browser, url: str) -> tuple[dict, list[str], list[str]]:
    context = browser.new_context(service_workers="block")
    try:
        page = context.new_page()
        requests, warnings = [], []
        context.on("request", lambda request: requests.append(request.url))
        page.on("console", lambda msg: msg.type in ("warning", "info") and warnings.append(msg.text))
        page.goto(url)
        expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
        assert int(page.get_attribute("body", "data-drawn")) >= 1
        return page.evaluate(BOOT_INFO), requests, warnings
    finally:
        context.close()


def test_missing_snapshot_file_boots_the_ordinary_way(browser, broken_copy):
    copy, manifest, url = broken_copy
    (copy / manifest["snapshot"]["file"]).unlink()
    boot, _, warnings = boot_ordinary(browser, url)
    assert boot["snapshot"] is False
    assert any("snapshot could not be loaded" in w for w in warnings), warnings


def test_a_snapshot_pyodide_rejects_boots_the_ordinary_way(browser, broken_copy):
    # A well-formed image of a heap of the right size, all zeros (no Pyodide header): Pyodide
    # refuses it after the runtime is instantiated, and the worker starts an ordinary Pyodide.
    import build

    copy, manifest, url = broken_copy
    image = build.pack_image(bytes(manifest["snapshot"]["bytes"]))
    manifest["snapshot"]["image_bytes"] = len(image)
    write_manifest(copy, manifest)
    (copy / manifest["snapshot"]["file"]).write_bytes(gzip.compress(image, 1))
    boot, _, warnings = boot_ordinary(browser, url)
    assert boot["snapshot"] is False
    assert any("snapshot could not be loaded" in w for w in warnings), warnings


def test_a_snapshot_of_another_core_is_not_used(browser, broken_copy):
    copy, manifest, url = broken_copy
    key = json.loads(manifest["snapshot"]["key"])
    key["wheel_sha256"] = "0" * 64
    manifest["snapshot"]["key"] = json.dumps(key, sort_keys=True)
    write_manifest(copy, manifest)
    boot, _, warnings = boot_ordinary(browser, url)
    assert boot["snapshot"] is False
    assert any("another build of the core" in w for w in warnings), warnings


def test_a_snapshot_of_another_pyodide_is_not_even_fetched(browser, broken_copy):
    copy, manifest, url = broken_copy
    key = json.loads(manifest["snapshot"]["key"])
    key["pyodide"] = "0.0.1"
    manifest["snapshot"]["key"] = json.dumps(key, sort_keys=True)
    write_manifest(copy, manifest)
    boot, requests, warnings = boot_ordinary(browser, url)
    assert boot["snapshot"] is False
    assert not [u for u in requests if "/snapshots/" in u]
    assert any("another Pyodide" in w for w in warnings), warnings


def test_a_build_without_snapshot_boots_the_ordinary_way(browser, broken_copy):
    copy, manifest, url = broken_copy
    shutil.rmtree(copy / "snapshots")
    manifest["snapshot"] = None
    write_manifest(copy, manifest)
    boot, requests, _ = boot_ordinary(browser, url)
    assert boot["snapshot"] is False
    assert not [u for u in requests if "/snapshots/" in u]
