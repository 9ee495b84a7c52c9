"""Fixtures for the end-to-end tests: the built site on a loopback server, Debian Chromium.

- ``site_dir``: ``dist/``, rebuilt once per session by build_scripts/build.py when it is
  missing or older than any of its inputs (site/, pycore/acidscape/, build_scripts/).
- ``base_url``: an HTTP server for ``dist/`` on 127.0.0.1 with a free port (pytest-playwright
  resolves ``page.goto("/")`` against it).
- ``browser_type_launch_args``: use /usr/bin/chromium (``bash build_scripts/dev.sh setup-test``
  installs it with apt when missing); Playwright's own browser builds are not used.
- ``watch``: a page whose console errors, uncaught exceptions, CSP violations and request
  origins are recorded; ``watch.assert_clean()`` checks them.
- ``settled(page)``: wait until the page has no computation scheduled or running
  (body[data-pending] = "0"), a condition rather than a timeout.
- ``show_job(page, name)``: bring a job of the workbench into view (its switcher button); one
  job is shown at a time, the water's inputs and headline always.
- ``core_handle(method, params_json)``: the core's JSON entry point, as the worker calls it.
- ``core_scenario(scenario)``: a page scenario with each ion id as the core's library has it
  (word ids, or the formula ids of a core that has not moved to words yet).
- For the jobs' page tests: ``core(method, params)`` (the core's answer, which must be ok),
  ``page_water(page)``, ``open_job(page, fragment, job, blocks)``, ``draw_marks(job)`` (the
  job's draw counts and a wait for the next), ``close(a, b)``, ``data_number(page, selector)``,
  ``preset_water(id)``, ``plain_link(state)``, ``STATE`` and ``JOB_MS``.
- ``AXE``: axe-core's axe.min.js (build_scripts/node_modules, a dev dependency) for the
  accessibility checks.
"""

from __future__ import annotations

import base64
import json
import math
import subprocess
import sys
import threading
from pathlib import Path
from urllib.parse import urlsplit

import os

import pytest

REPO = Path(__file__).resolve().parents[2]
DIST = Path(os.environ["ACIDSCAPE_DIST"]).resolve() if os.environ.get("ACIDSCAPE_DIST") else REPO / "dist"
CHROMIUM = Path("/usr/bin/chromium")
AXE = REPO / "build_scripts" / "node_modules" / "axe-core" / "axe.min.js"

# Format-1 formula ids -> format-2 word ids of the strong ions (site/share.js ION_WORDS).
ION_WORDS = {
    "Na+": "sodium", "K+": "potassium", "Li+": "lithium", "Ca+2": "calcium", "Mg+2": "magnesium",
    "Sr+2": "strontium", "Ba+2": "barium", "Cl-": "chloride", "Br-": "bromide", "I-": "iodide",
    "NO3-": "nitrate", "SO4-2": "sulfate", "ClO4-": "perchlorate", "ClO3-": "chlorate", "BrO3-": "bromate",
}


def core_handle(method: str, params_json: str) -> str:
    """The core's JSON entry point (``acidscape.boundary.dispatch.handle``; ``api.handle`` in a
    core from before that module)."""
    try:
        from acidscape.boundary.dispatch import handle
    except ImportError:
        from acidscape.boundary.api import handle
    return handle(method, params_json)


def core_scenario(scenario: dict) -> dict:
    """``scenario`` with each ion id spelled as the core's library has it (see module doc)."""
    known = {i["id"] for i in json.loads(core_handle("systems", "{}"))["result"]["ions"]}
    back = {w: f for f, w in ION_WORDS.items()}
    ions = [dict(e, id=back.get(e["id"], ION_WORDS.get(e["id"], e["id"])))
            if isinstance(e, dict) and "id" in e and e["id"] not in known else e
            for e in scenario.get("ions", [])]
    return {**scenario, "ions": ions}


def settled(page, timeout: int = 30_000) -> None:
    """Wait until no computation of the page is scheduled or with the core."""
    page.wait_for_function("() => document.body.dataset.pending === '0'", timeout=timeout)


