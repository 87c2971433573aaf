"""Shared test configuration: Debian's Chromium for the browser tests, Node.js for the
review file's script.

Browser downloads are impossible on the project's machines, so the tests drive the Chromium of
the Debian package (installed by .ci/run). Without it the browser tests skip with a reason;
with EXPLORER_REQUIRE_BROWSER=1 (set by .ci/run) a missing browser is an error instead. The
tests of explorer/static/review.js run it under Node.js (Debian's ``nodejs``, installed by .ci/run)
through the ``node`` fixture: without it they skip, and with EXPLORER_REQUIRE_NODE=1 (set by
.ci/run) they fail.
"""

from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

import pytest

#: Launch flags known to work headless as root on the project's machines (found by trial):
#: no sandbox, no GPU, no background traffic, and no DNS at all except loopback.
CHROMIUM_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE 127.0.0.1",
]

ARTIFACTS = Path(os.environ.get("EXPLORER_TEST_ARTIFACTS", "test-artifacts"))


def chromium_binary() -> str | None:
    """The real Chromium binary of Debian's package (the `chromium` command is a wrapper)."""
    if shutil.which("dpkg") is None:
        return None
    try:
        files = subprocess.run(["dpkg", "-L", "chromium"], capture_output=True, text=True,
                               timeout=30).stdout.split()
    except (OSError, subprocess.SubprocessError):
        return None
    for f in files:
        if f.endswith("/chromium") and "/lib/" in f and os.path.isfile(f) and os.access(f, os.X_OK):
            return f
    return None


@pytest.fixture(scope="session")
def chromium_path() -> str:
    path = chromium_binary()
    if path is None:
        if os.environ.get("EXPLORER_REQUIRE_BROWSER") == "1":
            pytest.fail("Debian's chromium is not installed, but EXPLORER_REQUIRE_BROWSER=1 "
                        "(CI) requires the browser tests to run")
        pytest.skip("Debian's chromium package is not installed (apt-get install chromium)")
    return path


@pytest.fixture(scope="session")
def node() -> str:
    """Path of the Node.js binary; skips without it, fails with EXPLORER_REQUIRE_NODE=1."""
    path = shutil.which("node")
    if path is None:
        if os.environ.get("EXPLORER_REQUIRE_NODE") == "1":
            pytest.fail("Node.js is not installed, but EXPLORER_REQUIRE_NODE=1 (CI) requires "
                        "the review script's tests to run")
        pytest.skip("Node.js is not installed (apt-get install nodejs)")
    return path


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args, chromium_path):
    """pytest-playwright's launch arguments: Debian's binary and the flags above."""
    return {**browser_type_launch_args, "executable_path": chromium_path,
            "args": CHROMIUM_ARGS}


@pytest.fixture(scope="session")
def browser_context_args(browser_context_args):
    return {**browser_context_args, "viewport": {"width": 1300, "height": 950}}


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    return ARTIFACTS
