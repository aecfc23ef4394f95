"""Store throughput: import 100,000 response rows, export them, and 30 concurrent
writers x 12 answers each. Prints figures; asserts nothing about time.

    .venv/bin/python benchmarks/bench_store.py [--rows 100000] [--pg URL]

PostgreSQL runs too when ``--pg`` or ``TRIALS_TEST_PG_URL`` names a server (each run
uses a fresh schema, dropped afterwards).
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
import uuid
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np
import pandas as pd
import sqlalchemy as sa

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from trials import service  # noqa: E402
from trials.model import Attribute, AttributeKind, Sample  # noqa: E402
from trials.store import resolve_url  # noqa: E402


def _trial(store, panelists: int, samples: int, attrs: int, name: str) -> int:
    have = {p.code for p in service.list_panelists(store)}
    codes = [f"B{i:05d}" for i in range(panelists)]
    for c in codes:
        if c not in have:
            service.add_panelist(store, c, consent_on="2026-01-01")
    sid = service.create_trial(
        store, name=name, method="rating", samples=[Sample(f"S{k}") for k in range(samples)],
        attributes=[Attribute(f"a{j}", AttributeKind.INTENSITY, 1, 9) for j in range(attrs)],
    ).id
    service.draw_plan(store, sid, panelist_codes=codes, seed=1)
    return sid


def bench(url: str, label: str, rows: int, tmp: Path) -> None:
    store = service.open_store(url)
    # rows = panelists x samples x attributes: 4 samples x 5 attributes = 20 per panelist
    panelists = rows // 20
    t0 = time.perf_counter()
    sid = _trial(store, panelists, 4, 5, "bench import")
    t_plan = time.perf_counter() - t0
    entries = service.plan(store, sid)
    rng = np.random.default_rng(0)
    frame = pd.DataFrame([
        {"session": "1", "panelist": e.panelist_code, "code": e.code, "attribute": f"a{j}",
         "value": int(rng.integers(1, 10)), "comment": ""}
        for e in entries for j in range(5)
    ])
    src = tmp / f"{label}_in.csv"
    frame.to_csv(src, index=False)
    t0 = time.perf_counter()
    n = service.import_answers(store, sid, src)
    t_imp = time.perf_counter() - t0
    out = tmp / f"{label}_out.csv"
    t0 = time.perf_counter()
    m = service.export_answers(store, sid, out)
    t_exp = time.perf_counter() - t0
    t0 = time.perf_counter()
    again = service.import_answers(store, sid, out)
    t_re = time.perf_counter() - t0
    print(f"[{label}] plan for {panelists} panelists x 4 samples: {t_plan:.1f} s")
    print(f"[{label}] import {n} rows: {t_imp:.2f} s ({n / t_imp:,.0f} rows/s)")
    print(f"[{label}] export {m} rows: {t_exp:.2f} s ({m / t_exp:,.0f} rows/s)")
    print(f"[{label}] re-import of the export ({again} new): {t_re:.2f} s")

    sid2 = _trial(store, 30, 4, 3, "bench concurrent")
    tokens = [v.split("=", 1)[1] for v in service.panelist_links(store, sid2).values()]
    latencies: list[float] = []

    def panelist(token: str) -> None:
        ballot = service.ballot_for_token(store, token)
        for code in ballot.sets[0].codes:
            for a in ballot.attributes:
                t = time.perf_counter()
                service.record_answer(store, token, code=code, attribute=a.name, value=5)
                latencies.append(time.perf_counter() - t)

    t0 = time.perf_counter()
    with ThreadPoolExecutor(max_workers=30) as pool:
        list(pool.map(panelist, tokens))
    wall = time.perf_counter() - t0
    got = len(service.list_answers(store, sid2))
    lat = np.array(latencies) * 1000
    print(f"[{label}] 30 writers x 12 answers: {got} stored of {len(lat)}, {wall:.2f} s, "
          f"{len(lat) / wall:,.0f} answers/s, latency median {np.median(lat):.0f} ms, "
          f"p95 {np.percentile(lat, 95):.0f} ms, max {lat.max():.0f} ms")
    store.close()


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--pg", default=os.environ.get("TRIALS_TEST_PG_URL"))
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as d:
        tmp = Path(d)
        bench(f"sqlite:///{tmp / 'bench.db'}", "sqlite", args.rows, tmp)
        if args.pg:
            schema = "bench_" + uuid.uuid4().hex[:8]
            engine = sa.create_engine(resolve_url(args.pg))
            with engine.begin() as c:
                c.execute(sa.text(f'CREATE SCHEMA "{schema}"'))
            sep = "&" if "?" in args.pg else "?"
            try:
                bench(f"{args.pg}{sep}options=-csearch_path%3D{schema}", "postgresql",
                      args.rows, tmp)
            finally:
                with engine.begin() as c:
                    c.execute(sa.text(f'DROP SCHEMA "{schema}" CASCADE'))
                engine.dispose()
        else:
            print("[postgresql] skipped: give --pg URL or set TRIALS_TEST_PG_URL")


if __name__ == "__main__":
    main()
