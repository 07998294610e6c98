"""Stimulus window table: where the stimulus was, per level, relative to onset."""

from __future__ import annotations

import numpy as np

from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.optional import deferred
from figspec.spec.models import StimulusSpec

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas


def stimulus_table(rec: Recording, unit: str, stimulus: StimulusSpec, levels=None,
                   sham: frozenset[float] = frozenset()) -> pd.DataFrame:
    """The stimulus window of each level for one unit's trials (ms from onset), optionally
    only of ``levels``.

    With ``per_trial`` windows the stop can differ between trials of a level; the table keeps
    the shortest and longest so a figure can show what is true.

    Columns
    -------
    unit, level : as elsewhere.
    n_trials : trials presented at the level.
    start_ms, start_max_ms : earliest and latest stimulus start across the level's trials (ms
        from the alignment event; they differ when trials are aligned to another event).
    stop_min_ms, stop_max_ms : earliest and latest stimulus stop across the level's trials.
    presented : False at the ``sham`` levels, where no stimulus was presented (drawn unshaded).
    """
    sel = select(rec, unit, (0.0, 0.0), levels)     # trials only: an empty window holds no spike
    n = sel.levels.size
    if stimulus.per_trial:
        trial_rows = rec.pair_trial[sel.trials["pair"]]
        starts = rec.trials["stim_start_ms"][trial_rows]
        start = _per_level(starts, sel.trial_level, n, np.minimum)
        start_max = _per_level(starts, sel.trial_level, n, np.maximum)
        stop = rec.trials["stim_stop_ms"][trial_rows]
        stop_min = _per_level(stop, sel.trial_level, n, np.minimum)
        stop_max = _per_level(stop, sel.trial_level, n, np.maximum)
    else:
        start = start_max = np.full(n, float(stimulus.start_ms))
        stop_min = stop_max = np.full(n, float(stimulus.stop_ms))
    return pd.DataFrame({"unit": unit, "level": sel.levels, "n_trials": sel.n_trials, "start_ms": start,
                         "start_max_ms": start_max,
                         "stop_min_ms": stop_min, "stop_max_ms": stop_max,
                         "presented": ~np.isin(sel.levels, np.asarray(sorted(sham), dtype=float))})


def _per_level(values: np.ndarray, level: np.ndarray, n: int, pick) -> np.ndarray:
    out = np.full(n, np.inf if pick is np.minimum else -np.inf)
    pick.at(out, level, values)
    return out
