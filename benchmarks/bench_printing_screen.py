""""Prepare the ballots" on the Printing screen against ``trials print ballots``, for an
invented rating trial of 200 panelists x 12 samples (3 attributes). Figures and the
ratio are printed; nothing passes or fails on time.

Both make the same document: ``TRIALS_BASE_URL`` is set for both, so every ballot
carries its panelist's tasting link as a QR code (the screen always prints them when it
knows the app's address). Each side runs in a fresh process, so that the imports a user
waits for count alike:

- the command: ``trials print ballots --study ID --out FILE.pdf`` (its whole run);
- the screen: ``pages/printing.py`` under Streamlit's ``AppTest``; the screen is drawn
  first (not counted: the leader sees it before pressing), then the press on "Prepare
  the ballots" is timed until the run that offers the download ends. The progress bar's
  updates are counted (they come from the printing layer's callback).

The issue's goal: the screen within 1.2 times the command.

With ``--browser`` the press is also made in Debian's Chromium on a fresh app server
(``trials app``'s command line), from the click to the download button.

Usage: .venv/bin/python benchmarks/bench_printing_screen.py [--repeat N] [--browser]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from trials import service  # noqa: E402
from trials.model import Attribute, AttributeKind, Sample  # noqa: E402

PANELISTS, SAMPLES = 200, 12
BASE_URL = "http://kitchen-tablets.invalid:8501"  # invented; only printed in the QR codes

SCREEN = """
import os, sys, time
os.environ.pop("TRIALS_PASSCODE", None)
from streamlit.testing.v1 import AppTest
at = AppTest.from_file(sys.argv[1], default_timeout=600)
at.query_params["study"] = sys.argv[2]
at.run()
assert not at.exception, [e.message for e in at.exception]
button = next(b for b in at.button if b.label == "Prepare the ballots")
t0 = time.perf_counter()
button.click().run()
took = time.perf_counter() - t0
assert not at.exception, [e.message for e in at.exception]
assert any(d.label.startswith("Download the ballots") for d in at.get("download_button"))
print(took)
"""


def build_trial(db: str) -> int:
    store = service.open_store(db)
    codes = [f"L{i:03d}" for i in range(1, PANELISTS + 1)]
    path = Path(tempfile.mkdtemp()) / "roster.csv"
    path.write_text("code,consent_on\n" + "\n".join(f"{c},2026-01-10" for c in codes),
                    encoding="utf-8")
    service.import_panelists(store, path)
    study = service.create_trial(
        store, name="Bench: twelve glazes", method="rating",
        samples=[Sample(f"Glaze {k + 1:02d}", is_control=(k == 0)) for k in range(SAMPLES)],
        attributes=[Attribute("overall liking", kind=AttributeKind.HEDONIC, low=1, high=9),
                    Attribute("sweetness", kind=AttributeKind.INTENSITY, low=1, high=9),
                    Attribute("gloss", kind=AttributeKind.INTENSITY, low=1, high=9)],
    )
    service.draw_plan(store, study.id, panelist_codes=codes, seed=1)
    store.close()
    return study.id


def browser_press(browser, db: str, trial_id: int, folder: Path, k: int) -> tuple[float, bool]:
    """A fresh app server and a real browser: seconds from the press on "Prepare the
    ballots" to the download button, and whether a progress bar was seen meanwhile."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from bench_first_screen import serve

    url, proc = serve(None, db, folder / f"server{k}.log")
    try:
        page = browser.new_context(viewport={"width": 1280, "height": 900}).new_page()
        page.goto(f"{url}/printing?study={trial_id}")
        button = page.get_by_role("button", name="Prepare the ballots")
        button.wait_for(timeout=120_000)
        bar = page.locator("[data-testid='stProgress']")
        t0 = time.perf_counter()
        button.click()
        seen = False
        download = page.get_by_role("button", name="Download the ballots (PDF)")
        while not download.count():
            seen = seen or bar.count() > 0
            page.wait_for_timeout(50)
            if time.perf_counter() - t0 > 300:
                raise RuntimeError("no download button within 300 s")
        took = time.perf_counter() - t0
        if k == 0:
            page.screenshot(path=str(folder / "printing.png"))
        page.context.close()
        return took, seen
    finally:
        proc.terminate()
        proc.wait(timeout=20)


def run(cmd: list[str], env: dict) -> subprocess.CompletedProcess:
    return subprocess.run(cmd, check=True, env=env, cwd=ROOT, capture_output=True, text=True)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--browser", action="store_true",
                        help="also press the button in Chromium on a real app server")
    args = parser.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="bench-print-screen-"))
    db = f"sqlite:///{folder / 'print.db'}"
    trial_id = build_trial(db)
    env = {k: v for k, v in os.environ.items() if k != "TRIALS_PASSCODE"}
    env.update(TRIALS_DB=db, TRIALS_BASE_URL=BASE_URL, PYTHONPATH=str(ROOT))
    cli = [sys.executable, "-m", "trials.cli", "print", "ballots", "--study", str(trial_id),
           "--out", str(folder / "ballots.pdf"), "--json"]
    command, screen = [], []
    for _ in range(args.repeat):  # alternate, so that load on the machine hits both
        t0 = time.perf_counter()
        run(cli, env)
        command.append(time.perf_counter() - t0)
        done = run([sys.executable, "-c", SCREEN, str(ROOT / "pages" / "printing.py"),
                    str(trial_id)], env)
        screen.append(float(done.stdout.strip().splitlines()[-1]))
    pressed = []
    if args.browser:
        import shutil

        from playwright.sync_api import sync_playwright

        os.environ.update(TRIALS_BASE_URL=BASE_URL)
        with sync_playwright() as pw:
            browser = pw.chromium.launch(
                executable_path=shutil.which("chromium"),
                args=["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                      "--disable-component-update", "--disable-sync", "--no-first-run"])
            for k in range(args.repeat):
                t0 = time.perf_counter()
                run(cli, env)
                command.append(time.perf_counter() - t0)
                pressed.append(browser_press(browser, db, trial_id, folder, k))
            browser.close()
    mc, ms = statistics.median(command), statistics.median(screen)
    print(f"{PANELISTS} panelists x {SAMPLES} samples, QR codes on; {args.repeat} fresh "
          f"processes each, alternating")
    print(f"trials print ballots (whole command): median {mc:.2f} s "
          f"[{min(command):.2f}-{max(command):.2f}]")
    print(f"screen, 'Prepare the ballots' pressed: median {ms:.2f} s "
          f"[{min(screen):.2f}-{max(screen):.2f}]")
    print(f"ratio screen / command: {ms / mc:.2f} (goal <= 1.2)")
    if pressed:
        mb = statistics.median(t for t, _ in pressed)
        print(f"browser, 'Prepare the ballots' pressed: median {mb:.2f} s "
              f"[{min(t for t, _ in pressed):.2f}-{max(t for t, _ in pressed):.2f}], "
              f"progress bar seen in {sum(s for _, s in pressed)} of {len(pressed)}; "
              f"ratio browser / command {mb / mc:.2f} (goal <= 1.2); screenshot "
              f"{folder / 'printing.png'}")


if __name__ == "__main__":
    main()
