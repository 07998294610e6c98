"""Raster rows: one line collection per axes, one tick per spike, one line per trial."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.draw.context import DrawContext, Labels, group_key
from figspec.draw.psth import TIME_LABEL
from figspec.spec.models import LevelSpec
from figspec.spec.panels import RasterPanel


def draw(axes: dict, table: pd.DataFrame, panel: RasterPanel, ctx: DrawContext) -> None:
    """Draw each level's (or unit's) rows of the raster table into its axes.

    Trial 0 is the top line. Every trial presented has a line, so trials with no spike stay
    visible as empty lines and the y extent is the number of trials.
    """
    from matplotlib.collections import LineCollection

    style = ctx.style
    half = style.raster.tick_height / 2
    groups = table[panel.repeat].to_numpy()
    bounds = np.flatnonzero(np.r_[True, groups[1:] != groups[:-1], True])
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        ax = axes[group_key(panel.repeat, groups[lo])]
        rows = table["row"].to_numpy()[lo:hi]
        times = table["time_ms"].to_numpy()[lo:hi]
        n_trials = int(table["n_trials"].iloc[lo])
        spikes = ~np.isnan(times)
        x, y = times[spikes], rows[spikes].astype(float)
        segments = np.empty((x.size, 2, 2))
        segments[:, 0, 0] = segments[:, 1, 0] = x
        segments[:, 0, 1] = y - half
        segments[:, 1, 1] = y + half
        ax.add_collection(LineCollection(segments, colors=style.raster.colour,
                                         linewidths=style.raster.tick_width_pt, gid="raster"),
                          autolim=False)
        ax.set_ylim(n_trials - 0.5, -0.5)
        ax.set_xlim(*panel.window_ms)
        ax.set_yticks([])
        ax.spines["left"].set_visible(False)


def labels(panel: RasterPanel, table: pd.DataFrame, levels: LevelSpec) -> Labels:
    return Labels("Spikes", TIME_LABEL)


def limits(panel: RasterPanel, table: pd.DataFrame) -> dict[str, tuple[float, float]]:
    """Only time is shareable: each repeat's y extent is its own number of trials."""
    return {"x": tuple(panel.window_ms)}
