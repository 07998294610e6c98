"""The usual hand-written level-grid script (a loop over levels and trials, one ``vlines`` call
per trial, one ``hist`` per level): the baseline bench/level_grid.py times figspec against.

    python bench/hand_loop.py FOLDER --format png --window -50 150
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from baseline_args import BIN_MS, DPI, HEIGHT_MM, WIDTH_MM, arguments


def main() -> None:
    args = arguments()
    window = args.window
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    folder = args.folder
    spikes = pd.read_csv(folder / "spikes.csv")
    trials = pd.read_csv(folder / "trials.csv")
    levels = sorted(trials["level_db"].unique())[::-1]
    fig, axes = plt.subplots(len(levels), 2, figsize=(WIDTH_MM / 25.4, HEIGHT_MM / 25.4),
                             sharex=True, layout="constrained")
    edges = np.arange(window[0], window[1] + BIN_MS, BIN_MS)
    ymax = 0
    for r, level in enumerate(levels):
        level_trials = trials[trials["level_db"] == level]
        all_times = []
        for row, (_, trial) in enumerate(level_trials.iterrows()):
            t = spikes[spikes["trial"] == trial["trial"]]["time_s"].to_numpy()
            t = (t - trial["onset_s"]) * 1000
            t = t[(t >= window[0]) & (t < window[1])]
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
    fig.savefig(folder / f"by_hand.{args.format}", dpi=DPI)


if __name__ == "__main__":
    main()
