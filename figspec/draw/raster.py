"""Raster rows: one compound path per axes, one tick per spike, one line per trial."""

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
    from matplotlib.patches import PathPatch

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
        ax.add_patch(PathPatch(tick_path(times[spikes], rows[spikes].astype(float), half), fill=False,
                               edgecolor=style.raster.colour, linewidth=style.raster.tick_width_pt,
                               capstyle="butt", gid="raster"))
        ax.set_ylim(n_trials - 0.5, -0.5)
        ax.set_xlim(*panel.window_ms)
        ax.set_yticks([])
        ax.spines["left"].set_visible(False)


def tick_path(x: np.ndarray, y: np.ndarray, half: float):
    """One compound path of vertical ticks (a MOVETO and a LINETO per spike): a single artist
    that PDF and SVG write as one path, however many spikes."""
    from matplotlib.path import Path

    vertices = np.empty((2 * x.size, 2))
    vertices[0::2, 0] = vertices[1::2, 0] = x
    vertices[0::2, 1] = y - half
    vertices[1::2, 1] = y + half
    codes = np.full(2 * x.size, Path.LINETO, dtype=Path.code_type)
    codes[0::2] = Path.MOVETO
    return Path(vertices, codes)


def tick_positions(patch) -> np.ndarray:
    """The x of every tick of a raster patch drawn by :func:`tick_path` (for tests and checks)."""
    return patch.get_path().vertices[0::2, 0]


def labels(panel: RasterPanel, table: pd.DataFrame, levels: LevelSpec) -> Labels:
    return Labels("Spikes", TIME_LABEL)


def limits(panel: RasterPanel, table: pd.DataFrame) -> dict[str, tuple[float, float]]:
    """Only time is shareable: each repeat's y extent is its own number of trials."""
    return {"x": tuple(panel.window_ms)}
