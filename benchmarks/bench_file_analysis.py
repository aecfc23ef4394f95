"""Benchmark: `trials analyze ratings FILE.csv` against the floor of reading the file.

Writes an invented tidy file of 4,000 panelists x 20 samples x 25 replicates (2,000,000
rows) and a small one (40 x 20 x 2), then times, each in a fresh process so that imports
count alike:

- the command, `trials analyze ratings FILE --replicate replicate --json`;
- the floor: pandas reading the same file (default parsing) and taking the cell sums
  (groupby panelist, sample) that any ANOVA of it needs.

Prints each time, the growth from the small file to the large one for both, and the
ratio of the growths (the issue's goal: at most 1.5). Figures only; nothing here
passes or fails on time.

Usage: .venv/bin/python benchmarks/bench_file_analysis.py [--quick]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

FLOOR = """
import sys, pandas as pd
f = pd.read_csv(sys.argv[1])
f.groupby(["panelist", "sample"])["score"].agg(["sum", "count"])
"""


def write(path: Path, panelists: int, samples: int, reps: int, seed: int = 0) -> int:
    rng = np.random.default_rng(seed)
    p = np.repeat(np.arange(panelists), samples * reps)
    s = np.tile(np.repeat(np.arange(samples), reps), panelists)
    r = np.tile(np.arange(1, reps + 1), panelists * samples)
    score = np.clip(np.rint(5 + 0.1 * s + rng.normal(0, 1, panelists)[p]
                            + rng.normal(0, 1.2, p.size)), 1, 9).astype(int)
    frame = pd.DataFrame({"panelist": np.char.add("P", p.astype(str)),
                          "sample": np.char.add("variant-", s.astype(str)),
                          "replicate": r, "score": score})
    frame.to_csv(path, index=False)
    return len(frame)


ROOT = Path(__file__).resolve().parents[1]
# the package of this folder, not whichever copy is installed in the environment
ENV = dict(os.environ, PYTHONPATH=str(ROOT))


def timed(cmd: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, env=ENV, cwd=ROOT)
    return time.perf_counter() - start


def best(cmd: list[str], runs: int) -> float:
    return min(timed(cmd) for _ in range(runs))


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--quick", action="store_true", help="200,000 rows instead of 2,000,000")
    args = parser.parse_args()
    runs = 2 if args.quick else 3
    big = (400, 20, 25) if args.quick else (4000, 20, 25)
    trials = [sys.executable, "-m", "trials.cli"]
    with tempfile.TemporaryDirectory(prefix="trials-bench-") as folder:
        small_path, big_path = Path(folder) / "small.csv", Path(folder) / "big.csv"
        n_small = write(small_path, 40, 20, 2)
        n_big = write(big_path, *big)
        out = {}
        for name, path in (("small", small_path), ("big", big_path)):
            out[name] = (
                best([*trials, "analyze", "ratings", str(path), "--replicate", "replicate",
                      "--json"], runs),
                best([sys.executable, "-c", FLOOR, str(path)], runs),
            )
    grow_cmd = out["big"][0] - out["small"][0]
    grow_floor = out["big"][1] - out["small"][1]
    print(f"rows: small {n_small:,}, big {n_big:,} (best of {runs} fresh processes)")
    print(f"trials analyze ratings: small {out['small'][0]:.2f} s, big {out['big'][0]:.2f} s, "
          f"growth {grow_cmd:.2f} s")
    print(f"floor (pandas read + cell sums): small {out['small'][1]:.2f} s, "
          f"big {out['big'][1]:.2f} s, growth {grow_floor:.2f} s")
    print(f"ratio of growths (command / floor): {grow_cmd / grow_floor:.2f} (goal <= 1.5)")


if __name__ == "__main__":
    main()
