"""Benchmark of recipe-experiment analysis: a 6-factor central composite design with
second-order fits of 10 responses, and a 200 x 200 contour grid, against the targets
of issue 18 (under 1 s and under 0.5 s). Also the desirability optimum over the 10
fits and the design itself. Prints best-of-several wall times and their ratio to the
target; nothing here passes or fails on time.

Usage: .venv/bin/python benchmarks/bench_experiment.py [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numpy as np
import pandas as pd

from trials.design.experiment import CCD_ROTATABLE, experiment_design, make_factor
from trials.stats.response_surface import (
    MAXIMIZE,
    Goal,
    contour_grid,
    desirability_optimum,
    response_surface_fit,
)

FIT_TARGET, GRID_TARGET = 1.0, 0.5  # seconds, issue 18


def best(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    factors = [make_factor(f"f{i}", "u", low=10.0 * i, high=10.0 * i + 4,
                           safe_low=10.0 * i - 10, safe_high=10.0 * i + 14) for i in range(6)]
    t_design = best(lambda: experiment_design(CCD_ROTATABLE, factors, center_points=6, rng=1),
                    args.repeat)
    design = experiment_design(CCD_ROTATABLE, factors, center_points=6, rng=1)
    x = design.coded_matrix()
    rng = np.random.default_rng(0)
    names = [f"x{i}" for i in range(6)]
    frame = pd.DataFrame(x, columns=names)
    for j in range(10):  # invented responses: a random quadratic surface plus noise
        b = rng.normal(0, 1, 6)
        B = rng.normal(0, 0.3, (6, 6))
        B = (B + B.T) / 2 - np.eye(6)
        frame[f"y{j}"] = 10 + x @ b + np.einsum("ij,jk,ik->i", x, B, x) + rng.normal(0, .2,
                                                                                       len(x))
    response_surface_fit(frame, names, "y0")  # warm the statsmodels import

    def fits():
        return [response_surface_fit(frame, names, f"y{j}", bound=design.axial or 1.0)
                for j in range(10)]

    t_fit = best(fits, args.repeat)
    fitted = {f"y{j}": f for j, f in enumerate(fits())}
    t_grid = best(lambda: contour_grid(fitted["y0"], 0, 1, n=200), args.repeat)
    goals = [Goal(f"y{j}", MAXIMIZE, low=5, high=15) for j in range(10)]
    t_opt = best(lambda: desirability_optimum(fitted, goals, [(-1, 1)] * 6), max(1, args.repeat
                                                                               // 2))
    print(f"python {platform.python_version()}, {os.cpu_count()} cpus, load "
          f"{os.getloadavg()[0]:.1f}")
    print(f"6-factor rotatable CCD: {len(design.runs)} runs, designed in "
          f"{t_design * 1000:.1f} ms")
    print(f"10 second-order fits (28 terms each, statsmodels OLS): {t_fit:.3f} s "
          f"(target {FIT_TARGET} s; ratio {t_fit / FIT_TARGET:.2f})")
    print(f"200 x 200 contour grid: {t_grid * 1000:.1f} ms (target {GRID_TARGET} s; ratio "
          f"{t_grid / GRID_TARGET:.3f})")
    print(f"desirability optimum over 10 fits, 6 factors: {t_opt:.3f} s (no target)")


if __name__ == "__main__":
    main()
