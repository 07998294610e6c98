"""Stimulus window table: where the stimulus was, per level, relative to onset."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.spec.models import StimulusSpec


def stimulus_table(rec: Recording, unit: str, stimulus: StimulusSpec, levels=None) -> pd.DataFrame:
    """The stimulus window of each level for one unit's trials (ms from onset), optionally
    only of ``levels``.

    With ``per_trial`` windows the stop can differ between trials of a level; the table keeps
    the shortest and longest so a figure can show what is true.

    Columns
    -------
    unit, level : as elsewhere.
    n_trials : trials presented at the level.
    start_ms : stimulus start (ms from the alignment point).
    stop_min_ms, stop_max_ms : earliest and latest stimulus stop across the level's trials.
    """
    sel = select(rec, unit, (0.0, 0.0), levels)     # trials only: an empty window holds no spike
    n = sel.levels.size
    if stimulus.per_trial:
        trial_rows = rec.pair_trial[sel.trials["pair"].to_numpy()]
        stop = rec.trials["stim_stop_s"].to_numpy(dtype=float)[trial_rows] * 1e3
        stop = np.round(stop, 6)  # clock arithmetic leaves 49.999999999 next to 50
        stop_min = np.full(n, np.inf)
        stop_max = np.full(n, -np.inf)
        np.minimum.at(stop_min, sel.trial_level, stop)
        np.maximum.at(stop_max, sel.trial_level, stop)
        start = np.zeros(n)
    else:
        start = np.full(n, float(stimulus.start_ms))
        stop_min = stop_max = np.full(n, float(stimulus.stop_ms))
    return pd.DataFrame({"unit": unit, "level": sel.levels, "n_trials": sel.n_trials, "start_ms": start,
                         "stop_min_ms": stop_min, "stop_max_ms": stop_max})
