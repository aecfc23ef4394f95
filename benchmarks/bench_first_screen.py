"""The first screen after ``trials app``: how long from a healthy server to the trials
list, against one empty Streamlit page served the same way. Figures and ratios are
printed; nothing passes or fails on time.

For each server (the app, then the floor: a one-line page, ``st.title``, served by the
same ``streamlit run`` command line as :func:`trials.cli.app_command`), a fresh process
is started, ``/_stcore/health`` is polled until it answers, and then Debian's Chromium
(through Playwright, launched beforehand) opens the root address:

- the app: until its heading "Trials" and then its table of trials (the data grid)
  are drawn;
- the floor: until its heading is drawn;
- then a reload of the same tab (the warm case: modules imported, store open).

The store holds the invented demo (``trials demo``), grown to ``--trials`` trials from
its archives (default 300). The issue's goal: the trials list in under 2 s after the
server is healthy.

Usage: .venv/bin/python benchmarks/bench_first_screen.py [--trials N] [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import shutil
import socket
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from trials import service  # noqa: E402
from trials.cli import app_command  # noqa: E402

FLOOR = "import streamlit as st\n\nst.title('Trials')\n"
TIMEOUT_MS = 120_000


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def serve(entry: Path | None, db: str, log: Path) -> tuple[str, subprocess.Popen]:
    """Start the app (``entry`` None) or another script with the app's command line;
    return once ``/_stcore/health`` answers."""
    port = _free_port()
    cmd = app_command(port, "127.0.0.1")
    if "--server.headless" not in cmd:
        cmd += ["--server.headless", "true"]
    if entry is not None:
        cmd[cmd.index(str(ROOT / "trials" / "app.py"))] = str(entry)
    env = {k: v for k, v in os.environ.items() if k != "TRIALS_PASSCODE"}
    env.update(TRIALS_DB=db, PYTHONPATH=str(ROOT))
    proc = subprocess.Popen(cmd, env=env, cwd=ROOT, stdout=log.open("wb"),
                            stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline:
        try:
            with urllib.request.urlopen(url + "/_stcore/health", timeout=2) as r:
                if r.status == 200:
                    return url, proc
        except OSError:
            time.sleep(0.05)
    proc.kill()
    raise RuntimeError(f"no health answer from {url}; see {log}")


def first_screen(browser, entry: Path | None, db: str, log: Path, shot: Path | None):
    """(first open, reload, first heading) seconds until the heading and, for the app,
    the table."""
    url, proc = serve(entry, db, log)
    try:
        page = browser.new_context(viewport={"width": 1280, "height": 900}).new_page()

        def drawn() -> float:
            """Seconds from t0 to the heading; returns once the table is drawn too."""
            page.get_by_role("heading", name="Trials").first.wait_for(timeout=TIMEOUT_MS)
            heading = time.perf_counter() - t0
            if entry is None:
                page.locator("[data-testid='stDataFrame'] canvas").first.wait_for(
                    timeout=TIMEOUT_MS)
            return heading

        t0 = time.perf_counter()
        page.goto(url)
        heading = drawn()
        first = time.perf_counter() - t0
        if shot is not None:
            page.wait_for_timeout(500)
            page.screenshot(path=str(shot))
        t0 = time.perf_counter()
        page.reload()
        drawn()
        again = time.perf_counter() - t0
        page.context.close()
        return first, again, heading
    finally:
        proc.terminate()
        proc.wait(timeout=20)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--trials", type=int, default=300)
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--shot", help="save a screenshot of the app's first screen here")
    args = parser.parse_args()
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if not exe:
        sys.exit("no chromium on PATH")
    from playwright.sync_api import sync_playwright

    sys.path.insert(0, str(ROOT / "benchmarks"))
    from bench_history import fill

    folder = Path(tempfile.mkdtemp(prefix="bench-first-"))
    db = f"sqlite:///{folder / 'trials.db'}"
    store = service.open_store(db)
    fill(store, args.trials)
    store.close()
    floor_script = folder / "empty.py"
    floor_script.write_text(FLOOR, encoding="utf-8")
    app, floor = [], []
    with sync_playwright() as pw:
        browser = pw.chromium.launch(
            executable_path=exe,
            args=["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                  "--disable-component-update", "--disable-sync", "--no-first-run"])
        for k in range(args.repeat):  # alternate, so that load on the machine hits both
            shot = Path(args.shot) if args.shot and k == 0 else None
            app.append(first_screen(browser, None, db, folder / f"app{k}.log", shot))
            floor.append(first_screen(browser, floor_script, db, folder / f"floor{k}.log",
                                      None))
        browser.close()
    print(f"store: {args.trials} trials; {args.repeat} fresh servers each, alternating")
    for i, name in ((0, "first open after health"), (1, "reload (warm)")):
        a = [x[i] for x in app]
        f = [x[i] for x in floor]
        ma, mf = statistics.median(a), statistics.median(f)
        print(f"{name}: app (trials list drawn) median {ma:.2f} s "
              f"[{min(a):.2f}-{max(a):.2f}], empty page median {mf:.2f} s "
              f"[{min(f):.2f}-{max(f):.2f}]; ratio app/floor {ma / mf:.2f}, "
              f"above floor {ma - mf:.2f} s; ratio to the 2 s goal {ma / 2.0:.2f}")
    heads = [x[2] for x in app]
    print(f"the app's heading alone (first open): median {statistics.median(heads):.2f} s "
          f"[{min(heads):.2f}-{max(heads):.2f}]")


if __name__ == "__main__":
    main()