def show_job(page, name: str, timeout: int = 90_000) -> None:
    """Bring the workbench's job ``name`` into view with its switcher button (site/workbench.js:
    water, treat, titrate, scale, softening, lead, hardness, batch, explorer), as a user does;
    inputs of a hidden job cannot be filled or clicked."""
    page.locator(f"#job-tab-{name}").click(timeout=timeout)
    page.wait_for_function("(n) => document.body.dataset.job === n", arg=name, timeout=timeout)


# -- the jobs' page tests (test_page_lead, _hardness, _scale, _softening): the page's water, its
#    answer from the core in this process, and the job's draw marks --------------------------------

#: How long a job's page may take to boot, compute and draw on a machine shared by several runs [ms].
JOB_MS = 120_000
#: The page's inputs as its own registry collects them (site/state.js collectState).
STATE = "async () => (await import('./state.js')).collectState()"


def core(method: str, params: dict) -> dict:
    """The core's answer to ``method`` with ``params`` (:func:`core_handle`); a refusal fails the test."""
    reply = json.loads(core_handle(method, json.dumps(params)))
    assert reply["ok"], reply
    return reply["result"]


def page_water(page) -> dict:
    """The water on the page (its input-state registry) as a scenario for the core (:func:`core_scenario`)."""
    return core_scenario(page.evaluate(STATE)["water"]["scenario"])


def draw_marks(job: str):
    """``(drawn, wait_drawn)`` for the blocks of the workbench's job ``job``: the page raises
    ``#job-<job>[data-<block>-drawn]`` each time it draws a block (site/job-view.js).

    ``drawn(page, block)`` reads the count; ``wait_drawn(page, block, before=0, settle=False)``
    waits until it is above ``before`` (a condition, :data:`JOB_MS`), then with ``settle`` until
    the page has nothing left to compute (:func:`settled`).
    """
    def count(block: str) -> str:
        return f"Number(document.getElementById('job-{job}').dataset.{block}Drawn || 0)"

    def drawn(page, block: str) -> int:
        return int(page.evaluate(f"() => {count(block)}"))

    def wait_drawn(page, block: str, before: int = 0, *, settle: bool = False) -> None:
        page.wait_for_function(f"(n) => {count(block)} > n", arg=before, timeout=JOB_MS)
        if settle:
            settled(page, JOB_MS)

    return drawn, wait_drawn


def open_job(page, fragment: str, job: str, blocks=()) -> dict:
    """Open the page at ``/<fragment>`` (``#preset=<id>`` or a link), wait until it is ready and
    settled, bring ``job`` into view, wait until each of its ``blocks`` has been drawn and the
    page has settled again; returns :func:`page_water`."""
    from playwright.sync_api import expect

    page.goto("/" + fragment)
    expect(page.locator("body")).to_have_attribute("data-ready", "true", timeout=JOB_MS)
    settled(page, JOB_MS)
    show_job(page, job)
    _, wait_drawn = draw_marks(job)
    for block in blocks:
        wait_drawn(page, block)
    settled(page, JOB_MS)
    return page_water(page)


def close(a, b, rel: float = 1e-9, abs_: float = 1e-12) -> bool:
    """``a`` and ``b`` (numbers, or the page's data-value strings) agree to ``rel`` or ``abs_``."""
    return math.isclose(float(a), float(b), rel_tol=rel, abs_tol=abs_)


def data_number(page, selector: str, attr: str = "data-value") -> float:
    """The number the page wrote in ``attr`` of ``selector``; an empty or missing one fails the test."""
    text = page.get_attribute(selector, attr)
    assert text not in (None, ""), selector
    return float(text)


def preset_water(preset_id: str) -> dict:
    """The water (state section ``water``) of the invented example ``preset_id`` of site/presets.json."""
    presets = json.loads((REPO / "site" / "presets.json").read_text(encoding="utf-8"))["presets"]
    return next(p for p in presets if p["id"] == preset_id)["state"]["water"]


def plain_link(state: dict) -> str:
    """``#s=<v>.<data>``, a plain link to ``state`` (site/share.js: base64url of the state's UTF-8
    JSON, no padding)."""
    raw = json.dumps(state).encode()
    return f"#s={state['v']}." + base64.urlsafe_b64encode(raw).decode().rstrip("=")

