"""Speed of the discrimination statistics: prints figures and ratios, asserts nothing.

1. Full critical-value tables, every forced-choice method, n = 1..1000, five alphas:
   the vectorised ``critical_array`` against a plain per-n loop over scipy
   (``binom.sf`` of every count for each n, then the first count below each alpha),
   and whether the two tables are identical.
2. d' inversion of 10,000 proportions per method: one vectorised call, a loop of scalar
   calls, and a plain per-value ``scipy.optimize.brentq`` on the exact function.

Targets (issue 3): tables under 50 ms in all; under 50 microseconds per inversion.

Run: .venv/bin/python benchmarks/bench_discrimination.py
"""

from __future__ import annotations

import time

import numpy as np
from scipy import optimize, stats

from trials.methods import DISCRIMINATION, FORCED_CHOICE, get_method
from trials.stats.discrimination import critical_array, critical_table
from trials.stats.thurstonian import dprime_from_pc, pc_from_dprime

ALPHAS = (0.20, 0.10, 0.05, 0.01, 0.001)
NS = list(range(1, 1001))


def best_of(fn, repeat: int = 10) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def loop_tables() -> list[list[int]]:
    """The plain way: for each method and n, scipy's survival function over every count,
    then the first count whose tail is <= alpha for each alpha."""
    out = []
    for method in FORCED_CHOICE:
        spec = get_method(method)
        for n in NS:
            tails = stats.binom.sf(np.arange(-1, n), n, spec.guess)  # P(X >= k), k = 0..n
            row = []
            for alpha in ALPHAS:
                hits = np.flatnonzero(tails <= alpha / spec.sides)
                row.append(int(hits[0]) if hits.size else n + 1)
            out.append(row)
    return out


def vector_tables() -> None:
    for method in FORCED_CHOICE:
        critical_array(NS, ALPHAS, method=method)


def main() -> None:
    vector_tables()  # warm up imports
    t_vec = best_of(vector_tables)
    t_rec = best_of(lambda: [critical_table(NS, ALPHAS, method=m) for m in FORCED_CHOICE])
    t_loop = best_of(loop_tables, repeat=2)
    same = np.array_equal(np.vstack([critical_array(NS, ALPHAS, method=m) for m in FORCED_CHOICE]),
                          np.array(loop_tables()))
    cells = len(FORCED_CHOICE) * len(NS) * len(ALPHAS)
    print(f"critical tables: {len(FORCED_CHOICE)} methods x n=1..1000 x {len(ALPHAS)} alphas "
          f"= {cells} cells")
    print(f"  vectorised critical_array : {t_vec * 1e3:8.2f} ms")
    print(f"  critical_table (records)  : {t_rec * 1e3:8.2f} ms")
    print(f"  per-n scipy loop          : {t_loop * 1e3:8.2f} ms  (ratio {t_loop / t_vec:.0f}x; "
          f"identical tables: {same})")

    rng = np.random.default_rng(2026)
    print("d' inversion, 10,000 proportions per method (uniform between chance and pc(d'=6)):")
    for method in DISCRIMINATION:
        guess = get_method(method).guess
        top = pc_from_dprime(6.0, method=method)
        pcs = rng.uniform(guess, top, 10_000)
        dprime_from_pc(pcs, method=method)
        t_v = best_of(lambda: dprime_from_pc(pcs, method=method))
        scalars = pcs.tolist()
        t_s = best_of(lambda: [dprime_from_pc(p, method=method) for p in scalars], repeat=3)
        sub = scalars[:200]
        t0 = time.perf_counter()
        for p in sub:
            optimize.brentq(lambda x, p=p: pc_from_dprime(x, method=method) - p, 0.0, 15.0,
                            xtol=1e-10)
        t_b = (time.perf_counter() - t0) / len(sub)
        print(f"  {method:9s} vectorised {t_v * 1e3:7.2f} ms ({t_v / 1e4 * 1e6:6.3f} us each); "
              f"scalar calls {t_s / 1e4 * 1e6:6.2f} us each; brentq {t_b * 1e6:8.1f} us each "
              f"(ratio vectorised {t_b / (t_v / 1e4):.0f}x, scalar {t_b / (t_s / 1e4):.0f}x)")


if __name__ == "__main__":
    main()
