"""The worker boots Python from the build's memory snapshot, and falls back to an ordinary boot.

The snapshot (snapshots/*.bin.gz, named in manifest.json with its key: the Pyodide version and
the sha256 of the wheel) is used only when it was made by this Pyodide, loads, and carries the
manifest's key. Each fallback case serves a temporary copy of dist/ with one thing broken and
checks that the page still draws its first result, booted the ordinary way.

The build answers the first views' requests before saving the heap (build_scripts/snapshot.mjs:
the starting water of site/water-start.js, the worked examples): the answers after a boot from
that snapshot must equal those of an ordinary boot (the oracle: the same core without any
cached state), and the page's first request must be the one the build answered.
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


WATER_PARTS = """async ([method, params]) => {
  const py = (await import('./py.js')).sharedPython();
  await py.ready;
  const parts = [];
  const end = await py.stream(method, params, (result) => parts.push(result));
  return {end, parts};
}"""

# The page's requests to the worker, recorded before its own scripts run.
RECORD_REQUESTS = """(() => {
  const send = Worker.prototype.postMessage;
  window.__sentToWorker = [];
  Worker.prototype.postMessage = function (message, ...rest) {
    window.__sentToWorker.push(JSON.parse(JSON.stringify(message)));
    return send.call(this, message, ...rest);
  };
})()"""


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
        assert int(page.get_attribute("#water-section", "data-drawn")) >= 1  # the first view's result
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


def first_water_request(page) -> dict:
    page.wait_for_function(
        "() => (window.__sentToWorker || []).some((m) => m.method === 'water_view')", timeout=BOOT_MS)
    return page.evaluate("() => window.__sentToWorker.find((m) => m.method === 'water_view').params")


def test_the_build_answered_the_pages_first_request_before_the_snapshot(page, site_dir, watch):
    # One source of truth: the starting water is read from site/water-start.js by the page and
    # by the build; the request the page sends first is the one answered before the heap was saved.
    snapshot = json.loads((site_dir / "manifest.json").read_text())["snapshot"]
    page.add_init_script(RECORD_REQUESTS)
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    sent = first_water_request(page)
    built = snapshot["start_request"]
    # to the letter, conditions included: the answer the build kept is found by its parameters
    # (dispatch.keep_answer), so a page opened plainly draws it as soon as Python is up
    assert sent == built
    assert snapshot["warmed"] >= 3
    assert snapshot["kept_answer_chars"] > 0


def test_answers_after_a_snapshot_boot_equal_an_ordinary_boots(page, browser, broken_copy, site_dir):
    # The first views' waters (answered once before the heap was saved, so their tableaux and
    # compiled code come from the image) against an ordinary boot that starts from nothing.
    manifest = json.loads((site_dir / "manifest.json").read_text())
    presets = json.loads((site_dir / "presets.json").read_text())["presets"]
    curve = manifest["snapshot"]["start_request"]["curve"]
    requests = [("water_view", manifest["snapshot"]["start_request"])]
    for preset in (presets[0], presets[-1]):
        scenario = {"systems": [], "ions": [], **preset["state"]["water"]["scenario"]}
        requests += [("water_view", {**scenario, "curve": curve}), ("solve", scenario)]
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    assert page.evaluate(BOOT_INFO)["snapshot"] is True
    from_snapshot = [page.evaluate(WATER_PARTS, list(r)) for r in requests]

    copy, copied, url = broken_copy
    copied["snapshot"] = None
    write_manifest(copy, copied)
    context = browser.new_context(service_workers="block")
    try:
        fresh = context.new_page()
        fresh.goto(url)
        expect(fresh.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
        assert fresh.evaluate(BOOT_INFO)["snapshot"] is False
        # a new worker with nothing asked yet: the page's own requests are done, ask in a new one
        ordinary = [fresh.evaluate(WATER_PARTS, list(r)) for r in requests]
    finally:
        context.close()
    for request, a, b in zip(requests, from_snapshot, ordinary):
        assert a["end"] == b["end"] == "done", request[0]
        assert len(a["parts"]) == (2 if request[0] == "water_view" else 1)
        assert a["parts"] == b["parts"], request


def test_a_newer_request_stops_the_curves_of_the_one_before(page, watch):
    # The worker lets the page's messages in between the chunks of a water's curves: a newer
    # water_view that arrives while the curves are computed ends the older stream ("dropped")
    # before its curves are done, and a request of one answer sent with it is answered in turn.
    page.goto("/")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    out = page.evaluate("""async () => {
      const py = (await import('./py.js')).sharedPython();
      await py.ready;
      const water = (total) => ({systems: [{id: 'carbonate', total, unit: 'mmol/L'}], ions: [],
                                 curve: {pH_min: 0, pH_max: 14, points: 281}});
      const order = [];
      let second = null;
      const first = py.stream('water_view', water(1.5), (result, index) => {
        order.push(`first ${index}`);
        if (index === 0) {  // the curves are being computed now
          py.call('version').then(() => order.push('version'));
          second = py.stream('water_view', water(2.5), (r, i) => order.push(`second ${i}`));
        }
      });
      const ends = [await first];
      ends.push(await second);
      return {ends, order};
    }""")
    assert out["ends"] == ["dropped", "done"], out
    assert out["order"] == ["first 0", "version", "second 0", "second 1"], out
