"""Tablets answering at once: the latency of one answer (``service.record_answer``, the
call behind a tap on the tasting screen) while N tablets answer together, through
threads of one process (one app server) and through separate processes. Figures and
ratios are printed; nothing passes or fails on time.

Each tablet is a panelist of an invented rating trial (4 samples x 3 attributes) who
sends their 12 answers back to back, all tablets released at the same moment (the
worst case: real tablets wait seconds between taps). Processes are started first and
released together once all have opened the store and read their ballot, so that
imports do not count. After each run the store must hold every answer exactly once.

The floor is one tablet answering alone in the same run (its p95). Printed: p50, p95 and
the largest latency, the ratio of the p95 to the floor's and to the issue's goal
(300 ms: 30 tablets on SQLite, 100 on PostgreSQL).

    .venv/bin/python benchmarks/bench_tablets.py [--tablets 30] [--pg URL]
        [--pg-tablets 100] [--pg-processes 60] [--skip-processes]

PostgreSQL runs when ``--pg`` or ``TRIALS_TEST_PG_URL`` names a server (a fresh schema,
dropped afterwards).
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
import uuid
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from trials import service  # noqa: E402
from trials.model import Attribute, AttributeKind, Sample  # noqa: E402

GOAL_MS = 300.0

CHILD = """
import json, sys, time
sys.path.insert(0, sys.argv[1])
from trials import service
store = service.open_store(sys.argv[2])
token = sys.argv[3]
ballot = service.ballot_for_token(store, token)
work = [(code, a.name) for code in ballot.sets[0].codes for a in ballot.attributes]
print("ready", flush=True)
sys.stdin.readline()
out = []
for code, attribute in work:
    t = time.perf_counter()
    try:
        service.record_answer(store, token, code=code, attribute=attribute,
                              value=int(code) % 9 + 1)
    except Exception as exc:  # counted and shown, not a crash of the benchmark
        print(json.dumps({"failed": str(exc)}), flush=True)
        raise SystemExit(1)
    out.append(time.perf_counter() - t)
