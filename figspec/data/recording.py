"""The canonical in-memory recording: flat integer spike times with offsets per (unit, trial).

Every trial that was presented (and kept) has a (unit, trial) *pair*, whether or not it holds a
spike, so rates can divide by the trials presented and rasters can show empty rows. Times are
integer counts of a fixed tick from the moment they are read, so alignment subtracts integers
and a spike on a bin edge falls where exact decimal arithmetic says.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import re

import numpy as np

from figspec.data.table import Table


@dataclass(frozen=True, eq=False)
class Recording:
    """Spikes of one or more units, aligned to an event of each trial, with every trial presented.

    Attributes
    ----------
    units : unit names, sorted.
    trials : a :class:`Table`, one row per presented trial, in presentation order, with columns
        ``trial`` (the trial key as the data gives it; several key columns are joined by "/"),
        ``sequence`` (rank in presentation order: by time on a session clock, else by key; what
        resampling follows), ``level``
        (float), ``stim_start_ms`` and ``stim_stop_ms`` (stimulus onset and offset relative to
        the alignment event, ms; the offset NaN when unknown), ``extent_lo_ms`` and
        ``extent_hi_ms`` (what was recorded of the trial around the alignment event, ms; -inf
        and inf when unknown), ``unit`` (only when trials belong to one unit each) and
        ``where:COLUMN`` (trial-table columns used by selection conditions).
    pair_unit, pair_trial : for each (unit, trial) pair, the index into ``units`` and into the
        rows of ``trials``. Pairs are ordered by unit, then presentation.
    offsets : int64 array of length ``n_pairs + 1``; the spikes of pair ``p`` are
        ``ticks[offsets[p]:offsets[p + 1]]``.
    ticks : int64 spike times relative to their trial's alignment event, in ticks, sorted
        within each pair.
    ticks_per_ms : the tick (1 µs unless the source declares another).
    removed : (what, how many) of everything left out on the way: trials removed by each
        selection rule, spikes outside every trial.
    unread_units : units the source holds whose spikes were not read (the spec does not use
        them, or a per-unit table's rule left them out; named in messages that list the units).
    unit_choice : what chose the units, when a per-unit table did
        (:class:`figspec.data.unit_table.UnitChoice`), else None.
    unit_properties : the source's per-unit table, when it has one: column -> {unit: value}.
    """

    units: tuple[str, ...]
    trials: Table
    pair_unit: np.ndarray
    pair_trial: np.ndarray
    offsets: np.ndarray
    ticks: np.ndarray
    ticks_per_ms: int = 1000
    removed: tuple[tuple[str, int], ...] = ()
    unread_units: tuple[str, ...] = ()
    unit_choice: object = None
    unit_properties: dict | None = None

    @property
    def all_units(self) -> tuple[str, ...]:
        """Every unit the source holds, read or not (for messages)."""
        return tuple(sorted(set(self.units) | set(self.unread_units), key=natural_key))

    @property
    def n_pairs(self) -> int:
        return int(self.pair_unit.size)

    @property
    def n_spikes(self) -> int:
        return int(self.ticks.size)

    @property
    def times_s(self) -> np.ndarray:
        """Spike times relative to the alignment event, s (float; for display and tests)."""
        return self.ticks / (self.ticks_per_ms * 1000.0)

    @property
    def levels(self) -> np.ndarray:
        """All levels presented, sorted numerically."""
        return np.unique(self.trials["level"].astype(float))

    def spike_pair(self) -> np.ndarray:
        """For every spike, the index of its (unit, trial) pair."""
        return np.repeat(np.arange(self.n_pairs), np.diff(self.offsets))

    def pair_level(self) -> np.ndarray:
        """For every pair, its trial's level."""
        return self.trials["level"].astype(float)[self.pair_trial]

    def to_ticks(self, ms: float | np.ndarray) -> np.ndarray:
        """Times in ms as whole ticks (windows and bin edges are whole ticks by construction)."""
        return np.rint(np.asarray(ms, dtype=float) * self.ticks_per_ms).astype(np.int64)

    def keep_trials(self, keep: np.ndarray, removed: tuple[tuple[str, int], ...] = ()) -> "Recording":
        """The recording with only the trials where ``keep`` (one bool per row of ``trials``)."""
        if keep.all():
            return replace(self, removed=self.removed + removed) if removed else self
        new_index = np.cumsum(keep) - 1
        pair_keep = keep[self.pair_trial]
        counts = np.diff(self.offsets)[pair_keep]
        spike_keep = np.repeat(pair_keep, np.diff(self.offsets))
        offsets = np.zeros(counts.size + 1, dtype=np.int64)
        np.cumsum(counts, out=offsets[1:])
        return Recording(units=self.units, trials=self.trials.take(keep),
                         pair_unit=self.pair_unit[pair_keep], pair_trial=new_index[self.pair_trial[pair_keep]],
                         offsets=offsets, ticks=self.ticks[spike_keep], ticks_per_ms=self.ticks_per_ms,
                         removed=self.removed + removed, unread_units=self.unread_units,
                         unit_choice=self.unit_choice, unit_properties=self.unit_properties)

    def keep_units(self, names, choice=None) -> "Recording":
        """The recording with only the units ``names`` (those not kept join ``unread_units``)."""
        kept = [u for u in self.units if u in set(names)]
        if len(kept) == len(self.units):
            return replace(self, unit_choice=choice)
        index = np.array([u in set(kept) for u in self.units])
        pair_keep = index[self.pair_unit]
        counts = np.diff(self.offsets)[pair_keep]
        offsets = np.zeros(counts.size + 1, dtype=np.int64)
        np.cumsum(counts, out=offsets[1:])
        return replace(self, units=tuple(kept), pair_unit=(np.cumsum(index) - 1)[self.pair_unit[pair_keep]],
                       pair_trial=self.pair_trial[pair_keep], offsets=offsets,
                       ticks=self.ticks[np.repeat(pair_keep, np.diff(self.offsets))],
                       unread_units=tuple(sorted(set(self.unread_units) | (set(self.units) - set(kept)),
                                                 key=natural_key)), unit_choice=choice)


def natural_key(name: str) -> tuple:
    """Sort 'u2' before 'u10'."""
    return tuple((0, int(p), "") if p[:1].isascii() and p[:1].isdigit() else (1, 0, p)
                 for p in re.split(r"([0-9]+)", name))
