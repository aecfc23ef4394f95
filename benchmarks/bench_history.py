"""The History screen on a long record: its use cases and the screen, against floors
measured in the same run. Figures and ratios are printed; nothing passes or fails on time.

The store is filled with invented trials: the demo's four trials (``trials.demo``),
exported as archives and imported again and again under new names and dates until the
store holds N trials (300 and 3,000; ``--quick``: 30 and 300). For each N:

- the use cases, in this (warm) process: ``history`` (the list), ``history`` with a
  search word, ``control_names`` and ``control_trend`` (the control's chart data);
- the screen ``pages/history.py`` under Streamlit's ``AppTest``: a warm rerun, a search
  typed into the box, the control's chart (a rerun that draws it), each against the
  same run of an empty page (``st.title`` only) as the floor;
- "after a restart": a fresh Python process that imports and runs the screen once,
  against a fresh process that runs the empty page once.

The issue's goals: each under 1 s for 300 trials, and growth from 300 to 3,000 no worse
than linear (the ratio of times no more than 10, the ratio of sizes).

Usage: .venv/bin/python benchmarks/bench_history.py [--quick] [--repeat N]
"""

from __future__ import annotations

import argparse
import datetime as dt
import io
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from trials import service  # noqa: E402
from trials.demo import seed_demo  # noqa: E402

PAGE = ROOT / "pages" / "history.py"
EMPTY = "import streamlit as st\nst.title('Trial history')\n"

# One cold run in a fresh process: argv = db url, page path or "", the empty page's text.
COLD = """
import os, sys, time
t0 = time.perf_counter()
os.environ["TRIALS_DB"] = sys.argv[1]
os.environ.pop("TRIALS_PASSCODE", None)
from streamlit.testing.v1 import AppTest
page = sys.argv[2]
at = (AppTest.from_file(page, default_timeout=600) if page
      else AppTest.from_string(sys.argv[3], default_timeout=600))
at.run()
assert not at.exception, [e.message for e in at.exception]
print(time.perf_counter() - t0)
"""


def _renamed(archive: bytes, name: str, created_on: dt.date) -> bytes:
    """The same archive under another trial name and date (so each copy is its own
    point on the control's chart)."""
    with zipfile.ZipFile(io.BytesIO(archive)) as z:
        doc = json.loads(z.read("trial.json"))
    doc["study"]["name"] = name
    doc["study"]["created_on"] = created_on.isoformat()
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("trial.json", json.dumps(doc))
    return buf.getvalue()


def fill(store, n: int) -> None:
    """Grow the store to ``n`` trials from the demo's archives."""
    have = service.list_trials(store)
    if not have:
        seed_demo(store)
        have = service.list_trials(store)
    demo = sorted(have, key=lambda t: t.id)[:4]
    archives = [service.export_archive(store, t.id) for t in demo]
    day = dt.date(2020, 1, 1)
    for k in range(len(have), n):
        source = demo[k % len(demo)]
        data = _renamed(archives[k % len(demo)], f"{source.name} (round {k})",
                        day + dt.timedelta(days=k))
        service.import_archive(store, data)


def median_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def use_cases(store, repeat: int) -> dict[str, float]:
    service.history(store)  # warm: imports, statement caches
    control = service.control_names(store)[0]
    return {
        "history (the list)": median_of(lambda: service.history(store), repeat),
        "history, a search": median_of(lambda: service.history(store, text="fryer"), repeat),
        "control_names": median_of(lambda: service.control_names(store), repeat),
        "control_trend (chart data)": median_of(
            lambda: service.control_trend(store, control), repeat),
    }


def screen(db: str, repeat: int) -> dict[str, tuple[float, float]]:
    """(screen, empty page) medians of a warm rerun, a search and the chart."""
    from streamlit.testing.v1 import AppTest

    os.environ["TRIALS_DB"] = db
    os.environ.pop("TRIALS_PASSCODE", None)
    floor = AppTest.from_string(EMPTY, default_timeout=600)
    floor.run()
    page = AppTest.from_file(str(PAGE), default_timeout=600)
    page.run()
    assert not page.exception, [e.message for e in page.exception]
    assert page.get("plotly_chart"), "the control's chart is drawn"

    def rerun() -> None:
        page.run()

    words = iter(["fryer", "proof", "crumb", "tomato", "oil", "keep", "glaze"] * repeat)

    def search() -> None:
        page.text_input[0].input(next(words)).run()

    warm_floor = median_of(floor.run, repeat)
    out = {"warm rerun (list and chart)": (median_of(rerun, repeat), warm_floor)}
    out["a search typed"] = (median_of(search, repeat), warm_floor)
    page.text_input[0].input("").run()
    choices = page.selectbox[1].options

    picks = iter(choices * repeat * 2)

    def chart() -> None:
        page.selectbox[1].select(next(picks)).run()

    out["the control's chart chosen"] = (median_of(chart, repeat), warm_floor)
    assert not page.exception, [e.message for e in page.exception]
    return out


def cold(db: str, page: str) -> float:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    done = subprocess.run([sys.executable, "-c", COLD, db, page, EMPTY], check=True, env=env,
                          capture_output=True, text=True, cwd=ROOT)
    return float(done.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--quick", action="store_true", help="30 and 300 trials")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    sizes = (30, 300) if args.quick else (300, 3000)
    folder = Path(tempfile.mkdtemp(prefix="bench-history-"))
    db = f"sqlite:///{folder / 'history.db'}"
    store = service.open_store(db)
    results = {}
    for n in sizes:
        t0 = time.perf_counter()
        fill(store, n)
        print(f"\n== {n} trials (store filled in {time.perf_counter() - t0:.0f} s)")
        calls = use_cases(store, args.repeat)
        for name, sec in calls.items():
            print(f"  service {name:28s} {sec * 1000:8.1f} ms   ratio to 1 s goal {sec:.2f}")
        shown = screen(db, args.repeat)
        for name, (sec, floor) in shown.items():
            print(f"  screen {name:29s} {sec * 1000:8.1f} ms   empty page {floor * 1000:6.1f} ms"
                  f"   above floor {(sec - floor) * 1000:8.1f} ms   ratio to 1 s goal {sec:.2f}")
        restart = min(cold(db, str(PAGE)) for _ in range(2))
        restart_floor = min(cold(db, "") for _ in range(2))
        print(f"  screen after a restart (fresh process)  {restart:6.2f} s   empty page "
              f"{restart_floor:5.2f} s   above floor {restart - restart_floor:5.2f} s   "
              f"ratio to 1 s goal {restart - restart_floor:.2f} (above floor)")
        results[n] = {**{f"service {k}": v for k, v in calls.items()},
                      **{f"screen {k}": v[0] - v[1] for k, v in shown.items()},
                      "screen after a restart": restart - restart_floor}
    small, big = sizes
    print(f"\n== growth from {small} to {big} trials (linear would be {big / small:.0f}x)")
    for key in results[small]:
        a, b = results[small][key], results[big][key]
        print(f"  {key:45s} {a * 1000:8.1f} ms -> {b * 1000:8.1f} ms   growth {b / a:5.2f}x"
              f"   ratio to linear {b / a / (big / small):.2f}")
    store.close()


if __name__ == "__main__":
    main()
