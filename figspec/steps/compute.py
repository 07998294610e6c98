"""Step 3: every panel's tables (its kind's pure compute function) and, for panels with time
on x, the stimulus windows of the levels (and units) they show."""

from __future__ import annotations

from dataclasses import dataclass, replace


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
            panels[panel.name] = kind.compute(rec, panel, model.levels)
        except UserError as err:
            raise type(err)([resolved.spec.locate(replace(p, loc=("panels", i) + p.loc))
                             for p in err.problems]) from None
        if kind.layout == "rows":
            stimulus[panel.name] = pd.concat([stimulus_table(rec, u, model.stimulus, panel.levels, sham)
                                              for u in panel.stimulus_units()], ignore_index=True)
    return Tables(panels=panels, stimulus=stimulus)
