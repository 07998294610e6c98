"""Stimulus window table: where the stimulus was, per level, relative to onset."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.data.recording import Recording
from figspec.spec.models import StimulusSpec


def stimulus_table(rec: Recording, unit: str, stimulus: StimulusSpec) -> pd.DataFrame:
    """The stimulus window of each level for one unit's trials (ms from onset).

    With ``per_trial`` windows the stop can differ between trials of a level; the table keeps
    the shortest and longest so a figure can show what is true.

    Columns
    -------
    unit, level : as elsewhere.
    n_trials : trials presented at the level.
    start_ms : stimulus start (ms from the alignment point).
    stop_min_ms, stop_max_ms : earliest and latest stimulus stop across the level's trials.
    """
    pairs = np.flatnonzero(rec.pair_unit == rec.units.index(unit))
    level = rec.pair_level()[pairs]
    levels, inverse = np.unique(level, return_inverse=True)
    n_trials = np.bincount(inverse, minlength=levels.size)
    if stimulus.per_trial:
        stop = rec.trials["stim_stop_s"].to_numpy(dtype=float)[rec.pair_trial[pairs]] * 1e3
        stop = np.round(stop, 6)  # clock arithmetic leaves 49.999999999 next to 50
        stop_min = np.full(levels.size, np.inf)
        stop_max = np.full(levels.size, -np.inf)
        np.minimum.at(stop_min, inverse, stop)
        np.maximum.at(stop_max, inverse, stop)
        start = np.zeros(levels.size)
    else:
        start = np.full(levels.size, float(stimulus.start_ms))
        stop_min = stop_max = np.full(levels.size, float(stimulus.stop_ms))
    return pd.DataFrame({"unit": unit, "level": levels, "n_trials": n_trials, "start_ms": start,
                         "stop_min_ms": stop_min, "stop_max_ms": stop_max})
