"""Time computing every per-level table for about 10^6 spikes across 9 levels.

Tables: raster, PSTH (spikes/s), first-spike latency with bootstrap CI (2000 resamples), and
level-response with Wilcoxon tests, Holm correction and a Naka-Rushton fit, for one unit.
Loading is not timed (the recording is built once). Prints the median of several runs.

    python bench/compute_tables.py [--spikes 1000000] [--repeats 5]
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np
import pandas as pd

from figspec.data.assemble import Layout, assemble
from figspec.registry import kind_of
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel, LevelResponsePanel, PsthPanel, RasterPanel

LEVELS = np.arange(0.0, 81.0, 10.0)


def recording(n_spikes: int, trials_per_level: int, seed: int = 3):
    rng = np.random.default_rng(seed)
    level = np.repeat(LEVELS, trials_per_level)
    onset = np.arange(level.size) * 1.0
    per_trial = n_spikes // level.size
    trial = np.repeat(np.arange(level.size), per_trial)
    drive = 1 / (1 + 10 ** (1.5 * (40 - level[trial]) / 20))   # saturating with level
    evoked = rng.random(trial.size) < 0.1 + 0.6 * drive
    rel = np.where(evoked, rng.uniform(0.004, 0.06, trial.size), rng.uniform(-0.2, 0.4, trial.size))
    spikes = pd.DataFrame({"unit": "u1", "key0": trial, "time": onset[trial] + np.round(rel, 6)})
    spikes = spikes.drop_duplicates(ignore_index=True)        # two spikes of one unit in one microsecond: none
    trials = pd.DataFrame({"key0": np.arange(level.size), "level": level, "onset": onset, "offset": onset + 0.05})
    return assemble(spikes, trials, Layout(where="bench", locs={}, clock="session"))


PANELS = [RasterPanel(name="r", kind="raster", unit="u1"),
          PsthPanel(name="p", kind="psth", unit="u1", bin_ms=1),
          LatencyPanel(name="l", kind="latency", unit="u1", response_ms=(0, 60)),
          LevelResponsePanel(name="v", kind="level_response", unit="u1", response_ms=(0, 60),
                             baseline_ms=(-60, 0), fit="naka_rushton")]


def compute_all(rec) -> None:
    """Every panel's tables through its registry entry, as the pipeline computes them."""
    levels = LevelSpec(unit="dB SPL", scale="pressure_db")
    for panel in PANELS:
        kind = kind_of(panel)
        kind.compute(rec, kind.resolve(rec, panel, levels), levels)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--spikes", type=int, default=1_000_000)
    parser.add_argument("--trials", type=int, default=400, help="trials per level")
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    rec = recording(args.spikes, args.trials)
    compute_all(rec)  # warm-up
    times = []
    for _ in range(args.repeats):
        start = time.perf_counter()
        compute_all(rec)
        times.append(time.perf_counter() - start)
    print(f"{rec.n_spikes} spikes, {len(LEVELS)} levels x {args.trials} trials: "
          f"median {statistics.median(times):.3f} s over {args.repeats} runs "
          f"(min {min(times):.3f}, max {max(times):.3f})")


if __name__ == "__main__":
    main()
