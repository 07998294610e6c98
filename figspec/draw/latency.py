"""``latency`` axes: latency per level (median with its bootstrap CI for first spikes), one
colour per unit, and the fitted curve."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from figspec.draw.colours import category_gid, unit_colours
from figspec.draw.context import DrawContext, Labels
from figspec.draw.level_axis import level_limits, set_level_scale, versus_title
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel

if TYPE_CHECKING:
    from matplotlib.axes import Axes

METHOD_LABELS = {"first_spike": "First-spike latency", "threshold": "Onset latency", "surprise": "Onset latency"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: LatencyPanel, ctx: DrawContext) -> None:
    points, curve = tables["points"], tables["fit"]
    colours = unit_colours(points["unit"], ctx.style)
    for unit, rows in points.groupby("unit", sort=False):
        c = colours[unit]
        x, y = rows["level"].to_numpy(), rows["latency_ms"].to_numpy()
        if rows["ci_low_ms"].notna().any():
            err = np.vstack([y - rows["ci_low_ms"].to_numpy(), rows["ci_high_ms"].to_numpy() - y])
            ax.errorbar(x, y, yerr=np.nan_to_num(err), color=c, linestyle="none", gid=f"errors:{unit}")
        line = "none" if panel.fit != "none" else "-"
        ax.plot(x, y, marker="o", linestyle=line, color=c, label=unit, gid=category_gid(unit))
        fitted = curve[curve["unit"] == unit]
        if len(fitted):
            ax.plot(fitted["level"], fitted["latency_ms"], "-", color=c, gid=f"fit:{unit}")
    set_level_scale(ax, panel)
    ax.set_ylim(bottom=0)
    if len(colours) > 1:
        ax.legend(loc="upper right", handletextpad=0.2, borderaxespad=0.2)


def labels(panel: LatencyPanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    return Labels(versus_title("Latency", levels), levels.axis_label, f"{METHOD_LABELS[panel.method]} (ms)", "ms")


def limits(panel: LatencyPanel, tables: dict[str, pd.DataFrame]) -> dict[str, tuple[float, float]]:
    points = tables["points"]
    values = np.concatenate([np.asarray(v, dtype=float) for v in
                             (points["latency_ms"], points["ci_high_ms"], tables["fit"]["latency_ms"])])
    top = float(np.nanmax(values)) if np.isfinite(values).any() else 1.0
    return {"x": level_limits(points["level"].to_numpy(), panel.level_axis), "y": (0.0, top)}
