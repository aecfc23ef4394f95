"""How quick the app feels, measured (figures printed; nothing passes or fails on time).

1. The results screen of a large invented rating trial (200 panelists, 12 samples,
   8 attributes: 19 200 scores) under AppTest: the first render (analysis computed)
   and a rerun (analysis from the cache). Target: under 1 s for a rerun.
2. One panelist answer in a real browser (Debian's Chromium through Playwright, a real
   app server on loopback): from the tap to the screen showing the saved answer, which
   it shows only after the store has it. Target: under 300 ms.

Run: .venv/bin/python benchmarks/bench_app.py [--skip-browser]
"""

from __future__ import annotations

import argparse
import datetime as dt
import io
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from trials import service  # noqa: E402
from trials.model import Attribute, AttributeKind, Sample  # noqa: E402

PANELISTS, SAMPLES, ATTRIBUTES = 200, 12, 8


def build_large_trial(db: str) -> int:
    """An invented rating trial of the stated size, every score on file."""
    store = service.open_store(db)
    codes = [f"L{i:03d}" for i in range(1, PANELISTS + 1)]
    roster = "code,consent_on\n" + "\n".join(f"{c},2026-01-10" for c in codes)
    path = Path(tempfile.mkdtemp()) / "roster.csv"
    path.write_text(roster, encoding="utf-8")
    service.import_panelists(store, path)
    kinds = [AttributeKind.HEDONIC] + [AttributeKind.INTENSITY] * (ATTRIBUTES - 1)
    study = service.create_trial(
        store, name="Bench: twelve sauces", method="rating",
        samples=[Sample(f"Sauce {k + 1:02d}", is_control=(k == 0)) for k in range(SAMPLES)],
        attributes=[Attribute(f"attribute {j + 1}", kind=kinds[j], low=1, high=9)
                    for j in range(ATTRIBUTES)],
    )
    service.draw_plan(store, study.id, panelist_codes=codes, seed=1)
    rng = np.random.default_rng(7)
    effect = {f"Sauce {k + 1:02d}": rng.normal(0, 0.8) for k in range(SAMPLES)}
    buf = io.StringIO()
    buf.write("session,panelist,code,attribute,value\n")
    for e in service.plan(store, study.id):
        for j in range(ATTRIBUTES):
            score = int(np.clip(round(5 + effect[e.sample_name] + rng.normal(0, 1.5)), 1, 9))
            buf.write(f"{e.session},{e.panelist_code},{e.code},attribute {j + 1},{score}\n")
    n = service.import_answers(store, study.id, buf.getvalue().encode(), name="bench.csv")
    assert n == PANELISTS * SAMPLES * ATTRIBUTES, n
    return study.id


def bench_results_screen() -> None:
    from streamlit.testing.v1 import AppTest

    folder = Path(tempfile.mkdtemp(prefix="bench-app-"))
    db = f"sqlite:///{folder / 'bench.db'}"
    t0 = time.perf_counter()
    trial_id = build_large_trial(db)
    print(f"built the trial ({PANELISTS} panelists x {SAMPLES} samples x {ATTRIBUTES} "
          f"attributes = {PANELISTS * SAMPLES * ATTRIBUTES} scores) in "
          f"{time.perf_counter() - t0:.1f} s")
    os.environ["TRIALS_DB"] = db
    os.environ.pop("TRIALS_PASSCODE", None)
    at = AppTest.from_file(str(ROOT / "pages" / "results.py"), default_timeout=600)
    at.query_params["study"] = str(trial_id)
    t0 = time.perf_counter()
    at.run()
    first = time.perf_counter() - t0
    assert not at.exception, [e.message for e in at.exception]
    reruns = []
    for _ in range(5):
        t0 = time.perf_counter()
        at.run()
        reruns.append(time.perf_counter() - t0)
    assert not at.exception, [e.message for e in at.exception]
    print(f"results screen, first render (analysis computed, process warm-up included): "
          f"{first:.2f} s")
    print(f"results screen, rerun (analysis cached): median {statistics.median(reruns):.3f} s, "
          f"max {max(reruns):.3f} s over {len(reruns)} runs; target < 1 s; "
          f"ratio to target {statistics.median(reruns) / 1.0:.2f}")


def bench_browser_answer() -> None:
    import shutil

    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if not exe:
        print("browser answer: skipped (no chromium on PATH)")
        return
    from playwright.sync_api import sync_playwright

    from tests.e2e.conftest import start_app

    folder = Path(tempfile.mkdtemp(prefix="bench-browser-"))
    url, proc, db = start_app(folder, demo=False)
    try:
        store = service.open_store(db)
        service.add_panelist(store, "B01", consent_on=dt.date(2026, 1, 10))
        study = service.create_trial(
            store, name="Bench: tablet", method="rating",
            samples=[Sample(f"Broth {k}", is_control=(k == 1)) for k in range(1, 7)],
            attributes=[Attribute("overall liking", low=1, high=9)],
        )
        service.draw_plan(store, study.id, panelist_codes=["B01"], seed=2)
        cups = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)]
        token = service.panelist_token(store, study.id, "B01")
        times = []
        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path=exe, args=["--no-sandbox",
                                                                    "--disable-gpu"])
            page = browser.new_page(viewport={"width": 820, "height": 1180})
            page.goto(f"{url}/taste?t={token}")
            for i, code in enumerate(cups):
                page.get_by_text(f"Cup {i + 1} of {len(cups)}").wait_for(timeout=60_000)
                button = page.locator(f".st-key-score_1_{code}_0_6 button")
                button.wait_for(timeout=60_000)
                page.wait_for_timeout(300)  # let the run settle before timing a tap
                t0 = time.perf_counter()
                button.click()
                if i + 1 < len(cups):
                    page.get_by_text(f"Cup {i + 2} of {len(cups)}").wait_for(timeout=60_000)
                else:
                    page.get_by_text("Thank you, you are done.").wait_for(timeout=60_000)
                times.append(time.perf_counter() - t0)
            browser.close()
        saved = len(service.list_answers(store, study.id))
        assert saved == len(cups), saved
        ms = [t * 1000 for t in times]
        print(f"browser answer, tap to the next step on screen (saved in the store first): "
              f"median {statistics.median(ms):.0f} ms, min {min(ms):.0f} ms, max {max(ms):.0f} ms "
              f"over {len(ms)} taps; target < 300 ms; ratio to target "
              f"{statistics.median(ms) / 300:.2f}")
    finally:
        proc.terminate()
        proc.wait(timeout=10)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--skip-browser", action="store_true")
    args = parser.parse_args()
    print(f"cpus: {os.cpu_count()}, load average: {os.getloadavg()[0]:.2f}")
    bench_results_screen()
    if not args.skip_browser:
        bench_browser_answer()


if __name__ == "__main__":
    main()
