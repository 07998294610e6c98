"""Raster table: every spike in the window, and every trial presented."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.compute.describe import About, count_text, unit_text
from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.spec.models import LevelSpec
from figspec.spec.panels import RasterPanel

COLUMNS = ("unit", "level", "trial", "row", "time_ms")


def compute(rec: Recording, panel: RasterPanel, levels: LevelSpec) -> pd.DataFrame:
    """The raster table of the panel's unit, or of each of its ``units`` in turn (see
    :func:`unit_raster`)."""
    return pd.concat([unit_raster(rec, u, panel) for u in panel.unit_names()], ignore_index=True)


def unit_raster(rec: Recording, unit: str, panel: RasterPanel) -> pd.DataFrame:
    """One row per spike in ``panel.window_ms``, plus one row per trial without a spike.

    Columns
    -------
    unit : unit name.
    level : stimulus level (the spec's level unit).
    trial : trial id from the data.
    row : 0-based line of the trial within its level, in presentation order.
    n_trials : trials presented at the level (lines drawn).
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
                         "n_trials": sel.n_trials[sel.trial_level[idx]], "time_ms": times})


def legend(panel: RasterPanel, table: pd.DataFrame, about: About) -> str:
    return (f"- *{about.label}*: Spike rasters (one line per trial presented, one tick per spike); "
            f"units {unit_text(table)}; n = {count_text(table['n_trials'])} trials per level; "
            f"time from stimulus onset, window {panel.window_ms[0]:g} to {panel.window_ms[1]:g} ms.")