print(json.dumps(out), flush=True)
store.close()
"""


def make_trial(store, tablets: int, label: str) -> tuple[int, list[str]]:
    codes = [f"{label}{i:03d}" for i in range(1, tablets + 1)]
    path = Path(tempfile.mkdtemp()) / "roster.csv"
    path.write_text("code,consent_on\n" + "\n".join(f"{c},2026-01-10" for c in codes),
                    encoding="utf-8")
    service.import_panelists(store, path)
    trial = service.create_trial(
        store, name=f"Tablets: four rolls ({label})", method="rating",
        samples=[Sample(f"Roll {k}") for k in "ABCD"],
        attributes=[Attribute(n, AttributeKind.INTENSITY, 1, 9)
                    for n in ("crust", "crumb", "salt")])
    service.draw_plan(store, trial.id, panelist_codes=codes, seed=5)
    links = service.panelist_links(store, trial.id)
    return trial.id, [links[c].split("=", 1)[1] for c in codes]


def check_stored(store, trial_id: int, tablets: int) -> None:
    rows = service.list_answers(store, trial_id)
    keys = {(r.panelist_code, r.code, r.attribute) for r in rows}
    if len(rows) != tablets * 12 or len(keys) != len(rows):
        raise SystemExit(f"store holds {len(rows)} answers, {len(keys)} distinct; "
                         f"expected {tablets * 12} once each")


def one_tablet(store, token: str) -> list[float]:
    ballot = service.ballot_for_token(store, token)
    out = []
    for code in ballot.sets[0].codes:
        for a in ballot.attributes:
            t = time.perf_counter()
            service.record_answer(store, token, code=code, attribute=a.name,
                                  value=int(code) % 9 + 1)
            out.append(time.perf_counter() - t)
    return out


def through_threads(store, tokens: list[str]) -> list[float]:
    with ThreadPoolExecutor(max_workers=len(tokens)) as pool:
        return [x for part in pool.map(lambda t: one_tablet(store, t), tokens) for x in part]


def through_processes(url: str, tokens: list[str]) -> list[float]:
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    procs = [subprocess.Popen([sys.executable, "-c", CHILD, str(ROOT), url, t], env=env,
                              stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True)
             for t in tokens]
    for p in procs:
        if p.stdout.readline().strip() != "ready":
            raise SystemExit("a tablet process did not start")
    for p in procs:  # release them together
        p.stdin.write("go\n")
        p.stdin.flush()
    out, failed = [], []
    for p in procs:
        got = json.loads(p.stdout.readline())
        if isinstance(got, dict):
            failed.append(got["failed"])
        else:
            out += got
        p.wait(timeout=300)
    if failed:
        print(f"  {len(failed)} tablet processes failed an answer, e.g. {failed[0]!r}")
    return out


def show(label: str, how: str, n: int, lat: list[float], floor_p95: float) -> None:
    """Print the figures; ``floor_p95`` in milliseconds."""
    ms = np.array(lat) * 1000
    p95 = float(np.percentile(ms, 95))
    print(f"[{label}] {n:3d} tablets via {how:9s}: {len(ms)} answers, p50 "
          f"{np.median(ms):6.0f} ms, p95 {p95:6.0f} ms, max {ms.max():6.0f} ms; "
          f"p95 / one tablet's {p95 / floor_p95:5.1f}x; p95 / {GOAL_MS:.0f} ms goal "
          f"{p95 / GOAL_MS:.2f}")


def bench(url: str, label: str, tablets: int, processes: int) -> None:
    store = service.open_store(url)
    alone_id, alone = make_trial(store, 1, f"{label[0].upper()}A")
    one_tablet(store, alone[0])  # warm: statement caches, first connections
    alone_id, alone = make_trial(store, 1, f"{label[0].upper()}B")
    floor = one_tablet(store, alone[0])
    check_stored(store, alone_id, 1)
    floor_ms = np.array(floor) * 1000
    floor_p95 = float(np.percentile(floor_ms, 95))
    print(f"[{label}]   1 tablet alone (floor): p50 {np.median(floor_ms):6.0f} ms, "
          f"p95 {floor_p95:6.0f} ms")
    trial_id, tokens = make_trial(store, tablets, f"{label[0].upper()}T")
    lat = through_threads(store, tokens)
    check_stored(store, trial_id, tablets)
    show(label, "threads", tablets, lat, floor_p95)
    if processes:
        trial_id, tokens = make_trial(store, processes, f"{label[0].upper()}P")
        lat = through_processes(url, tokens)
        check_stored(store, trial_id, processes)
        show(label, "processes", processes, lat, floor_p95)
    store.close()


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--tablets", type=int, default=30, help="tablets on SQLite")
    ap.add_argument("--pg", default=os.environ.get("TRIALS_TEST_PG_URL"))
    ap.add_argument("--pg-tablets", type=int, default=100)
    ap.add_argument("--pg-processes", type=int, default=60,
                    help="tablet processes on PostgreSQL (each holds a connection; a "
                         "default server allows 100 in all)")
    ap.add_argument("--skip-processes", action="store_true")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        bench(f"sqlite:///{Path(d) / 'tablets.db'}", "sqlite", args.tablets,
              0 if args.skip_processes else args.tablets)
    if not args.pg:
        print("[postgresql] skipped: give --pg URL or set TRIALS_TEST_PG_URL")
        return
    import sqlalchemy as sa

    from trials.store import resolve_url

    schema = "bench_" + uuid.uuid4().hex[:8]
    engine = sa.create_engine(resolve_url(args.pg))
    with engine.begin() as c:
        c.execute(sa.text(f'CREATE SCHEMA "{schema}"'))
    sep = "&" if "?" in args.pg else "?"
    try:
        bench(f"{args.pg}{sep}options=-csearch_path%3D{schema}", "postgresql",
              args.pg_tablets, 0 if args.skip_processes else args.pg_processes)
    finally:
        with engine.begin() as c:
            c.execute(sa.text(f'DROP SCHEMA "{schema}" CASCADE'))
        engine.dispose()


if __name__ == "__main__":
    main()
