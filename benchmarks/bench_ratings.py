"""Benchmark of the ratings ANOVA (ANOVA + Tukey HSD + letters) on 1,000,000 rows.

Prints wall time (best of several runs), peak traced memory (tracemalloc, a separate
run) and the ratio to the statsmodels formula path (``ols`` + ``anova_lm``) on the
largest balanced block designs that statsmodels' dense design matrix fits here, after
checking that both give the same sums of squares. Figures only: nothing here passes or
fails on time.

Usage: .venv/bin/python benchmarks/bench_ratings.py [--quick]
"""

from __future__ import annotations

import argparse
import os
import platform
import time
import tracemalloc

import numpy as np
import pandas as pd

from trials.stats.ratings import rating_anova

SAMPLES = [f"variant-{i:02d}" for i in range(10)]


def block_design(panelists: int, reps: int = 1, seed: int = 0) -> pd.DataFrame:
    """Invented ratings: every panelist rates every sample ``reps`` times (9-point scale)."""
    rng = np.random.default_rng(seed)
    t = len(SAMPLES)
    p = np.repeat(np.arange(panelists), t * reps)
    s = np.tile(np.repeat(np.arange(t), reps), panelists)
    effect = np.linspace(-0.5, 0.5, t)
    score = np.clip(
        np.rint(5 + effect[s] + rng.normal(0, 1, panelists)[p] + rng.normal(0, 1.2, p.size)), 1, 9
    )
    frame = pd.DataFrame(
        {
            "panelist": pd.Series(p).map(lambda i: f"P{i:06d}") if panelists <= 5000 else p,
            "sample": np.asarray(SAMPLES, dtype=object)[s],
            "score": score,
        }
    )
    frame["sample"] = frame["sample"].astype("string")
    if reps > 1:
        frame["replicate"] = np.tile(np.arange(1, reps + 1), panelists * t)
    return frame


def best_time(fn, repeat: int) -> tuple[float, object]:
    best, out = float("inf"), None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def peak_memory(fn) -> float:
    tracemalloc.start()
    fn()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def run_ours(data: pd.DataFrame, replicate: str | None):
    res = rating_anova(data, replicate=replicate)
    assert res.groups and res.hsd > 0  # letters and HSD are part of the timed work
    return res


def statsmodels_path(data: pd.DataFrame):
    import statsmodels.formula.api as smf
    from statsmodels.stats.anova import anova_lm

    fit = smf.ols("score ~ C(sample) + C(panelist)", data=data).fit()
    return anova_lm(fit, typ=1)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--quick", action="store_true",
                        help="fewer repeats, smaller statsmodels runs")
    args = parser.parse_args()
    repeat = 2 if args.quick else 5
    print(f"python {platform.python_version()}, numpy {np.__version__}, pandas {pd.__version__}, "
          f"{os.cpu_count()} cpus, load average {os.getloadavg()[0]:.1f} (shared machine)")

    cases = [
        ("block design: 100,000 panelists x 10 samples, 1 rating each", 100_000, 1, None),
        ("replicated: 10,000 panelists x 10 samples x 10 replicates", 10_000, 10, "replicate"),
    ]
    for label, panelists, reps, rep_col in cases:
        data = block_design(panelists, reps)
        secs, res = best_time(lambda: run_ours(data, rep_col), repeat)
        mem = peak_memory(lambda: run_ours(data, rep_col))
        text = data.astype(str)  # as read from a CSV by trials.tabular (all text)
        secs_text, _ = best_time(lambda: run_ours(text, rep_col), max(1, repeat // 2))
        print(f"\n{label}: {len(data):,} rows")
        print(f"  ANOVA + HSD + letters, typed columns: {secs:.3f} s (best of {repeat}), "
              f"peak traced memory {mem:.0f} MiB")
        print(f"  same from all-text columns (CLI path): {secs_text:.3f} s")
        print(f"  F(sample) = {res.term('sample').F:.4f} against {res.error_term}, "
              f"hsd = {res.hsd:.4f}")

    print("\nratio to statsmodels ols + anova_lm (typ 1) on balanced block designs:")
    # statsmodels builds a dense design (rows x (panelists + 10)) and takes its pseudo-inverse;
    # 1,000 panelists (10,000 x 1,010) takes minutes here, so that is the largest run
    sizes = [100, 200, 500] if args.quick else [100, 200, 500, 1000]
    for panelists in sizes:
        data = block_design(panelists, 1, seed=panelists)
        ours_s, ours = best_time(lambda: run_ours(data, None), repeat)
        sm_s, table = best_time(lambda: statsmodels_path(data), 1 if panelists >= 1000 else 2)
        same = (
            np.isclose(ours.term("sample").ss, table.loc["C(sample)", "sum_sq"], rtol=1e-9)
            and np.isclose(ours.term("panelist").ss, table.loc["C(panelist)", "sum_sq"], rtol=1e-9)
            and np.isclose(ours.term("error").ss, table.loc["Residual", "sum_sq"], rtol=1e-9)
            and np.isclose(ours.term("sample").p, table.loc["C(sample)", "PR(>F)"], rtol=1e-6)
        )
        print(f"  {panelists:>5} panelists x 10 samples ({len(data):,} rows): "
              f"ours {ours_s * 1e3:8.1f} ms, "
              f"statsmodels {sm_s * 1e3:9.1f} ms, ratio {sm_s / ours_s:7.1f}x, "
              f"identical SS and p (rtol 1e-9 / 1e-6): {bool(same)}")


if __name__ == "__main__":
    main()
