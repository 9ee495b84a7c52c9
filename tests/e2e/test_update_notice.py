"""A saved or hosted copy tells the user when a newer build is being served.

The page is served from a temporary copy of dist/. After the service worker controls the
page, the copy's sw.js is replaced by a build with another cache name (what build.py writes
whenever any file changes); the browser's update check must then show "#update-notice", and
its reload button must bring the page back under the new worker with the old cache deleted.
"""

from __future__ import annotations

import re
import shutil
import sys
import threading
from pathlib import Path

import pytest
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "build_scripts"))
from serve import make_server  # noqa: E402

BOOT_MS = 90_000


@pytest.fixture
def copy_url(site_dir, tmp_path):
    copy = tmp_path / "site"
    shutil.copytree(site_dir, copy)
    server = make_server(copy, 0, quiet=True)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    host, port = server.server_address[:2]
    yield copy, f"http://{host}:{port}/"
    server.shutdown()


def _cache_name(sw: Path) -> str:
    return re.search(r'const CACHE_NAME = "([^"]+)";', sw.read_text()).group(1)


def test_new_build_shows_notice_and_reload_takes_it(page: Page, copy_url):
    copy, url = copy_url
    page.goto(url)
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    page.evaluate("() => navigator.serviceWorker.ready")
    if not page.evaluate("() => Boolean(navigator.serviceWorker.controller)"):
        page.wait_for_function("() => Boolean(navigator.serviceWorker.controller)", timeout=30_000)
    expect(page.locator("#update-notice")).to_be_hidden()
    old = _cache_name(copy / "sw.js")
    assert page.evaluate("() => caches.keys()") == [old]

    # A new build: same assets, another content hash in the cache name.
    sw = copy / "sw.js"
    sw.write_text(sw.read_text().replace(f'"{old}"', '"acidscape-0123456789ab"'))
    page.evaluate("() => navigator.serviceWorker.getRegistration().then((r) => r.update())")
    expect(page.locator("#update-notice")).to_be_visible(timeout=60_000)

    page.click("#update-reload")
    page.wait_for_load_state("load")
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    for _ in range(300):  # the old cache is deleted when the new worker activates
        if page.evaluate("() => caches.keys()") == ["acidscape-0123456789ab"]:
            break
        page.wait_for_timeout(100)
    assert page.evaluate("() => caches.keys()") == ["acidscape-0123456789ab"]
    assert page.evaluate("() => navigator.serviceWorker.controller.scriptURL").endswith("/sw.js")
    expect(page.locator("#update-notice")).to_be_hidden()
