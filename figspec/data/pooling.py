"""Units of several sources (each with its own trial table) pooled in one recording, e.g. a
population rate across two recording days. Pooled units are named ``source/unit``."""

from __future__ import annotations

import numpy as np

from figspec.data.recording import Recording
from figspec.data.table import Table
from figspec.errors import DataError, Problem


def pool(recordings: dict[str, Recording], loc: tuple) -> Recording:
    """One recording holding every unit of ``recordings`` (source name -> recording), each unit
    paired only with its own source's trials."""
    ticks_per_ms = {rec.ticks_per_ms for rec in recordings.values()}
    if len(ticks_per_ms) > 1:
        raise DataError(Problem("pooled sources must share one time resolution (tick_us)", loc))
    units, trials, pair_unit, pair_trial, counts, ticks, removed = [], [], [], [], [], [], []
    n_units = n_trials = 0
    for name, rec in recordings.items():
        units += [f"{name}/{u}" for u in rec.units]
        trials.append(rec.trials.with_columns({"source": name}))
        pair_unit.append(rec.pair_unit + n_units)
        pair_trial.append(rec.pair_trial + n_trials)
        counts.append(np.diff(rec.offsets))
        ticks.append(rec.ticks)
        removed += [(f"{name}: {what}", n) for what, n in rec.removed]
        n_units, n_trials = n_units + len(rec.units), n_trials + len(rec.trials)
    offsets = np.zeros(sum(c.size for c in counts) + 1, dtype=np.int64)
    np.cumsum(np.concatenate(counts), out=offsets[1:])
    return Recording(units=tuple(units), trials=Table.concat(trials),
                     pair_unit=np.concatenate(pair_unit), pair_trial=np.concatenate(pair_trial), offsets=offsets,
                     ticks=np.concatenate(ticks), ticks_per_ms=ticks_per_ms.pop(), removed=tuple(removed))


def pooled_name(name: str, recordings: dict[str, Recording]) -> tuple[str | None, list[str]]:
    """The pooled name ``source/unit`` a panel's unit name stands for: itself when it names a
    source, else the one source holding a unit of that name. Returns (name or None, candidates)."""
    if "/" in name and name.split("/", 1)[0] in recordings:
        src, unit = name.split("/", 1)
        return (name if unit in recordings[src].units else None), []
    holders = [f"{src}/{name}" for src, rec in recordings.items() if name in rec.units]
    return (holders[0] if len(holders) == 1 else None), holders
