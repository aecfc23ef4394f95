"""Browser fixtures: a real app server on loopback and Debian's Chromium via Playwright.

The browser tests skip, saying why, when Chromium or Playwright is missing; with
``TRIALS_REQUIRE_BROWSER=1`` (set by .ci/run) that is a failure instead.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
OUTPUT = ROOT / "test-output" / "e2e"


def _missing(message: str):
    if os.environ.get("TRIALS_REQUIRE_BROWSER"):
        pytest.fail(message + "; TRIALS_REQUIRE_BROWSER=1 makes this a failure")
    pytest.skip(message)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_app(tmp_path: Path, *, passcode: str | None = None, demo: bool = True):
    """Start ``streamlit run trials/app.py`` on a free loopback port; return (url, proc, db)."""
    db = f"sqlite:///{tmp_path / 'e2e.db'}"
    from trials import service
    from trials.demo import seed_demo

    store = service.open_store(db)
    if demo:
        seed_demo(store)
    port = _free_port()
    env = {k: v for k, v in os.environ.items() if k != "TRIALS_PASSCODE"}
    env["TRIALS_DB"] = db
    if passcode:
        env["TRIALS_PASSCODE"] = passcode
    from trials.cli import app_command

    cmd = app_command(port, "127.0.0.1")
    if "--server.headless" not in cmd:
        cmd += ["--server.headless", "true"]
    log = open(tmp_path / "server.log", "wb")
    proc = subprocess.Popen(cmd, env=env, stdout=log, stderr=subprocess.STDOUT, cwd=ROOT)
    url = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        try:
            with urllib.request.urlopen(url + "/_stcore/health", timeout=2) as r:
                if r.status == 200:
                    return url, proc, db
        except OSError:
            time.sleep(0.3)
    proc.kill()
    raise RuntimeError("the app server did not answer /_stcore/health within 60 s")


@pytest.fixture
def app_server(tmp_path):
    url, proc, db = start_app(tmp_path)
    yield url, db
    proc.terminate()
    proc.wait(timeout=10)


@pytest.fixture(scope="session")
def browser():
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if not exe:
        _missing("no chromium on PATH (scripts/test.sh installs Debian's package as root)")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("playwright is not installed (the test extra has it)")
    with sync_playwright() as pw:
        b = pw.chromium.launch(
            executable_path=exe,
            args=["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                  "--disable-component-update", "--disable-sync", "--no-first-run"],
        )
        yield b
        b.close()


@pytest.fixture
def tablet(browser):
    """A tablet-sized page (portrait, touch)."""
    context = browser.new_context(viewport={"width": 820, "height": 1180}, has_touch=True)
    page = context.new_page()
    yield page
    context.close()


@pytest.fixture
def shots(request) -> Path:
    folder = OUTPUT / request.node.name
    folder.mkdir(parents=True, exist_ok=True)
    return folder
