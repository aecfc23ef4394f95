"""Time the design functions against the 1 s target; prints figures and ratios.

Run: .venv/bin/python benchmarks/bench_design.py

No pass/fail: the figures are for the reader (and the report). Each case is timed as
the best of a few repeats with time.perf_counter; seeds are fixed.
"""

from __future__ import annotations

import time
import warnings

from trials.design.blocks import incomplete_blocks
from trials.design.codes import POOL, blinding_codes
from trials.design.plan import serving_plan
from trials.design.sets import coded_sets, discrimination_sets
from trials.design.williams import williams_design
from trials.errors import TrialsError, UnbalancedPlanWarning

TARGET = 1.0
warnings.simplefilter("ignore", UnbalancedPlanWarning)


CPU: dict[int, float] = {}


def best(fn, repeats: int = 3) -> tuple[float, object]:
    """Best wall time of ``repeats`` calls; the CPU time of that call goes to CPU."""
    times, out = [], None
    for _ in range(repeats):
        start, cpu = time.perf_counter(), time.process_time()
        out = fn()
        times.append((time.perf_counter() - start, time.process_time() - cpu))
    wall, cpu = min(times)
    CPU[id(out)] = cpu
    CPU[0] = cpu
    return wall, out


def line(label: str, seconds: float, note: str = "", cpu: float | None = None) -> None:
    cpu = CPU[0] if cpu is None else cpu
    print(f"{label:<58} {seconds * 1000:8.1f} ms wall {cpu * 1000:8.1f} ms cpu  "
          f"{seconds / TARGET:6.3f} x target  {note}")


def main() -> None:
    print(f"target: {TARGET:.1f} s per call (wall time; CPU time shown because the "
          "machine is shared)\n")

    s, r = best(lambda: williams_design(30, panelists=500, rng=1))
    line("williams_design(30, panelists=500)", s,
         f"positions {r.position_min}..{r.position_max}, "
         f"carry-over {r.carryover_min}..{r.carryover_max}")
    s, r = best(lambda: williams_design(30, panelists=510, rng=1))
    line("williams_design(30, panelists=510)  (17 whole squares)", s, f"balanced={r.balanced}")

    s, r = best(lambda: blinding_codes(len(POOL), rng=1))
    line(f"blinding_codes({len(POOL)})  (the whole usable pool)", s)
    try:
        blinding_codes(10_000, rng=1)
    except TrialsError as exc:
        print(f"{'blinding_codes(10000)':<58} refused: {exc}")

    def many_draws():
        return sum(len(blinding_codes(8, rng=i).codes) for i in range(1250))

    s, total = best(many_draws)
    line("1250 calls of blinding_codes(8)  (10,000 codes in all)", s, f"{total} codes")

    def sessions():
        used: list[str] = []
        for i in range(98):
            used += blinding_codes(8, rng=i, exclude=used).codes
        return len(used)

    s, total = best(sessions)
    line("98 sessions of 8 codes, each excluding the earlier ones", s, f"{total} codes")

    worst = (0.0, "", 0.0)
    rows = []
    for t in range(3, 26):
        for k in range(2, min(6, t - 1) + 1):
            for label, n in (("default", None), ("2t", 2 * t)):
                s, r = best(lambda: incomplete_blocks(t, k, panelists=n, rng=1), repeats=1)
                rows.append((s, t, k, label, r, CPU[0]))
                if s > worst[0]:
                    worst = (s, f"t={t} k={k} panelists={label}", CPU[0])
    total = sum(x[0] for x in rows)
    print(f"\nincomplete_blocks: {len(rows)} cases, t = 3..25, k = 2..6, panelists default "
          f"and 2t; {total:.2f} s in all")
    line(f"  slowest: {worst[1]}", worst[0], cpu=worst[2])
    print(f"  most CPU: {max(x[5] for x in rows) * 1000:.1f} ms")
    balanced = sum(1 for x in rows if x[4].balanced)
    print(f"  balanced plans: {balanced} of {len(rows)}")
    rows.sort(key=lambda x: -x[0])
    for s, t, k, label, r, cpu in rows[:6]:
        line(f"  t={t} k={k} panelists={label} ({r.panelists}) {r.construction[:18]}", s,
             f"lambda {r.lambda_min}..{r.lambda_max}, E {r.efficiency:.4f}/"
             f"{r.efficiency_bound:.4f}", cpu=cpu)
    ratios = [x[4].efficiency / x[4].efficiency_bound for x in rows]
    print(f"  efficiency / BIBD bound: min {min(ratios):.4f}, "
          f"mean {sum(ratios) / len(ratios):.4f} (low values: k = 2 with r = 2, "
          "where the only connected plan is one cycle of pairs)")

    print()
    s, r = best(lambda: discrimination_sets("triangle", 600, rng=1))
    line("discrimination_sets('triangle', 600)", s)
    s, r = best(lambda: coded_sets(discrimination_sets("triangle", 600, rng=1), rng=1,
                                   scope="set"))
    line("coded_sets(600 triangle sets, scope='set')", s)
    names = [f"variant {i}" for i in range(6)]
    panel = [f"P{i:03d}" for i in range(500)]
    s, r = best(lambda: serving_plan("rating", names, panel, rng=1))
    line("serving_plan('rating', 6 samples, 500 panelists)", s, f"{len(r)} cups")
    s, r = best(lambda: serving_plan("triangle", names[:2], panel, rng=1))
    line("serving_plan('triangle', 500 panelists)", s, f"{len(r)} cups")


if __name__ == "__main__":
    main()
