"""``population_response`` axes: each unit's normalised response vs level as a thin grey line,
the population points (mean ± SEM, or median and interquartile range) in black, and the
population fit."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.context import DrawContext, Labels
from figspec.draw.level_axis import draw_fit, level_limits, own_limits, set_level_scale, versus_title
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PopulationResponsePanel

pd = deferred("pandas")

if TYPE_CHECKING:
    from matplotlib.axes import Axes

Y_LABELS = {"max": "Response (fraction of unit's maximum)", "fit_max": "Response (fraction of unit's fitted maximum)"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: PopulationResponsePanel, ctx: DrawContext) -> None:
    units, points, curve = tables["units"], tables["points"], tables["fit"]
    set_level_scale(ax, panel, units["level"].to_numpy())
    for unit, rows in units[units["included"]].groupby("unit", sort=False):
        ax.plot(rows["level"], rows["normalised"], "-", color="0.75", linewidth=ctx.style.axes.line_pt,
                gid=f"unit:{unit}", zorder=1)
    x, y = points["level"].to_numpy(), points["value"].to_numpy()
    err = np.vstack([y - points["error_low"].to_numpy(), points["error_high"].to_numpy() - y])
    ax.errorbar(x, y, yerr=np.nan_to_num(err), color="black", linestyle="none", marker="o",
                markersize=ctx.style.summary.marker_pt, gid="population", zorder=3, clip_on=False)
    draw_fit(ax, curve, "value", "black", "population")
    if panel.subtract_baseline:
        ax.axhline(0.0, color="0.6", linewidth=ctx.style.axes.line_pt, zorder=0)
    own_limits(ax, limits(panel, tables))
    n = int(points["n_units"].max()) if len(points) else 0
    ax.text(0.02, 0.98, f"n = {n} units", transform=ax.transAxes, ha="left", va="top", fontsize=ctx.style.font.tick_pt,
            gid="population_n")


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
