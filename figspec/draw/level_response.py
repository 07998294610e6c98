"""``level_response`` axes: level on x, one colour per unit, error bars, test markers, fitted
curves, thresholds, and a key."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.colours import category_gid, series
from figspec.draw.context import DrawContext, Labels
from figspec.draw.level_axis import (draw_fit, level_limits, mark_differences, own_limits, same_series, series_key,
                                     set_level_scale, shifted, unit_shifts_pt, versus_title)
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LevelResponsePanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.axes import Axes

def response_label(panel: LevelResponsePanel, unit: str) -> str:
    """What the y axis shows: the rate or count in the response window, or above baseline."""
    if panel.subtract_baseline:
        return "Rate above baseline (spikes/s)" if unit == "spikes/s" else "Spikes above baseline per trial"
    window = f"{panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms"
    return f"Rate in {window} (spikes/s)" if unit == "spikes/s" else f"Spikes in {window} per trial"


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: LevelResponsePanel, ctx: DrawContext) -> None:
    """Mean response per level with its error bars, filled markers where the level's
    corrected test is significant (open otherwise), the fitted curve, and a mark on the
    level axis at each unit's threshold by test."""
    points, curve, params = tables["points"], tables["fit"], tables["params"]
    lines = series(points, panel, ctx.style, ctx.unit_label)
    colours = {name: c for name, _, c, _, _, _ in lines}
    unit_colour = {}
    for _, rows, c, _, _, _ in lines:            # a unit's threshold mark: its first condition's colour
        unit_colour.setdefault(str(rows["unit"].iloc[0]), c)
    tested = panel.test != "none"
    set_level_scale(ax, panel, points["level"].to_numpy())        # before any offset transform is made
    shifts = dict(zip(colours, unit_shifts_pt(ax, panel, points["level"], len(colours), ctx.style.summary.marker_pt)))
    for name, rows, c, marker, dash, label in lines:
        at = shifted(ax, ax.transData, shifts[name])
        x, y = rows["level"].to_numpy(), rows["response"].to_numpy()
        err = np.vstack([y - rows["error_low"].to_numpy(), rows["error_high"].to_numpy() - y])
        line = "none" if panel.fit != "none" else dash
        ax.errorbar(x, y, yerr=np.nan_to_num(err), color=c, linestyle=line, marker="none", gid=f"errors:{name}",
                    transform=at)
        sig = rows["significant"].to_numpy(dtype=bool) if tested else np.ones(len(rows), bool)
        ax.plot(x[sig], y[sig], marker, color=c, markeredgecolor=c, label=label, gid=category_gid(name),
                transform=at, clip_on=False, in_layout=False)
        ax.plot(x[~sig], y[~sig], marker, color="white", markeredgecolor=c, gid=f"points_ns:{name}", transform=at,
                clip_on=False, in_layout=False)
        draw_fit(ax, same_series(curve, rows), "response", c, name, dash)
    if "tests" in tables:
        mark_differences(ax, tables["tests"], points, "error_high", panel.alpha)
    thresholds = params[params["quantity"] == "threshold_by_test"]
    if "condition" in params.columns:            # one mark per unit: the first condition's threshold
        thresholds = thresholds[thresholds["condition"] == points["condition"].iloc[0]]
    thresholds = thresholds.set_index("unit")["value"].dropna()
    for level, units in thresholds.groupby(thresholds, sort=False).groups.items():
        # units with one threshold level sit side by side, one marker width apart: none hides another
        for unit, dx in zip(units, (np.arange(len(units)) - (len(units) - 1) / 2) * ctx.style.summary.marker_pt):
            ax.plot([level], [0.0], marker=6, color=unit_colour[unit], clip_on=False, linestyle="none", in_layout=False,
                    transform=shifted(ax, ax.get_xaxis_transform(), float(dx)), gid=f"threshold:{unit}")
    if panel.subtract_baseline:
        ax.axhline(0.0, color="0.6", linewidth=ctx.style.axes.line_pt, zorder=0)
    own_limits(ax, limits(panel, tables))            # offset artists do not enter matplotlib's autoscaling
    handles, names = series_key(ax, points, lines)
    if len(colours) == 1:                        # one line: the key explains markers only
        handles, names = [], []
    if tested:
        from matplotlib.lines import Line2D

        handles.append(Line2D([], [], marker=6, color="0.3", linestyle="none"))
        names.append("threshold (test)")
    title = f"filled: p < {panel.alpha:g} ({points['correction'].iloc[0]})" if tested else None
    if not handles and title is None:
        return
    ax.legend(handles, names, title=title, loc="upper left", title_fontsize=ctx.style.font.tick_pt,
              handletextpad=0.2, borderaxespad=0.2,
                  handlelength=2.2 if "condition" in points.columns else None, alignment="left")


def labels(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    unit = str(tables["points"]["response_unit"].iloc[0])
    return Labels(versus_title("Response", levels), levels.axis_label, response_label(panel, unit),
                  unit)


def limits(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame]) -> dict[str, tuple[float, float]]:
    points, curve = tables["points"], tables["fit"]
    values = np.concatenate([np.asarray(v, dtype=float) for v in
                             (points["error_low"], points["error_high"], points["response"], curve["response"])])
    low = float(np.nanmin(values)) if not panel.subtract_baseline else min(0.0, float(np.nanmin(values)))
    return {"x": level_limits(points["level"].to_numpy(), panel.level_axis),
            "y": (0.0 if not panel.subtract_baseline else low, float(np.nanmax(values)))}
