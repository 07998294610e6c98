"""Step 4: plan each panel from its tables (labels, repeats, data limits) and lay out the
figure, always inside the style's matplotlib context."""

from __future__ import annotations

from typing import TYPE_CHECKING

from figspec.draw.compose import PanelPlan, compose
from figspec.draw.context import DrawContext, Labels, check_fonts, missing_glyphs, styled
from figspec.errors import UserError
from figspec.registry import kind_of
from figspec.spec.panel_base import PanelBase
from figspec.steps.compute import Tables
from figspec.steps.resolve import Resolved

if TYPE_CHECKING:
    from matplotlib.figure import Figure


def draw(resolved: Resolved, tables: Tables) -> "Figure":
    """The figure of a resolved spec, drawn from its tables in its style."""
    check_fonts(resolved.style)
    model = resolved.spec.model
    ctx = DrawContext(style=resolved.style, levels=model.levels, units=model.units)
    with styled(resolved.style), missing_glyphs():
        try:
            return compose(model, [plan(resolved, tables, p) for p in resolved.panels], ctx)
        except UserError as err:               # limits found only with the data drawn (a tick step)
            raise type(err)([resolved.spec.locate(p) for p in err.problems]) from None


def plan(resolved: Resolved, tables: Tables, panel: PanelBase) -> PanelPlan:
    """What the draw layer needs for one panel: its tables, its kind's draw function, its
    labels (the spec's own over the kind's defaults), data limits and the groups it repeats over."""
    model = resolved.spec.model
    kind = kind_of(panel)
    table = tables.panels[panel.name]
    default = kind.labels(panel, table, model.levels)
    labels = Labels(panel.title if panel.title is not None else default.title, panel.x_label or default.x,
                    getattr(panel, "y_label", None) or default.y, default.y_unit)
    limits = kind.limits(panel, table)
    if kind.layout != "rows":
        return PanelPlan(panel, table, None, kind.draw, labels, limits, [], [])
    stim = tables.stimulus[panel.name]
    groups, group_labels = _repeats(resolved, panel, table, stim)
    return PanelPlan(panel, table, stim, kind.draw, labels, limits, groups, group_labels)


def _repeats(resolved: Resolved, panel, table, stim) -> tuple[list, list[str]]:
    """The levels or units a time panel repeats over, in display order, and their labels."""
    model = resolved.spec.model
    if panel.arrange == "overlay":
        return [], []
    counts = model.layout is None or model.layout.trial_counts
    if panel.repeat == "level":
        groups = sorted({float(v) for v in table["level"]},
                        reverse=model.levels.order == "high_at_top" and panel.arrange == "rows")
        if "n_units" in table:               # a population: the trials of every unit, and how many units
            n = table.groupby("level")["n_trials"].first()
            pooled = table.groupby("level")["n_units"].first()
            text = {g: f"\nn = {int(pooled[g])} units ({int(n[g])} trials)" for g in groups}   # SEM is across units
        elif "n_shown" in table:             # a seeded subset of the trials is drawn
            n = stim.groupby("level")["n_trials"].first()
            shown = table.groupby("level")["n_shown"].first()
            text = {g: f"\nn = {int(shown[g])} of {int(n[g])}" for g in groups}
        elif "condition" in table:           # trials split by condition: each block's count, in block order
            each = "n_condition" if "n_condition" in table else "n_trials"
            n = table.groupby(["level", "condition"], sort=False)[each].first()
            text = {g: "\nn = " + " + ".join(str(int(v)) for v in n.loc[g]) for g in groups}
        else:
            n = stim.groupby("level")["n_trials"].first()
            text = {g: f"\nn = {int(n[g])}" for g in groups}
        return groups, [model.levels.label(g) + (text[g] if counts else "") for g in groups]
    n = stim.groupby("unit")["n_trials"].first()
    return list(panel.units), [model.units.label(g) + (f"\nn = {int(n[g])}" if counts else "") for g in panel.units]
