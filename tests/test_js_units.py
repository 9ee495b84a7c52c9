"""Runs the Node unit tests of the page's pure modules (tests/js/*.test.mjs: parse.js, format.js,
section.js, share.js) under pytest, so CI runs them with everything else."""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

JS_TESTS = Path(__file__).resolve().parent / "js"
NODE = shutil.which("node")


@pytest.mark.skipif(NODE is None, reason="node is not installed")
def test_node_unit_tests_pass():
    assert sorted(JS_TESTS.glob("*.test.mjs")), "no Node unit tests found"
    done = subprocess.run([NODE, "--test", "tests/js/"], cwd=JS_TESTS.parents[1], capture_output=True, text=True,
                          timeout=300)
    report = done.stdout + done.stderr
    assert done.returncode == 0, report[-6000:]
    # node's TAP summary: every file ran and none failed
    assert "# fail 0" in report, report[-3000:]
    assert "# pass 0" not in report, report[-3000:]
