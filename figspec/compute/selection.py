"""Select one unit's trials and spikes from a recording, vectorised, grouped by level once.

Every window and bin in figspec is half-open, ``[start, stop)``: a spike exactly at a start
belongs to the window or bin that starts there, a spike exactly at a stop does not.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from figspec.data.recording import Recording
from figspec.data.table import Table


@dataclass(frozen=True)
class Selection:
    """One unit's presented trials (grouped by level) and their spikes in a time window.

    Attributes
    ----------
    trials : a :class:`Table`, one row per presented trial: ``pair`` (index into the recording's pairs),
        ``trial`` (id), ``level``, ``row`` (0-based position within its level, presentation
        order), ``sequence`` (the recording's presentation rank, which resampling follows).
        Sorted by level, then row.
    levels : the distinct levels of ``trials``, ascending.
    trial_level : for each row of ``trials``, its index into ``levels``.
    n_trials : trials presented at each of ``levels``.
    spike_trial : for each selected spike, its row index in ``trials``.
    ticks : spike times relative to the alignment event (integer ticks), inside ``[start, stop)``.
    ticks_per_ms : the recording's tick.
    """

    trials: Table
    levels: np.ndarray
    trial_level: np.ndarray
    n_trials: np.ndarray
    spike_trial: np.ndarray
    ticks: np.ndarray
    ticks_per_ms: int

    @property
    def time_ms(self) -> np.ndarray:
        """Spike times in ms (float, for tables and drawing)."""
        return self.ticks / self.ticks_per_ms

    def to_ticks(self, ms) -> np.ndarray:
        return np.rint(np.asarray(ms, dtype=float) * self.ticks_per_ms).astype(np.int64)

    def inside(self, window_ms: tuple[float, float]) -> np.ndarray:
        """Mask of the selected spikes in ``[start, stop)`` (ms), compared in whole ticks."""
        lo, hi = self.to_ticks(window_ms)
        return (self.ticks >= lo) & (self.ticks < hi)

    def spike_level(self) -> np.ndarray:
        """For each selected spike, the index of its trial's level into ``levels``."""
        return self.trial_level[self.spike_trial]


def select(rec: Recording, unit: str, window_ms: tuple[float, float],
           levels: Sequence[float] | None = None) -> Selection:
    """The trials of ``unit`` (optionally only ``levels``) and their spikes in ``[start, stop)``."""
    pairs = np.flatnonzero(rec.pair_unit == rec.units.index(unit))
    level = rec.pair_level()[pairs]
    if levels is not None:
        keep = np.isin(level, np.asarray(levels, dtype=float))
        pairs, level = pairs[keep], level[keep]
    order = np.argsort(level, kind="stable")            # pairs are in presentation order already
    pairs, level = pairs[order], level[order]
    values, first, inverse, counts = np.unique(level, return_index=True, return_inverse=True, return_counts=True)
    row = np.arange(pairs.size) - np.repeat(first, counts)
    trial_rows = rec.pair_trial[pairs]
    trials = Table({"pair": pairs, "trial": rec.trials["trial"][trial_rows], "level": level, "row": row,
                    "sequence": rec.trials["sequence"][trial_rows]})
    # A unit's pairs are contiguous (pairs are ordered by unit), so its spikes are one slice of
    # the recording: only that slice is read, never every spike of every unit.
    lo, hi = rec.to_ticks(window_ms)
    if pairs.size == 0:
        empty = np.empty(0, dtype=np.int64)
        return Selection(trials=trials, levels=values, trial_level=inverse.reshape(-1), n_trials=counts,
                         spike_trial=empty, ticks=empty, ticks_per_ms=rec.ticks_per_ms)
    first, last = int(pairs.min()), int(pairs.max()) + 1
    row_of_pair = np.full(last - first, -1, dtype=np.int64)          # pair -> selected row (-1: not selected)
    row_of_pair[pairs - first] = np.arange(pairs.size)
    ticks = rec.ticks[rec.offsets[first]:rec.offsets[last]]
    spike_trial = np.repeat(row_of_pair, np.diff(rec.offsets[first:last + 1]))
    inside = (spike_trial >= 0) & (ticks >= lo) & (ticks < hi)
    return Selection(trials=trials, levels=values, trial_level=inverse.reshape(-1), n_trials=counts,
                     spike_trial=spike_trial[inside], ticks=ticks[inside], ticks_per_ms=rec.ticks_per_ms)


def spanning(*windows: tuple[float, float]) -> tuple[float, float]:
    """The smallest window holding every one of ``windows``."""
    return min(w[0] for w in windows), max(w[1] for w in windows)
