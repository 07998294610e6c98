"""Summary panels: level on x, one colour per unit, error bars, fitted curves, a key."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from figspec.draw.context import DrawContext
from figspec.spec.panels import LatencyPanel, LevelResponsePanel

if TYPE_CHECKING:
    from matplotlib.axes import Axes

RESPONSE_LABELS = {"spikes/s": "Evoked rate (spikes/s)", "spikes": "Evoked spikes per trial"}


def _unit_colours(units: list[str], ctx: DrawContext) -> dict[str, str]:
    palette = ctx.style.palette.units
    return {u: palette[i % len(palette)] for i, u in enumerate(units)}


def _level_axis(ax: "Axes", panel, ctx: DrawContext) -> None:
    if panel.level_axis == "log":
        ax.set_xscale("log")
    ax.set_xlabel(panel.x_label or ctx.levels.axis_label)


def draw_level_response(ax: "Axes", tables: dict[str, pd.DataFrame], panel: LevelResponsePanel,
                        ctx: DrawContext) -> None:
    """Mean response per level with its error bars, filled markers where the level's
    Holm-corrected test is significant (open otherwise), the fitted curve, and a mark on the
    level axis at each unit's threshold by test."""
    points, curve, params = tables["points"], tables["fit"], tables["params"]
    colours = _unit_colours(list(points["unit"].unique()), ctx)
    tested = panel.test != "none"
    for unit, rows in points.groupby("unit", sort=False):
        c = colours[unit]
        x, y = rows["level"].to_numpy(), rows["response"].to_numpy()
        err = np.vstack([y - rows["error_low"].to_numpy(), rows["error_high"].to_numpy() - y])
        line = "none" if panel.fit != "none" else "-"
        ax.errorbar(x, y, yerr=np.nan_to_num(err), color=c, linestyle=line, marker="none", gid=f"errors:{unit}")
        sig = rows["significant"].to_numpy(dtype=bool) if tested else np.ones(len(rows), bool)
        ax.plot(x[sig], y[sig], "o", color=c, markeredgecolor=c, label=unit, gid=f"points:{unit}")
        ax.plot(x[~sig], y[~sig], "o", color="white", markeredgecolor=c, gid=f"points_ns:{unit}")
        fitted = curve[curve["unit"] == unit]
        if len(fitted):
            ax.plot(fitted["level"], fitted["response"], "-", color=c, gid=f"fit:{unit}")
        thr = params[(params["unit"] == unit) & (params["quantity"] == "threshold_by_test")]["value"]
        if len(thr) and np.isfinite(thr.iloc[0]):
            ax.plot([thr.iloc[0]], [0.0], marker=6, color=c, clip_on=False, linestyle="none",
                    transform=ax.get_xaxis_transform(), gid=f"threshold:{unit}")
    if panel.subtract_baseline:
        ax.axhline(0.0, color="0.6", linewidth=ctx.style.axes.line_pt, zorder=0)
    _level_axis(ax, panel, ctx)
    ax.set_ylabel(panel.y_label or RESPONSE_LABELS[str(points["response_unit"].iloc[0])])
    if not panel.subtract_baseline:
        ax.set_ylim(bottom=0)
    handles, labels = ax.get_legend_handles_labels()
    if len(colours) == 1:                        # one unit: the key explains markers only
        handles, labels = [], []
    if tested:
        from matplotlib.lines import Line2D

        handles.append(Line2D([], [], marker=6, color="0.3", linestyle="none"))
        labels.append("threshold (test)")
    title = "filled: p < %g (Holm)" % panel.alpha if tested else None
    if not handles and title is None:
        return
    ax.legend(handles, labels, title=title, loc="upper left", title_fontsize=ctx.style.font.tick_pt,
              handletextpad=0.2, borderaxespad=0.2, alignment="left")


def draw_latency(ax: "Axes", tables: dict[str, pd.DataFrame], panel: LatencyPanel, ctx: DrawContext) -> None:
    """Latency per level (median with its bootstrap CI for first spikes) and the fitted curve."""
    points, curve = tables["points"], tables["fit"]
    colours = _unit_colours(list(points["unit"].unique()), ctx)
    for unit, rows in points.groupby("unit", sort=False):
        c = colours[unit]
        x, y = rows["level"].to_numpy(), rows["latency_ms"].to_numpy()
        if rows["ci_low_ms"].notna().any():
            err = np.vstack([y - rows["ci_low_ms"].to_numpy(), rows["ci_high_ms"].to_numpy() - y])
            ax.errorbar(x, y, yerr=np.nan_to_num(err), color=c, linestyle="none", gid=f"errors:{unit}")
        line = "none" if panel.fit != "none" else "-"
        ax.plot(x, y, marker="o", linestyle=line, color=c, label=unit, gid=f"points:{unit}")
        fitted = curve[curve["unit"] == unit]
        if len(fitted):
            ax.plot(fitted["level"], fitted["latency_ms"], "-", color=c, gid=f"fit:{unit}")
    _level_axis(ax, panel, ctx)
    method = {"first_spike": "First-spike latency", "threshold": "Onset latency", "surprise": "Onset latency"}
    ax.set_ylabel(panel.y_label or f"{method[panel.method]} (ms)")
    ax.set_ylim(bottom=0)
    if len(colours) > 1:
        ax.legend(loc="upper right", handletextpad=0.2, borderaxespad=0.2)