sys.path.insert(0, str(REPO / "build_scripts"))
from serve import make_server  # noqa: E402

# Collects Content-Security-Policy violations in every frame, before the page's own scripts run.
CSP_WATCH = """
window.__cspViolations = [];
document.addEventListener("securitypolicyviolation", (e) => {
  window.__cspViolations.push(`${e.violatedDirective} ${e.blockedURI}`);
});
"""


def _build_inputs() -> list[Path]:
    roots = [REPO / "site", REPO / "pycore" / "acidscape", REPO / "build_scripts"]
    files = [REPO / "pyproject.toml", REPO / "LICENSE"]
    for root in roots:
        for path in root.rglob("*"):
            if path.is_file() and "node_modules" not in path.parts and "__pycache__" not in path.parts:
                files.append(path)
    return files


def _stale_reason() -> str | None:
    manifest = DIST / "manifest.json"
    if not manifest.exists():
        return "dist/ has not been built"
    built = manifest.stat().st_mtime
    newer = [p for p in _build_inputs() if p.stat().st_mtime > built]
    if newer:
        return f"{newer[0].relative_to(REPO)} is newer than dist/"
    return None


@pytest.fixture(scope="session")
def site_dir() -> Path:
    reason = _stale_reason()
    if reason:
        done = subprocess.run(
            [sys.executable, str(REPO / "build_scripts" / "build.py"), "--out", str(DIST)], capture_output=True, text=True
        )
        if done.returncode != 0:
            pytest.fail(
                f"{reason}, and building it failed; run `bash build_scripts/dev.sh setup-test`.\n"
                + done.stdout
                + done.stderr,
                pytrace=False,
            )
    return DIST


@pytest.fixture(scope="session")
def site_server(site_dir):
    server = make_server(site_dir, 0, quiet=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    host, port = server.server_address[:2]
    yield f"http://{host}:{port}"
    server.shutdown()
    server.server_close()


@pytest.fixture(scope="session")
def base_url(site_server):
    return site_server


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args):
    if not CHROMIUM.exists():
        pytest.fail(
            f"{CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium), "
            "or run `bash build_scripts/dev.sh setup-test`, which does it.",
            pytrace=False,
        )
    return {
        **browser_type_launch_args,
        "executable_path": str(CHROMIUM),
        "args": ["--disable-gpu"],
    }


class PageWatch:
    """What a page did that a test may want to forbid."""

    def __init__(self, context, page, origin: str):
        self.page = page
        self.origin = origin
        self.console_errors: list[str] = []
        self.requests: list[str] = []
        page.add_init_script(CSP_WATCH)
        context.on("request", lambda request: self.requests.append(request.url))
        page.on("console", lambda msg: msg.type == "error" and self.console_errors.append(msg.text))
        page.on("pageerror", lambda exc: self.console_errors.append(f"uncaught: {exc}"))

    def csp_violations(self) -> list[str]:
        return self.page.evaluate("() => window.__cspViolations || []")

    def foreign_requests(self) -> list[str]:
        own = urlsplit(self.origin).netloc
        return [
            url
            for url in self.requests
            if urlsplit(url).scheme not in ("data", "blob") and urlsplit(url).netloc != own
        ]

    def assert_clean(self) -> None:
        assert self.console_errors == [], f"console errors: {self.console_errors}"
        assert self.csp_violations() == [], "CSP violations"
        assert self.foreign_requests() == [], "requests to other origins"


@pytest.fixture
def watch(context, page, base_url):
    """The test's page with its console, CSP and requests recorded; checked clean at the end."""
    w = PageWatch(context, page, base_url)
    yield w
    w.assert_clean()


def pytest_collection_modifyitems(config, items):
    """Every test in this folder is an e2e test (``-m "not e2e"`` leaves them all out)."""
    here = Path(__file__).resolve().parent
    for item in items:
        if here in Path(str(item.fspath)).resolve().parents:
            item.add_marker(pytest.mark.e2e)
