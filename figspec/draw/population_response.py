"""``population_response`` axes: each unit's normalised response vs level as a thin grey line,
the population points (mean ± SEM, or median and interquartile range) in black, and the
population fit."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.context import DrawContext, Labels
from figspec.draw.colours import LINE_DASHES
from figspec.draw.level_axis import STAR_PT, draw_fit, level_limits, own_limits, set_level_scale, versus_title
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PopulationResponsePanel

pd = deferred("pandas")

if TYPE_CHECKING:
    from matplotlib.axes import Axes

Y_LABELS = {"max": "Response (fraction of unit's maximum)", "fit_max": "Response (fraction of unit's fitted maximum)"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: PopulationResponsePanel, ctx: DrawContext) -> None:
    """Each unit's normalised curve (thin, faint), the population points with their spread and the
    population fit; with conditions one set per condition in its colour and line style, every
    condition divided by the first condition's maxima, and an asterisk where the paired test
    between conditions is significant after correction."""
    import matplotlib.colors as mcolors

    units, points, curve = tables["units"], tables["points"], tables["fit"]
    set_level_scale(ax, panel, units["level"].to_numpy())
    split = "condition" in points.columns
    names = list(dict.fromkeys(points["condition"])) if split else [None]
    looks = panel.conditions.looks(len(names), ctx.style.palette) if split else [("black", "solid")]
    for name, (colour, line) in zip(names, looks):
        mine = (lambda t: t[t["condition"] == name]) if split else (lambda t: t)
        faint = mcolors.to_hex(0.3 * np.array(mcolors.to_rgb(colour)) + 0.7) if split else "0.75"
        for unit, rows in mine(units[units["included"]]).groupby("unit", sort=False):
            ax.plot(rows["level"], rows["normalised"], LINE_DASHES[line], color=faint,
                    linewidth=ctx.style.axes.line_pt / 2 if split else ctx.style.axes.line_pt,
                    gid=f"unit:{unit}" + (f":{name}" if split else ""), zorder=1)
        at = points if not split else mine(points)
        x, y = at["level"].to_numpy(), at["value"].to_numpy()
        err = np.vstack([y - at["error_low"].to_numpy(), at["error_high"].to_numpy() - y])
        ax.errorbar(x, y, yerr=np.nan_to_num(err), color=colour, linestyle="none", marker="o",
                    markersize=ctx.style.summary.marker_pt, gid="population" + (f":{name}" if split else ""),
                    zorder=3, clip_on=False, label=str(name) if split else None)
        draw_fit(ax, mine(curve), "value", colour, "population" + (f":{name}" if split else ""), LINE_DASHES[line])
    if split and "tests" in tables:
        sig = tables["tests"][tables["tests"]["p_corrected"] < panel.alpha]
        for level in sig["level"].unique():
            top = points.loc[points["level"] == level, "error_high"].max()
            ax.annotate("*", (float(level), float(top)), xytext=(0, STAR_PT), textcoords="offset points",
                        ha="center", va="bottom", gid=f"difference:{level:g}")
    if panel.subtract_baseline:
        ax.axhline(0.0, color="0.6", linewidth=ctx.style.axes.line_pt, zorder=0)
    own_limits(ax, limits(panel, tables))
    n = int(points["n_units"].max()) if len(points) else 0
    ax.text(0.02, 0.98, f"n = {n} units", transform=ax.transAxes, ha="left", va="top", fontsize=ctx.style.font.tick_pt,
            gid="population_n")
    if split:
        ax.legend(loc="lower right", handletextpad=0.2, borderaxespad=0.2, fontsize=ctx.style.font.tick_pt)


def labels(panel: PopulationResponsePanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    return Labels(versus_title("Population response", levels), levels.axis_label, Y_LABELS[panel.normalise], "")


def limits(panel: PopulationResponsePanel, tables: dict[str, pd.DataFrame]) -> dict[str, tuple[float, float]]:
    units, points = tables["units"], tables["points"]
    values = np.concatenate([units.loc[units["included"], "normalised"].to_numpy(dtype=float),
                             points["error_high"].to_numpy(dtype=float), points["error_low"].to_numpy(dtype=float)])
    finite = values[np.isfinite(values)]
    low = min(0.0, float(finite.min())) if finite.size else 0.0
    return {"x": level_limits(units["level"].to_numpy(), panel.level_axis),
            "y": (low, max(1.0, float(finite.max())) if finite.size else 1.0)}
