"""Which file columns a table source reads, under figspec's canonical names.

Every format that stores a spike table and a trial table (CSV now; others later) maps the same
spec keys (``spike_columns``, ``trial_columns``) to the canonical columns described in
:mod:`figspec.data.assemble`.
"""

from __future__ import annotations

from figspec.errors import Loc
from figspec.spec.sources import TableSource

Plan = dict[str, tuple[str, Loc]]   # canonical name -> (column in the file, key path in the spec)


def column_plan(src: TableSource, loc: Loc) -> tuple[Plan, Plan | None]:
    """(spike table plan, trial table plan or None when the source has no trial table)."""
    sc, tc = src.spike_columns, src.trial_columns
    spikes = {"trial": (sc.trial, loc + ("spike_columns", "trial")),
              "time": (sc.time, loc + ("spike_columns", "time"))}
    if src.unit_name is None:
        spikes["unit"] = (sc.unit, loc + ("spike_columns", "unit"))
    if src.trials is None:
        spikes["level"] = (sc.level, loc + ("spike_columns", "level"))
        return spikes, None
    trials = {"trial": (tc.trial, loc + ("trial_columns", "trial")),
              "level": (tc.level, loc + ("trial_columns", "level"))}
    for name in ("onset", "offset", "unit"):
        column = getattr(tc, name)
        if column is not None:
            trials[name] = (column, loc + ("trial_columns", name))
    return spikes, trials


def key_paths(src: TableSource, loc: Loc) -> dict[str, Loc]:
    """Key path of each canonical column's mapping, for messages about its values."""
    spike_plan, trial_plan = column_plan(src, loc)
    locs = {k: v[1] for k, v in spike_plan.items()}
    locs.update({k: v[1] for k, v in (trial_plan or {}).items()})
    for name in ("onset", "offset", "level"):
        locs.setdefault(name, loc)
    return locs
