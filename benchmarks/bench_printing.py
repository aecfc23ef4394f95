"""Time and memory of printing a large trial: 200 panelists, 12 samples, rating on
3 attributes (every panelist tastes all 12 in one session, a QR code on each ballot).

Targets (issue 7): ballots, labels and the serving sheet together under 3 s and under
300 MB. Prints figures and their ratio to the targets; never a pass/fail. Each time is
the best of ``--repeat`` runs, as wall-clock and as CPU time of this process (on a
shared machine the wall-clock time also counts waiting for a core). Peak memory is the
Python heap during one run (tracemalloc) and the process's peak resident set.

    .venv/bin/python benchmarks/bench_printing.py [--repeat N]
"""

from __future__ import annotations

import argparse
import datetime as dt
import gc
import os
import resource
import sys
import time
import tracemalloc

from trials.model import Attribute, AttributeKind, Batch, Panelist, PlanEntry, Sample, Trial
from trials.printing import ballots_pdf, labels_pdf, serving_sheet_pdf
from trials.printing.layout import _qr_cached

PANELISTS, SAMPLES = 200, 12
TARGET_S, TARGET_MB = 3.0, 300.0


def scenario():
    """An invented trial: variants of a test loaf, codes from a fixed stride."""
    samples = tuple(
        Sample(f"Test loaf variant {k + 1}", allergens=("gluten",) + (("sesame",) if k % 3 == 0
                                                                       else ()))
        for k in range(SAMPLES))
    attrs = (Attribute("Overall liking", AttributeKind.HEDONIC, 1, 9),
             Attribute("Crust crispness", AttributeKind.INTENSITY, 1, 7),
             Attribute("Saltiness", AttributeKind.JAR, 1, 5))
    study = Trial("Bench loaf trial", "rating", id=1, samples=samples, attributes=attrs)
    codes = [str(100 + (17 + 389 * i) % 900) for i in range(SAMPLES)]
    plan = []
    for p in range(PANELISTS):
        for pos in range(SAMPLES):
            k = (p + pos) % SAMPLES  # a cyclic Latin square of serving orders
            plan.append(PlanEntry("S1", f"P{p + 1:03d}", pos + 1, codes[k], samples[k].name,
                                  batch_label="B1"))
    batches = tuple(Batch(s.name, "B1", prepared_on=dt.date(2026, 3, 4),
                          safety_signed_by="Chef K" if k else "") for k, s in enumerate(samples))
    panelists = tuple(Panelist(f"P{p + 1:03d}", consent_on=dt.date(2026, 3, 1),
                               allergens=("sesame",) if p % 25 == 0 else ())
                      for p in range(PANELISTS))
    tokens = {p.code: f"/taste?t=bench{p.code.lower()}token" for p in panelists}
    return study, plan, batches, panelists, tokens


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3, help="runs; the best time is kept")
    args = ap.parse_args(argv)
    study, plan, batches, panelists, tokens = scenario()
    jobs = {
        "ballots": lambda: ballots_pdf(study, plan, panelists=panelists, tokens=tokens,
                                       base_url="https://kitchen.example:8501",
                                       today=dt.date(2026, 3, 4)),
        "labels": lambda: labels_pdf(plan),
        "sheet": lambda: serving_sheet_pdf(study, plan, batches=batches, panelists=panelists),
    }
    jobs["ballots"]()  # warm up: font loading, imports
    total_s, total_cpu, peak_mb = 0.0, 0.0, 0.0
    print(f"{PANELISTS} panelists x {SAMPLES} samples, rating on 3 attributes "
          f"({len(plan)} cups)")
    for name, job in jobs.items():
        best, best_cpu = float("inf"), float("inf")
        for _ in range(args.repeat):
            _qr_cached.cache_clear()  # every run encodes its QR codes afresh
            gc.collect()
            t0, c0 = time.perf_counter(), time.process_time()
            result = job()
            best = min(best, time.perf_counter() - t0)
            best_cpu = min(best_cpu, time.process_time() - c0)
        _qr_cached.cache_clear()
        gc.collect()
        tracemalloc.start()
        job()
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        total_s += best
        total_cpu += best_cpu
        peak_mb = max(peak_mb, peak / 2**20)
        print(f"  {name:8s} {best:6.2f} s wall {best_cpu:6.2f} s CPU  "
              f"peak Python heap {peak / 2**20:6.1f} MB  "
              f"pages {result.pages:4d}  items {result.items:5d}  "
              f"size {len(result.data) / 2**20:5.2f} MB")
    rss_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # Linux: KiB
    print(f"  all three {total_s:.2f} s wall = {total_s / TARGET_S:.2f} x the {TARGET_S:.0f} s "
          f"target; {total_cpu:.2f} s CPU = {total_cpu / TARGET_S:.2f} x")
    print(f"  (wall time includes waiting for a shared CPU; load average now "
          f"{os.getloadavg()[0]:.1f} on {os.cpu_count()} cores)")
    print(f"  peak Python heap {peak_mb:.1f} MB; process peak RSS {rss_mb:.1f} MB = "
          f"{rss_mb / TARGET_MB:.2f} x the {TARGET_MB:.0f} MB target")
    return 0


if __name__ == "__main__":
    sys.exit(main())
