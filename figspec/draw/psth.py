"""Rate histogram rows, one step artist per axes, y scale locked across rows by default."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from figspec.spec.models import PsthPanel
from figspec.spec.style import Style

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


def draw_psth(axes: dict[float, "Axes"], table: pd.DataFrame, panel: PsthPanel, style: Style) -> None:
    """Draw each level's bins of the rate table as a filled step outline.

    With ``lock_y`` (default) every row gets the same y-limits, from ``y_max`` or from the
    largest rate of any row rounded up, so a weak response looks weak next to a strong one.
    """
    shared_top = panel.y_max or nice_top(float(table["rate"].max()))
    for level, rows in table.groupby("level", sort=True):
        ax = axes[float(level)]
        edges = np.r_[rows["bin_start_ms"].to_numpy(), rows["bin_stop_ms"].to_numpy()[-1]]
        ax.stairs(rows["rate"].to_numpy(), edges, fill=True, color=style.rate.colour,
                  linewidth=style.rate.edge_pt, gid="rate")
        top = shared_top if panel.lock_y else (panel.y_max or nice_top(float(rows["rate"].max())))
        ax.set_ylim(0, top)
        ax.set_yticks([0, top])
        ax.yaxis.set_major_formatter("{x:g}")
        ax.set_xlim(*panel.window_ms)


def rate_label(table: pd.DataFrame, panel: PsthPanel) -> str:
    """The y-axis label: the panel's own, or one naming the measure and its unit."""
    return panel.y_label or RATE_LABELS[str(table["rate_unit"].iloc[0])]
