"""Select one unit's trials and spikes from a recording, vectorised."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np
import pandas as pd

from figspec.data.recording import Recording


@dataclass(frozen=True)
class Selection:
    """One unit's presented trials (grouped by level) and their spikes in a time window.

    Attributes
    ----------
    trials : one row per presented trial: ``pair`` (index into the recording's pairs),
        ``trial`` (id), ``level``, ``row`` (0-based position within its level, presentation
        order). Sorted by level, then row.
    spike_trial : for each selected spike, its row index in ``trials``.
    time_ms : spike times relative to stimulus onset (ms), inside ``[start, stop)``.
    """

    trials: pd.DataFrame
    spike_trial: np.ndarray
    time_ms: np.ndarray


def select(rec: Recording, unit: str, window_ms: tuple[float, float],
           levels: Sequence[float] | None = None) -> Selection:
    """The trials of ``unit`` (optionally only ``levels``) and their spikes in ``window_ms``.

    Spikes exactly at the window's stop are excluded (half-open window, like the bins).
    """
    pairs = np.flatnonzero(rec.pair_unit == rec.units.index(unit))
    level = rec.pair_level()[pairs]
    if levels is not None:
        keep = np.isin(level, np.asarray(levels, dtype=float))
        pairs, level = pairs[keep], level[keep]
    order = np.argsort(level, kind="stable")            # pairs are in presentation order already
    pairs, level = pairs[order], level[order]
    _, first, counts = np.unique(level, return_index=True, return_counts=True)
    row = np.arange(pairs.size) - np.repeat(first, counts)
    trials = pd.DataFrame({"pair": pairs, "trial": rec.trials["trial"].to_numpy()[rec.pair_trial[pairs]],
                           "level": level, "row": row})
    # spikes of the selected pairs: map pair -> selected row (-1 for pairs not selected)
    row_of_pair = np.full(rec.n_pairs, -1, dtype=np.int64)
    row_of_pair[pairs] = np.arange(pairs.size)
    spike_trial = row_of_pair[rec.spike_pair()]
    time_ms = rec.times_s * 1e3
    inside = (spike_trial >= 0) & (time_ms >= window_ms[0]) & (time_ms < window_ms[1])
    return Selection(trials=trials, spike_trial=spike_trial[inside], time_ms=time_ms[inside])
