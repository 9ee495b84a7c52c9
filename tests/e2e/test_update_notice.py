"""A newer build served at the same address: the open page says so and keeps running its copy.

The page is served from a temporary copy of dist/. Once the service worker controls the page,
the copy is rebuilt with build_scripts/build.py from page sources that differ in one visible
place (the page title); the core, Pyodide and BokehJS are unchanged. Then:

- the open page shows "#update-notice" (the new worker installed in the background and waits),
  while it keeps running the copy it started with: same title, same caches, and it still computes;
- the new worker fetched only what changed: no file of the vendor or snapshot caches, whose
  names stay the same because their contents did;
- "#update-reload" brings the new build (its title), under the new worker, with the old page
  cache deleted and the unchanged caches kept.

A second test opens a new tab after the rebuild (the browser's own update check on navigation,
which used to let a new build take over silently): the tab still runs the old copy and shows
the notice.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import threading
from pathlib import Path

import pytest
from conftest import show_job
from playwright.sync_api import Page, expect

pytestmark = pytest.mark.e2e

REPO = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "build_scripts"))
from serve import make_server  # noqa: E402

BOOT_MS = 90_000
NEW_TITLE = "Acidscape (rebuilt)"


@pytest.fixture
def served_copy(site_dir, tmp_path):
    copy = tmp_path / "site"
    shutil.copytree(site_dir, copy)
    server = make_server(copy, 0, quiet=True)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    host, port = server.server_address[:2]
    yield copy, f"http://{host}:{port}/"
    server.shutdown()
    server.server_close()


def caches_of(folder: Path) -> dict:
    """{group: cache name} from a built sw.js."""
    text = (folder / "sw.js").read_text()
    groups = json.loads(re.search(r"const CACHES = (\{.*?\n\});", text, re.S).group(1))
    return {group: entry["name"] for group, entry in groups.items()}


def rebuild_with_new_title(copy: Path, tmp_path: Path) -> None:
    sources = tmp_path / "page-sources"
    shutil.copytree(REPO / "site", sources)
    index = sources / "index.html"
    html = index.read_text()
    assert "<title>Acidscape</title>" in html
    index.write_text(html.replace("<title>Acidscape</title>", f"<title>{NEW_TITLE}</title>"))
    done = subprocess.run([sys.executable, str(REPO / "build_scripts" / "build.py"), "--out", str(copy),
                           "--site", str(sources)], capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stdout + done.stderr


def open_controlled(page: Page, url: str) -> None:
    page.goto(url)
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    page.evaluate("() => navigator.serviceWorker.ready")
    page.wait_for_function("() => Boolean(navigator.serviceWorker.controller)", timeout=30_000)


def new_build_waits(page: Page) -> bool:
    """The new worker is installed and waiting (it has not taken over the running page)."""
    page.wait_for_timeout(1000)  # time enough for a worker that skips waiting to take over
    return page.evaluate("() => navigator.serviceWorker.getRegistration().then((r) => Boolean(r.waiting))")


def cache_keys(page: Page) -> set[str]:
    return set(page.evaluate("() => caches.keys()"))


def wait_for_caches(page: Page, want: set[str]) -> None:
    for _ in range(300):  # the old page cache is deleted when the new worker activates
        if cache_keys(page) == want:
            return
        page.wait_for_timeout(100)
    assert cache_keys(page) == want


def test_new_build_shows_notice_keeps_old_copy_and_reload_takes_it(page: Page, context, served_copy, tmp_path):
    copy, url = served_copy
    old = caches_of(copy)
    open_controlled(page, url)
    expect(page.locator("#update-notice")).to_be_hidden()
    wait_for_caches(page, set(old.values()))

    rebuild_with_new_title(copy, tmp_path)
    new = caches_of(copy)
    assert new["app"] != old["app"]
    assert new["vendor"] == old["vendor"] and new["snapshot"] == old["snapshot"]
    fetched = []
    context.on("request", lambda request: fetched.append(request.url))

    # What site/updates.js does every minute while the page is visible.
    page.evaluate("() => navigator.serviceWorker.getRegistration().then((r) => r.update())")
    expect(page.locator("#update-notice")).to_be_visible(timeout=60_000)

    # Until the reload, the page runs the copy it started with, and it still computes.
    assert new_build_waits(page)
    expect(page).to_have_title("Acidscape")
    assert cache_keys(page) == set(old.values()) | set(new.values())
    show_job(page, "explorer")  # a hidden job computes when it is shown: its first result first
    page.wait_for_selector("body[data-drawn]", state="attached", timeout=60_000)
    drawn = int(page.get_attribute("body", "data-drawn"))
    page.fill("#ph-input", "8.3")
    page.wait_for_function("(n) => Number(document.body.dataset.drawn) > n", arg=drawn)
    # The new worker fetched the changed page files only.
    new_worker_fetches = [u for u in fetched if "/vendor/" in u or "/snapshots/" in u]
    assert new_worker_fetches == []
    assert any(u.endswith("/index.html") or u.endswith("/") for u in fetched)

    page.click("#update-reload")
    expect(page).to_have_title(NEW_TITLE, timeout=30_000)
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    wait_for_caches(page, set(new.values()))
    assert page.evaluate("() => navigator.serviceWorker.controller.scriptURL").endswith("/sw.js")
    expect(page.locator("#update-notice")).to_be_hidden()


def test_a_new_tab_after_a_rebuild_runs_the_old_copy_and_shows_the_notice(context, served_copy, tmp_path):
    copy, url = served_copy
    old = caches_of(copy)
    first = context.new_page()
    open_controlled(first, url)
    wait_for_caches(first, set(old.values()))
    rebuild_with_new_title(copy, tmp_path)

    # Opening the page makes the browser check sw.js: the new build installs and waits.
    second = context.new_page()
    second.goto(url)
    expect(second.locator("body")).to_have_attribute("data-ready", "true", timeout=BOOT_MS)
    expect(second).to_have_title("Acidscape")
    expect(second.locator("#update-notice")).to_be_visible(timeout=60_000)
    expect(first.locator("#update-notice")).to_be_visible(timeout=60_000)
    assert new_build_waits(second)
    assert set(old.values()) <= cache_keys(second)
