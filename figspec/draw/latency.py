"""``latency`` axes: latency per level (median with its bootstrap CI for first spikes), one
colour per unit, and the fitted curve."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.colours import category_gid, series
from figspec.draw.context import DrawContext, Labels
from figspec.draw.level_axis import (draw_fit, level_limits, mark_differences, own_limits, same_series, series_key,
                                     set_level_scale, shifted, unit_shifts_pt, versus_title)
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.axes import Axes

METHOD_LABELS = {"first_spike": "First-spike latency", "threshold": "Onset latency", "surprise": "Onset latency"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: LatencyPanel, ctx: DrawContext) -> None:
    """Latency per level: filled markers where the level drives a significant response, open
    where it does not (left out of the fit by default); units side by side, one marker width apart."""
    points, curve = tables["points"], tables["fit"]
    lines = series(points, panel, ctx.style, ctx.unit_label)
    colours = {name: c for name, _, c, _, _, _ in lines}
    set_level_scale(ax, panel, points["level"].to_numpy())        # before any offset transform is made
    shifts = dict(zip(colours, unit_shifts_pt(ax, panel, points["level"], len(colours), ctx.style.summary.marker_pt)))
    for name, rows, c, marker, dash, label in lines:
        at = shifted(ax, ax.transData, shifts[name])
        x, y = rows["level"].to_numpy(dtype=float), rows["latency_ms"].to_numpy(dtype=float)
        if rows["ci_low_ms"].notna().any():
            err = np.vstack([y - rows["ci_low_ms"].to_numpy(), rows["ci_high_ms"].to_numpy() - y])
            ax.errorbar(x, y, yerr=np.nan_to_num(err), color=c, linestyle="none", gid=f"errors:{name}", transform=at)
        if panel.fit == "none":
            ax.plot(x, y, dash, color=c, gid=f"line:{name}", transform=at)
        responsive = rows["responsive"].to_numpy(dtype=bool)
        ax.plot(x[responsive], y[responsive], marker, color=c, label=label, gid=category_gid(name),
                transform=at, clip_on=False, in_layout=False)
        ax.plot(x[~responsive], y[~responsive], marker, color="white", markeredgecolor=c, gid=f"points_ns:{name}",
                transform=at, clip_on=False, in_layout=False)
        draw_fit(ax, same_series(curve, rows), "latency_ms", c, name, dash)
    if "tests" in tables:
        mark_differences(ax, tables["tests"], points, "ci_high_ms", panel.alpha)
    own_limits(ax, limits(panel, tables))            # offset artists do not enter matplotlib's autoscaling
    handles, names = series_key(ax, points, lines)
    if len(colours) == 1:                        # one line: the key explains markers only
        handles, names = [], []
    title = (f"open: p \u2265 {panel.alpha:g} ({points['correction'].iloc[0]})" if (~points["responsive"]).any()
             else None)
    if handles or title:                      # "best": where the fewest data points are
        ax.legend(handles, names, title=title, loc="best", title_fontsize=ctx.style.font.tick_pt,
                  handletextpad=0.2, borderaxespad=0.2,
                  handlelength=2.2 if "condition" in points.columns else None)


def labels(panel: LatencyPanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    return Labels(versus_title("Latency", levels), levels.axis_label, f"{METHOD_LABELS[panel.method]} (ms)", "ms")


def limits(panel: LatencyPanel, tables: dict[str, pd.DataFrame]) -> dict[str, tuple[float, float]]:
    points = tables["points"]
    values = np.concatenate([np.asarray(v, dtype=float) for v in
                             (points["latency_ms"], points["ci_high_ms"], tables["fit"]["latency_ms"])])
    top = float(np.nanmax(values)) if np.isfinite(values).any() else 1.0
    return {"x": level_limits(points["level"].to_numpy(), panel.level_axis), "y": (0.0, top)}
