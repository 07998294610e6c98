"""Turn a ``[sources.NAME]`` spec into a :class:`Recording`.

The format-specific part is one reader module per format, registered in :data:`READERS`; a
reader returns the canonical spike and trial frames described in :mod:`figspec.data.assemble`,
and everything after that (trials, units, alignment) is shared.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

import pandas as pd

from figspec.data import csv_source
from figspec.data.assemble import TrialCounts, assemble
from figspec.data.columns import key_paths
from figspec.data.recording import Recording
from figspec.errors import Loc
from figspec.spec.sources import TableSource

Frames = tuple[pd.DataFrame, "pd.DataFrame | None"]

READERS: dict[str, Callable[[TableSource, Path, Loc], Frames]] = {
    "csv": csv_source.read,
}


def load_source(src: TableSource, folder: Path, loc: Loc) -> Recording:
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
    where = " and ".join(str(folder / path) for path in src.files().values())
    return assemble(spikes, trials, time_unit=src.time_unit, where=where, locs=key_paths(src, loc),
                    counts=TrialCounts(src.trials_per_level, loc + ("trials_per_level",)))
