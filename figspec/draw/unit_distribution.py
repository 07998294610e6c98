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

NAMES = {"L50": "L50", "n": "Exponent n", "Rmax": "Rmax", "R0": "R0", "threshold": "Threshold"}


def draw(ax: "Axes", tables: dict[str, pd.DataFrame], panel: UnitDistributionPanel, ctx: DrawContext) -> None:
    units, summary = tables["units"], tables["summary"]
    groups = summary["group"].tolist()
    placed = []
    for i, group in enumerate(groups):
        rows = units[(units["group"] == group) & units["shown"].isin(["filled", "open"])].sort_values("value")
        spread = np.linspace(-0.15, 0.15, len(rows)) if len(rows) > 1 else np.zeros(len(rows))
        filled = (rows["shown"] == "filled").to_numpy()
        x, y = i + spread, rows["value"].to_numpy(dtype=float)
        placed.append(pd.DataFrame({"unit": rows["unit"].to_numpy(), "x": x, "y": y, "group": i}))
        ax.plot(x[filled], y[filled], "o", color="black", markersize=ctx.style.summary.marker_pt, gid=f"units:{group}",
                clip_on=False)
        ax.plot(x[~filled], y[~filled], "o", color="white", markeredgecolor="black",
                markersize=ctx.style.summary.marker_pt, gid=f"units_open:{group}", clip_on=False)
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


def labels(panel: UnitDistributionPanel, tables: dict[str, pd.DataFrame], levels: LevelSpec) -> Labels:
    value_unit = tables["units"]["value_unit"].replace("", np.nan).dropna()
    shown_unit = value_unit.iloc[0] if len(value_unit) else ""
    test = tables.get("test")
    tested = "" if test is None or not len(test) else f": p = {test['p'].iloc[0]:.2g}, r = {test['r'].iloc[0]:.2f}"
    return Labels(f"{NAMES[panel.quantity]}{tested}" if tested else f"{NAMES[panel.quantity]} across units", None,
                  NAMES[panel.quantity] + (f" ({shown_unit})" if shown_unit else ""), shown_unit or None)
