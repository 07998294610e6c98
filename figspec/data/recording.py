"""The canonical in-memory recording: flat spike arrays with offsets per (unit, trial).

Every trial that was presented has a (unit, trial) *pair*, whether or not it holds a spike,
so rates can divide by the trials presented and rasters can show empty rows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd


@dataclass(frozen=True, eq=False)
class Recording:
    """Spikes of one or more units, aligned to stimulus onset, with every trial presented.

    Attributes
    ----------
    units : unit names, sorted.
    trials : one row per presented trial, in presentation order, with columns ``trial`` (the
        id from the data), ``level`` (float), ``onset_s`` (stimulus onset on the data's clock, s;
        0 when the data gives none), ``stim_stop_s`` (stimulus offset relative to onset, s; NaN
        when unknown) and ``unit`` (only when trials belong to one unit each).
    pair_unit, pair_trial : for each (unit, trial) pair, the index into ``units`` and into the
        rows of ``trials``. Pairs are ordered by unit, then presentation.
    offsets : int64 array of length ``n_pairs + 1``; the spikes of pair ``p`` are
        ``times_s[offsets[p]:offsets[p + 1]]``.
    times_s : float64 spike times relative to their trial's stimulus onset (s), sorted
        within each pair.
    """

    units: tuple[str, ...]
    trials: pd.DataFrame
    pair_unit: np.ndarray
    pair_trial: np.ndarray
    offsets: np.ndarray
    times_s: np.ndarray

    @property
    def n_pairs(self) -> int:
        return int(self.pair_unit.size)

    @property
    def n_spikes(self) -> int:
        return int(self.times_s.size)

    @property
    def levels(self) -> np.ndarray:
        """All levels presented, sorted numerically."""
        return np.unique(self.trials["level"].to_numpy(dtype=float))

    def spike_pair(self) -> np.ndarray:
        """For every spike, the index of its (unit, trial) pair."""
        return np.repeat(np.arange(self.n_pairs), np.diff(self.offsets))

    def pair_level(self) -> np.ndarray:
        """For every pair, its trial's level."""
        return self.trials["level"].to_numpy(dtype=float)[self.pair_trial]
