"""Step 3: every panel's tables (its kind's pure compute function) and, for panels with time
on x, the stimulus windows of the levels (and units) they show."""

from __future__ import annotations

from dataclasses import dataclass, replace


from figspec.compute.conditions import stack
from figspec.compute.stimulus import stimulus_table
from figspec.errors import UserError
from figspec.optional import deferred
from figspec.registry import kind_of
from figspec.spec.models import sham_levels
from figspec.steps.resolve import Resolved

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas


@dataclass(frozen=True)
class Tables:
    """Computed tables: one (or one per part) per panel, and each time panel's stimulus windows."""

    panels: dict[str, pd.DataFrame | dict[str, pd.DataFrame]]
    stimulus: dict[str, pd.DataFrame]
    level_unit: str = ""

    def for_export(self) -> dict[str, pd.DataFrame]:
        """The tables written as source data: each panel's (``<panel>`` or ``<panel>_<part>``),
        and the stimulus windows of the level-repeated panels."""
        out: dict[str, pd.DataFrame] = {}
        for name, table in self.panels.items():
            if isinstance(table, dict):
                out.update({f"{name}_{part}": t for part, t in table.items()})
            else:
                out[name] = table
        if self.stimulus:
            frames = list(self.stimulus.values())
            out["stimulus"] = pd.concat(frames, ignore_index=True).drop_duplicates(ignore_index=True)
        return {name: exported(table, self.level_unit) for name, table in out.items()}


def compute(resolved: Resolved) -> Tables:
    """The tables of every panel of a resolved spec."""
    model = resolved.spec.model
    panels, stimulus = {}, {}
    sham = sham_levels(model)
    for i, panel in enumerate(resolved.panels):
        rec = resolved.recording(panel)
        kind = kind_of(panel)
        try:
            panels[panel.name] = compute_panel(kind, rec, (resolved.panel_conditions or {}).get(panel.name), panel,
                                               model.levels)
        except UserError as err:
            raise type(err)([resolved.spec.locate(replace(p, loc=("panels", i) + p.loc))
                             for p in err.problems]) from None
        if kind.layout == "rows":
            stimulus[panel.name] = pd.concat([stimulus_table(rec, u, model.stimulus, panel.levels, sham)
                                              for u in panel.stimulus_units()], ignore_index=True)
    return Tables(panels=panels, stimulus=stimulus, level_unit=model.levels.unit)


def compute_panel(kind, rec, conditions, panel, levels):
    """A panel's tables: its kind's, or with conditions each condition's stacked with a
    ``condition`` column (the kind's own ``split`` where it needs more, such as one divisor for
    every condition), plus a ``tests`` table when the kind tests between conditions."""
    if not conditions:
        return kind.compute(rec, panel, levels)
    if kind.split is not None:
        tables = kind.split(conditions, panel, levels)
    else:
        tables = stack([kind.compute(c.recording, panel, levels) for c in conditions], [c.name for c in conditions])
    if panel.conditions.test:
        tests = kind.compare(conditions, panel, levels, tables)
        if tests is not None:
            tables = {**tables, "tests": tests}
    return tables


def is_count(column: str) -> bool:
    """A column of counts (trials, units, spikes): written as whole numbers in every file."""
    return column in ("n", "count", "rank") or column.startswith("n_")


def exported(table: pd.DataFrame, level_unit: str) -> pd.DataFrame:
    """A table as source data: counts as whole numbers in every file (``30``, never ``30.0``,
    empty where missing), and beside a ``level`` column the level's unit (``level_unit``), so
    every column says its unit (times already do: ``_ms``; rates in ``rate_unit``)."""
    changes = {}
    for column in table.columns:
        if is_count(str(column)) and table[column].dtype.kind == "f":
            values = table[column]
            if ((values.dropna() % 1) == 0).all():
                changes[column] = values.astype("Int64")
    if not changes and ("level" not in table.columns or "level_unit" in table.columns or not level_unit):
        return table
    table = table.assign(**changes)
    if "level" in table.columns and "level_unit" not in table.columns and level_unit:
        table.insert(list(table.columns).index("level") + 1, "level_unit", level_unit)
    return table
