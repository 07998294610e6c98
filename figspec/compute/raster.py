"""Raster table: every spike in the window, and every trial presented."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.spec.panels import RasterPanel

COLUMNS = ("unit", "level", "trial", "row", "time_ms")


def raster_table(rec: Recording, panel: RasterPanel) -> pd.DataFrame:
    """The raster table of the panel's unit, or of each of its ``units`` in turn (see
    :func:`unit_raster`)."""
    units = panel.units if panel.repeat == "unit" else [panel.unit]
    return pd.concat([unit_raster(rec, u, panel) for u in units], ignore_index=True)


def unit_raster(rec: Recording, unit: str, panel: RasterPanel) -> pd.DataFrame:
    """One row per spike in ``panel.window_ms``, plus one row per trial without a spike.

    Columns
    -------
    unit : unit name.
    level : stimulus level (the spec's level unit).
    trial : trial id from the data.
    row : 0-based line of the trial within its level, in presentation order.
    time_ms : spike time from stimulus onset (ms); empty (NaN) for a trial with no spike in
        the window, so the trial is still counted and drawn as an empty line.
    """
    sel = select(rec, unit, panel.window_ms, panel.levels)
    has_spike = np.zeros(len(sel.trials), dtype=bool)
    has_spike[sel.spike_trial] = True
    idx = np.concatenate([sel.spike_trial, np.flatnonzero(~has_spike)])
    times = np.concatenate([sel.time_ms, np.full(int((~has_spike).sum()), np.nan)])
    order = np.lexsort((times, idx))   # NaN sorts last; empty trials have only NaN
    idx, times = idx[order], times[order]
    t = sel.trials
    return pd.DataFrame({"unit": unit, "level": t["level"].to_numpy()[idx],
                         "trial": t["trial"].to_numpy()[idx], "row": t["row"].to_numpy()[idx],
                         "time_ms": times}, columns=list(COLUMNS))
