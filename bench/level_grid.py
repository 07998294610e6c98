"""Time rendering a level grid (raster | rate, 9 levels) with figspec against a hand-written baseline.

Both start from the same CSV files on disk and end with a PNG of the same size and resolution.
The baseline is written the way such scripts usually are: a loop over levels and trials with one
``vlines`` call per trial and one ``hist`` call per level. Each is run several times in this process,
alternating, and the medians and their ratio are printed.

    python bench/level_grid.py [--trials 400 1600] [--repeats 5]
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

LEVELS = np.arange(0.0, 81.0, 10.0)
WINDOW_MS = (-50.0, 150.0)
BIN_MS = 5.0
WIDTH_MM, HEIGHT_MM, DPI = 120.0, 150.0, 300

SPEC = """\
[figure]
title = "Benchmark"
width_mm = {w}
height_mm = {h}
formats = ["png"]
png_dpi = {dpi}
[levels]
quantity = "Sound level"
unit = "dB SPL"
[stimulus]
per_trial = true
[sources.bench]
spikes = "spikes.csv"
trials = "trials.csv"
spike_columns = {{ unit = "unit", trial = "trial", time = "time_s" }}
trial_columns = {{ trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s" }}
[[panels]]
name = "spikes"
kind = "raster"
window_ms = [{a}, {b}]
[[panels]]
name = "rate"
kind = "psth"
window_ms = [{a}, {b}]
bin_ms = {bin}
"""


def make_data(folder: Path, trials_per_level: int, seed: int = 7) -> int:
    """Poisson spikes, 20 spikes/s spontaneous plus up to 200 spikes/s during a 50-ms burst."""
    rng = np.random.default_rng(seed)
    levels = np.repeat(LEVELS, trials_per_level)
    rng.shuffle(levels)
    onset = np.arange(levels.size) * 0.5 + 0.2
    trials = pd.DataFrame({"trial": np.arange(levels.size), "level_db": levels,
                           "onset_s": onset, "offset_s": onset + 0.05})
    n_spont = rng.poisson(20 * 0.3, levels.size)
    n_evoked = rng.poisson(200 * 0.05 * levels / 80, levels.size)
    trial = np.r_[np.repeat(trials["trial"], n_spont), np.repeat(trials["trial"], n_evoked)]
    rel = np.r_[rng.uniform(-0.1, 0.2, n_spont.sum()), rng.uniform(0.005, 0.055, n_evoked.sum())]
    spikes = pd.DataFrame({"unit": "b1", "trial": trial, "time_s": onset[trial] + rel})
    spikes.to_csv(folder / "spikes.csv", index=False)
    trials.to_csv(folder / "trials.csv", index=False)
    (folder / "grid.toml").write_text(SPEC.format(w=WIDTH_MM, h=HEIGHT_MM, dpi=DPI, a=WINDOW_MS[0],
                                                  b=WINDOW_MS[1], bin=BIN_MS))
    return len(spikes)


def run_figspec(folder: Path) -> None:
    from figspec import pipeline

    pipeline.render(folder / "grid.toml", folder / "out", ["png"])


def run_by_hand(folder: Path) -> None:
    """The usual hand-written script."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    spikes = pd.read_csv(folder / "spikes.csv")
    trials = pd.read_csv(folder / "trials.csv")
    levels = sorted(trials["level_db"].unique())[::-1]
    fig, axes = plt.subplots(len(levels), 2, figsize=(WIDTH_MM / 25.4, HEIGHT_MM / 25.4),
                             sharex=True, layout="constrained")
    edges = np.arange(WINDOW_MS[0], WINDOW_MS[1] + BIN_MS, BIN_MS)
    ymax = 0
    for r, level in enumerate(levels):
        level_trials = trials[trials["level_db"] == level]
        all_times = []
        for row, (_, trial) in enumerate(level_trials.iterrows()):
            t = spikes[spikes["trial"] == trial["trial"]]["time_s"].to_numpy()
            t = (t - trial["onset_s"]) * 1000
            t = t[(t >= WINDOW_MS[0]) & (t < WINDOW_MS[1])]
            axes[r, 0].vlines(t, row - 0.4, row + 0.4, color="k", linewidth=0.6)
            all_times.extend(t)
        weights = np.full(len(all_times), 1000 / (len(level_trials) * BIN_MS))
        counts, _, _ = axes[r, 1].hist(all_times, bins=edges, weights=weights, color="0.3")
        ymax = max(ymax, counts.max())
        axes[r, 0].axvspan(0, 50, color="tab:blue", alpha=0.1 + 0.3 * level / 80, lw=0)
        axes[r, 1].axvspan(0, 50, color="tab:blue", alpha=0.1 + 0.3 * level / 80, lw=0)
        axes[r, 0].set_ylabel(f"{level:g} dB SPL", rotation=0, ha="right")
    for r in range(len(levels)):
        axes[r, 1].set_ylim(0, ymax)
    axes[-1, 0].set_xlabel("Time (ms)")
    axes[-1, 1].set_xlabel("Time (ms)")
    fig.savefig(folder / "by_hand.png", dpi=DPI)
    plt.close(fig)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--trials", type=int, nargs="+", default=[400, 1600], help="trials per level")
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    print(f"{'trials/level':>12} {'spikes':>9} {'figspec s':>10} {'by hand s':>10} {'ratio':>7}")
    for n in args.trials:
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            n_spikes = make_data(folder, n)
            run_figspec(folder)          # warm-up: imports, font cache
            run_by_hand(folder)
            ours, theirs = [], []
            for _ in range(args.repeats):
                start = time.perf_counter()
                run_figspec(folder)
                ours.append(time.perf_counter() - start)
                start = time.perf_counter()
                run_by_hand(folder)
                theirs.append(time.perf_counter() - start)
            a, b = statistics.median(ours), statistics.median(theirs)
            print(f"{n:>12} {n_spikes:>9} {a:>10.2f} {b:>10.2f} {b / a:>6.1f}x", flush=True)


if __name__ == "__main__":
    main()
