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
        return out


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
    return Tables(panels=panels, stimulus=stimulus)


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
