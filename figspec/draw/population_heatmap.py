"""``population_heatmap`` axes: one image row per unit in rank order, a colour bar naming the
quantity, and dashed lines at stimulus onset. A diverging map centred on 0 for z-scores (the
same limit above and below, so equal colours mean equal distances from baseline), a sequential
one from 0 to 1 for fractions of the peak."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.compute.population_heatmap import colour_limits
from figspec.draw.context import DrawContext, Labels, at_page_resolution
from figspec.draw.psth import TIME_LABEL
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PopulationHeatmapPanel

pd = deferred("pandas")

if TYPE_CHECKING:
    from matplotlib.axes import Axes

MAX_NAMED_ROWS = 30          # above this, rows are numbered every few units instead of named
COLOUR_LABELS = {"z_score": "Rate (z-score vs baseline)", "peak": "Rate (fraction of unit's peak)"}
SORT_LABELS = {"latency": "latency", "peak_time": "peak time", "name": "name"}


def matrix(table: pd.DataFrame) -> tuple[np.ndarray, list[str]]:
    """(units x bins values in rank order, the units in that order)."""
    units = table.drop_duplicates("unit").sort_values("rank")["unit"].tolist()
    n_bins = int((table["unit"] == units[0]).sum())
    values = table.sort_values(["rank", "bin_start_ms"])["value"].to_numpy(dtype=float).reshape(len(units), n_bins)
    return values, units


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: PopulationHeatmapPanel, ctx: DrawContext) -> None:
    values, units = matrix(tables["matrix"])
    low, high = colour_limits(panel, values)
    finite = values[np.isfinite(values)]
    extend = {(False, False): "neither", (True, False): "min", (False, True): "max", (True, True): "both"}[
        (bool((finite < low).any()), bool((finite > high).any()))]
    cmap = "RdBu_r" if panel.scale == "z_score" else "viridis"
    w0, w1 = panel.window_ms
    image = ax.imshow(at_page_resolution(ax, values), cmap=cmap, vmin=low, vmax=high, extent=(w0, w1, len(units) - 0.5, -0.5), aspect="auto",
                      interpolation="none", gid="population_heatmap")
    ax.axvline(0.0, color="white" if panel.scale == "peak" else "black", linestyle="--",   # seen on the map
               linewidth=ctx.style.axes.line_pt, gid="onset")
    ax.set_xlim(w0, w1)
    ax.set_ylim(len(units) - 0.5, -0.5)
    if len(units) <= MAX_NAMED_ROWS:
        ax.set_yticks(range(len(units)), [ctx.unit_label(u) for u in units])
    else:
        step = int(np.ceil(len(units) / 10))
        ax.set_yticks(range(0, len(units), step), [str(i + 1) for i in range(0, len(units), step)])
    bar = ax.get_figure(root=False).colorbar(image, ax=ax, location="right", shrink=0.8, aspect=25, pad=0.02,
                                             extend=extend)
    bar.set_label(COLOUR_LABELS[panel.scale], fontsize=ctx.style.font.tick_pt)
    bar.ax.tick_params(labelsize=ctx.style.font.tick_pt)
    bar.ax.set_gid("population_heatmap_key")


def labels(panel: PopulationHeatmapPanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    n = tables["matrix"]["unit"].nunique()
    sort = panel.sort_column if panel.sort_by == "table" else (
        f"fitted {panel.sort_parameter}" if panel.sort_by == "fit" else SORT_LABELS[panel.sort_by])
    return Labels(f"Population (n = {n} units)", TIME_LABEL, panel.y_label or f"Unit (by {sort})")
