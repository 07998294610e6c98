"""Turn a ``[sources.NAME]`` spec into a :class:`Recording`.

The format-specific part is one reader per format, registered in :data:`READERS`; a reader
returns the canonical spike and trial frames described in :mod:`figspec.data.assemble`.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

import pandas as pd

from figspec.data import csv_source
from figspec.data.assemble import TrialCounts, assemble
from figspec.data.recording import Recording
from figspec.errors import Loc
from figspec.spec.models import SourceSpec

Frames = tuple[pd.DataFrame, "pd.DataFrame | None"]


def _column_plan(src: SourceSpec, loc: Loc) -> tuple[dict, dict | None]:
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


def read_csv(src: SourceSpec, folder: Path, loc: Loc) -> Frames:
    spike_plan, trial_plan = _column_plan(src, loc)
    spikes = csv_source.read_table(folder / src.spikes, spike_plan, loc + ("spikes",))
    trials = None
    if trial_plan is not None and src.trials is not None:
        trials = csv_source.read_table(folder / src.trials, trial_plan, loc + ("trials",))
    return spikes, trials


READERS: dict[str, Callable[[SourceSpec, Path, Loc], Frames]] = {
    "csv": read_csv,
}


def load_source(src: SourceSpec, folder: Path, loc: Loc) -> Recording:
    """Read one source and assemble its :class:`Recording`.

    Parameters
    ----------
    src : the source spec.
    folder : the folder relative file names are resolved against (the spec's folder).
    loc : key path of the source in the spec, e.g. ``("sources", "midbrain")``.
    """
    spikes, trials = READERS[src.format](src, folder, loc)
    if src.unit_name is not None:
        spikes["unit"] = src.unit_name
    spike_plan, trial_plan = _column_plan(src, loc)
    locs = {k: v[1] for k, v in spike_plan.items()}
    locs.update({k: v[1] for k, v in (trial_plan or {}).items()})
    for name in ("onset", "offset", "level"):
        locs.setdefault(name, loc)
    where = str(folder / src.spikes) + (f" and {folder / src.trials}" if src.trials else "")
    return assemble(spikes, trials, time_unit=src.time_unit, where=where, locs=locs,
                    counts=TrialCounts(src.trials_per_level, loc + ("trials_per_level",)))
