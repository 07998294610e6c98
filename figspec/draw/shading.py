"""Stimulus window shading, its opacity encoding the level."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from figspec.spec.style import Style

if TYPE_CHECKING:
    from matplotlib.axes import Axes


def level_opacity(levels: np.ndarray, all_levels: np.ndarray, opacity: tuple[float, float]) -> np.ndarray:
    """Opacity rising linearly with level from ``opacity[0]`` (lowest of ``all_levels``) to
    ``opacity[1]`` (highest); a single level gets the highest."""
    lo, hi = opacity
    first, last = float(np.min(all_levels)), float(np.max(all_levels))
    if last == first:
        return np.full(np.shape(levels), hi)
    return lo + (hi - lo) * (np.asarray(levels, dtype=float) - first) / (last - first)


def shade_stimulus(ax: "Axes", window: pd.Series, alpha: float, style: Style) -> list:
    """Shade one level's stimulus window (a row of the stimulus table) behind the data.

    Where per-trial stops differ, the span from the earliest to the latest stop is drawn
    fainter, so the figure shows the range rather than pretending to one window.
    """
    colour = style.stimulus.colour
    spans = [ax.axvspan(window["start_ms"], window["stop_min_ms"], color=colour, alpha=alpha,
                        linewidth=0, zorder=0)]
    if window["stop_max_ms"] > window["stop_min_ms"]:
        spans.append(ax.axvspan(window["stop_min_ms"], window["stop_max_ms"], color=colour,
                                alpha=alpha * style.stimulus.range_hatch_opacity, linewidth=0, zorder=0))
    for span in spans:
        span.set_gid("stimulus")
    return spans
