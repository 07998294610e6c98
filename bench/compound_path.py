"""A minimal level-grid script that draws each raster's ticks as one compound path per axes
(one MOVETO/LINETO path) and each rate as one ``stairs``: the fastest plain matplotlib way, the
second baseline bench/level_grid.py times figspec against.

    python bench/compound_path.py FOLDER --format png --window -50 150
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
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MplPath

    spikes = pd.read_csv(args.folder / "spikes.csv")
    trials = pd.read_csv(args.folder / "trials.csv")
    trials["row"] = trials.groupby("level_db").cumcount()
    joined = spikes.merge(trials, on="trial")
    t = (joined["time_s"].to_numpy() - joined["onset_s"].to_numpy()) * 1000
    keep = (t >= window[0]) & (t < window[1])
    t, level, row = t[keep], joined["level_db"].to_numpy()[keep], joined["row"].to_numpy()[keep]
    levels = np.sort(trials["level_db"].unique())[::-1]
    counts = trials["level_db"].value_counts()
    fig, axes = plt.subplots(len(levels), 2, figsize=(WIDTH_MM / 25.4, HEIGHT_MM / 25.4), sharex=True,
                             layout="constrained")
    edges = np.arange(window[0], window[1] + BIN_MS, BIN_MS)
    for r, lv in enumerate(levels):
        x, y = t[level == lv], row[level == lv]
        vertices = np.empty((2 * x.size, 2))
        vertices[0::2, 0] = vertices[1::2, 0] = x
        vertices[0::2, 1], vertices[1::2, 1] = y - 0.4, y + 0.4
        codes = np.tile([MplPath.MOVETO, MplPath.LINETO], x.size)
        axes[r, 0].add_patch(PathPatch(MplPath(vertices, codes), fill=False, linewidth=0.6))
        axes[r, 0].set_ylim(counts[lv] - 0.5, -0.5)
        rate = np.histogram(x, edges)[0] * 1000 / (counts[lv] * BIN_MS)
        axes[r, 1].stairs(rate, edges, fill=True, color="0.3")
        axes[r, 0].set_ylabel(f"{lv:g} dB SPL", rotation=0, ha="right")
    axes[0, 0].set_xlim(*window)
    fig.savefig(args.folder / f"compound.{args.format}", dpi=DPI)


if __name__ == "__main__":
    main()
