"""``unit_distribution`` axes: one column per group, one point per unit (spread sideways by rank
so none hides another; open where the unit's fit is poorly constrained), the median as a bar
and the interquartile range as a line, n below each group."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.context import DrawContext, Labels
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import UnitDistributionPanel

pd = deferred("pandas")

if TYPE_CHECKING:
    from matplotlib.axes import Axes

NAMES = {"L50": "L50", "n": "Exponent n", "Rmax": "Rmax", "R0": "R0", "threshold": "Threshold",
         "latency": "First-spike latency", "t0": "Piéron t0", "k": "Piéron k", "beta": "Piéron β"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: UnitDistributionPanel, ctx: DrawContext) -> None:
    """Points per group with the median and interquartile range, or each group's cumulative
    distribution (``view = "cumulative"``)."""
    if panel.view == "cumulative":
        _cumulative(ax, tables, panel, ctx)
        return
    units, summary = tables["units"], tables["summary"]
    groups = summary["group"].tolist()
    placed = []
    for i, group in enumerate(groups):
        rows = units[(units["group"] == group) & units["shown"].isin(["filled", "open"])].sort_values("value")
        spread = _spread(rows["value"].to_numpy(dtype=float))
        filled = (rows["shown"] == "filled").to_numpy()
        x, y = i + spread, rows["value"].to_numpy(dtype=float)
        placed.append(pd.DataFrame({"unit": rows["unit"].to_numpy(), "x": x, "y": y, "group": i}))
        ax.plot(x[filled], y[filled], "o", color="black", markersize=ctx.style.summary.marker_pt, gid=f"units:{group}",
                clip_on=False, in_layout=False)
        ax.plot(x[~filled], y[~filled], "o", color="white", markeredgecolor="black",
                markersize=ctx.style.summary.marker_pt, gid=f"units_open:{group}", clip_on=False, in_layout=False)
        row = summary.iloc[i]
        ax.plot([i - 0.3, i + 0.3], [row["median"]] * 2, "-", color="0.3", linewidth=2 * ctx.style.axes.line_pt,
                gid=f"median:{group}")
        ax.plot([i + 0.32] * 2, [row["q25"], row["q75"]], "-", color="0.3", linewidth=ctx.style.axes.line_pt,
                gid=f"iqr:{group}")
    if "condition" in units.columns and placed:       # paired values: each unit's points joined across conditions
        wide = pd.concat(placed).pivot_table(index="unit", columns="group", values=["x", "y"], aggfunc="first")
        for a, b in zip(range(len(groups) - 1), range(1, len(groups))):
            if ("x", a) in wide and ("x", b) in wide:
                both = wide[[("x", a), ("x", b), ("y", a), ("y", b)]].dropna()
                for r in both.itertuples(index=False):
                    ax.plot([r[0], r[1]], [r[2], r[3]], "-", color="0.8", linewidth=ctx.style.axes.line_pt / 2,
                            zorder=0, gid="pair")
    ax.set_xticks(range(len(groups)), [f"{g}\nn = {n}" for g, n in zip(groups, summary["n_units"])])
    ax.set_xlim(-0.6, len(groups) - 0.4)


def _cumulative(ax: "Axes", tables: dict[str, pd.DataFrame], panel: UnitDistributionPanel, ctx: DrawContext) -> None:
    """Each group's empirical cumulative distribution: a step up of 1/n at each unit's value (the
    values shown by the panel's rule for poorly constrained fits), in the condition's colour and
    line style, or the palette's colours by group."""
    from figspec.draw.colours import LINE_DASHES

    units, summary = tables["units"], tables["summary"]
    groups = summary["group"].tolist()
    if "condition" in units.columns:
        looks = [(c, LINE_DASHES[line]) for c, line in panel.conditions.looks(len(groups), ctx.style.palette)]
    else:
        looks = [(ctx.style.palette.units[i % len(ctx.style.palette.units)], "-") for i in range(len(groups))]
    for group, (colour, dash), n in zip(groups, looks, summary["n_units"]):
        values = np.sort(units.loc[(units["group"] == group) & units["shown"].isin(["filled", "open"]),
                                   "value"].to_numpy(dtype=float))
        if not values.size:
            continue
        x = np.r_[values[0], values]
        y = np.r_[0.0, np.arange(1, values.size + 1) / values.size]
        ax.step(x, y, where="post", color=colour, linestyle=dash, label=f"{group} (n = {n})", gid=f"cumulative:{group}")
    ax.set_ylim(0.0, 1.02)
    ax.legend(loc="lower right", handlelength=2.2, borderaxespad=0.2, fontsize=ctx.style.font.tick_pt)


def _spread(values: np.ndarray) -> np.ndarray:
    """Sideways offsets (values sorted): by rank across the group when values differ, so none
    hides another; when values repeat (thresholds are levels), each run of equal values is spread
    evenly about the column's centre, up to 0.25 of a column to either side."""
    if values.size < 2:
        return np.zeros(values.size)
    _, first, counts = np.unique(values, return_index=True, return_counts=True)
    if counts.max() == 1:
        return np.linspace(-0.15, 0.15, values.size)
    step = min(0.05, 0.5 / counts.max())
    within = np.arange(values.size) - np.repeat(first, counts)
    return (within - np.repeat((counts - 1) / 2, counts)) * step


def labels(panel: UnitDistributionPanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    value_unit = tables["units"]["value_unit"].replace("", np.nan).dropna()
    shown_unit = value_unit.iloc[0] if len(value_unit) else ""
    test = tables.get("test")
    tested = "" if test is None or not len(test) else f": p = {test['p'].iloc[0]:.2g}, r = {test['r'].iloc[0]:.2f}"
    paired = tables.get("tests")
    if paired is not None and len(paired) == 1 and np.isfinite(paired["p"].iloc[0]):
        tested = f": p = {paired['p'].iloc[0]:.2g}, r = {paired['effect_size'].iloc[0]:.2f}"
    title = f"{NAMES[panel.quantity]}{tested}" if tested else f"{NAMES[panel.quantity]} across units"
    named = NAMES[panel.quantity] + (f" ({shown_unit})" if shown_unit else "")
    if panel.view == "cumulative":
        return Labels(title, named, "Fraction of units", "")
    return Labels(title, None, named, shown_unit or None)
