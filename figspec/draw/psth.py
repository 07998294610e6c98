"""Rate histogram rows, one step artist per axes, y scale locked across rows by default."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from figspec.spec.panels import PsthPanel
from figspec.draw.context import DrawContext

if TYPE_CHECKING:
    from matplotlib.axes import Axes

RATE_LABELS = {"spikes/s": "Rate (spikes/s)", "spikes/trial": "Spikes/trial per bin", "spikes": "Spikes per bin"}


def nice_top(value: float) -> float:
    """A round upper limit at or above ``value`` (1, 2, 2.5, 5 x 10^k)."""
    if not np.isfinite(value) or value <= 0:
        return 1.0
    exponent = np.floor(np.log10(value))
    for step in (1.0, 2.0, 2.5, 5.0, 10.0):
        top = step * 10.0 ** exponent
        if top >= value * (1 - 1e-9):
            return float(top)
    return float(10.0 ** (exponent + 1))


def draw_psth(axes: dict[float, "Axes"], table: pd.DataFrame, panel: PsthPanel, ctx: DrawContext) -> None:
    """Draw each level's bins of the rate table as a filled step outline.

    With ``lock_y`` (default) every row gets the same y-limits, from ``y_max`` or from the
    largest rate of any row rounded up, so a weak response looks weak next to a strong one.
    """
    style = ctx.style
    population = "rate_sem" in table
    signed = panel.measure == "z_score"
    upper = table["rate"] + (table["rate_sem"].fillna(0) if population else 0)
    lower = table["rate"] - (table["rate_sem"].fillna(0) if population else 0)
    if not signed:
        lower = lower.clip(lower=0.0)  # a rate is never negative: the band is cut at 0 (not the data)
    shared = _limits(lower, upper, panel)
    for level, rows in table.groupby("level", sort=True):
        ax = axes[float(level)]
        edges = np.r_[rows["bin_start_ms"].to_numpy(), rows["bin_stop_ms"].to_numpy()[-1]]
        if population:
            ax.stairs(upper[rows.index].to_numpy(), edges, baseline=lower[rows.index].to_numpy(),
                      fill=True, color=style.rate.colour, alpha=0.3, linewidth=0, gid="rate_sem")
            ax.stairs(rows["rate"].to_numpy(), edges, color=style.rate.colour,
                      linewidth=style.summary.line_pt, gid="rate")
        else:
            ax.stairs(rows["rate"].to_numpy(), edges, fill=True, color=style.rate.colour,
                      linewidth=style.rate.edge_pt, gid="rate")
        bottom, top = shared if panel.lock_y else _limits(lower[rows.index], upper[rows.index], panel)
        ax.set_ylim(bottom, top)
        ax.set_yticks([bottom, 0.0, top] if bottom < 0 else [bottom, top])
        ax.yaxis.set_major_formatter("{x:g}")
        ax.set_xlim(*panel.window_ms)


def _limits(lower: pd.Series, upper: pd.Series, panel: PsthPanel) -> tuple[float, float]:
    """y-limits from 0 (or below, for z-scores) to a round top covering every value."""
    low = float(np.nanmin(lower)) if len(lower) else 0.0
    bottom = -nice_top(-low) if panel.measure == "z_score" and low < 0 else 0.0
    return bottom, panel.y_max or nice_top(float(np.nanmax(upper)) if len(upper) else 1.0)


def rate_label(table: pd.DataFrame, panel: PsthPanel) -> str:
    """The y-axis label: the panel's own, or one naming the measure and its unit."""
    return panel.y_label or RATE_LABELS[str(table["rate_unit"].iloc[0])]
