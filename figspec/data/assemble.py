"""Build a :class:`Recording` from canonical spike and trial frames, whatever their source.

Sources (CSV, Parquet, NWB ...) only read their format and rename columns to the canonical
names below; everything about trials, units and alignment happens here, once.

Canonical spike frame: ``unit`` (str), ``trial``, ``time`` (in the source's time unit) and,
when there is no trial table, ``level``. Canonical trial frame: ``trial``, ``level`` and
optionally ``onset``, ``offset`` (same clock and unit as spike times) and ``unit``.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass

import numpy as np
import pandas as pd

from figspec.data.recording import Recording
from figspec.errors import DataError, FigspecWarning, Loc, Problem

SECONDS_PER = {"s": 1.0, "ms": 1e-3}


@dataclass(frozen=True)
class TrialCounts:
    """What the spec says about trials when there is no trial table."""

    per_level: int | dict[str, int] | None
    loc: Loc


def _numeric(values: pd.Series, what: str, loc: Loc, where: str) -> np.ndarray:
    out = pd.to_numeric(values, errors="coerce").to_numpy(dtype=float)
    bad = np.isnan(out) & values.notna().to_numpy()
    missing = values.isna().to_numpy()
    if bad.any() or missing.any():
        first = values[bad | missing].iloc[0]
        raise DataError(Problem(f"{what} must be numbers in every row of {where}; "
                                f"{int((bad | missing).sum())} rows are not", loc, repr(first)))
    return out


def _trial_ids(*series: pd.Series) -> list[pd.Series]:
    """Trial ids as integers when every table holds integers, otherwise as strings."""
    numeric = [pd.to_numeric(s, errors="coerce") for s in series]
    if all(n.notna().all() and (n == n.round()).all() for n in numeric):
        return [n.astype("int64") for n in numeric]
    return [s.astype(str) for s in series]


def trials_from_spikes(spikes: pd.DataFrame, counts: TrialCounts, where: str) -> pd.DataFrame:
    """Rebuild a trial table from a spike table that carries levels.

    With ``counts.per_level`` the missing trials (those without a spike) are added as empty
    trials; without it a loud warning says they cannot be seen.
    """
    seen = spikes[["trial", "level"]].drop_duplicates("trial")
    if (spikes.groupby("trial")["level"].nunique() > 1).any():
        raise DataError(Problem("a trial has more than one level in the spike table", counts.loc, where))
    seen = seen.sort_values(["level", "trial"], kind="stable")
    if counts.per_level is None:
        warnings.warn(
            f"{where}: no trial table and no trials_per_level: trials are inferred from the spikes, "
            "so trials without any spike are missing and rates are too high. "
            "Give a trial table or trials_per_level.", FigspecWarning, stacklevel=2)
        return seen.reset_index(drop=True)
    frames = [seen]
    for level, group in seen.groupby("level", sort=True):
        declared = _declared(counts, float(level))
        if declared is None:
            raise DataError(Problem(f"no trial count declared for level {level:g}", counts.loc))
        if len(group) > declared:
            raise DataError(Problem(f"level {level:g} has spikes in {len(group)} trials, more than the "
                                    f"{declared} declared", counts.loc))
        extra = declared - len(group)
        frames.append(pd.DataFrame({"trial": [f"empty-{level:g}-{i + 1}" for i in range(extra)],
                                    "level": float(level)}))
    if isinstance(counts.per_level, dict):
        for key in counts.per_level:
            if float(key) not in set(seen["level"].astype(float)):
                n = counts.per_level[key]
                frames.append(pd.DataFrame({"trial": [f"empty-{float(key):g}-{i + 1}" for i in range(n)],
                                            "level": float(key)}))
    out = pd.concat(frames, ignore_index=True)
    out["trial"] = out["trial"].astype(str)
    return out.sort_values("level", kind="stable").reset_index(drop=True)


def _declared(counts: TrialCounts, level: float) -> int | None:
    if isinstance(counts.per_level, int):
        return counts.per_level
    for key, n in (counts.per_level or {}).items():
        if float(key) == level:
            return n
    return None


def assemble(spikes: pd.DataFrame, trials: pd.DataFrame | None, *, time_unit: str,
             where: str, locs: dict[str, Loc], counts: TrialCounts) -> Recording:
    """Build a :class:`Recording` (see module docstring for the frames).

    Parameters
    ----------
    spikes, trials : canonical frames; ``trials`` is None when the source has no trial table.
    time_unit : ``"s"`` or ``"ms"``, the unit of ``time``, ``onset`` and ``offset``.
    where : a description of the source for messages (file names).
    locs : key path of each canonical column's mapping in the spec, for messages.
    counts : trials per level when there is no trial table.
    """
    scale = SECONDS_PER[time_unit]
    spikes = spikes.copy()
    spikes["time"] = _numeric(spikes["time"], "spike times", locs["time"], where) * scale
    if trials is None:
        spikes["level"] = _numeric(spikes["level"], "levels", locs["level"], where)
        trials = trials_from_spikes(spikes, counts, where)
    trials = _trial_table(trials, scale, where, locs)
    spikes["trial"], trials["trial"] = _trial_ids(spikes["trial"], trials["trial"])
    _unique_trials(trials, locs)
    spikes["unit"] = spikes["unit"].astype(str)
    per_unit = "unit" in trials
    units = sorted(set(spikes["unit"]) | (set(trials["unit"]) if per_unit else set()), key=_natural_key)
    pair_unit, pair_trial = _pairs(trials, units)
    pair = _pair_of_spikes(spikes, trials, units, pair_unit, pair_trial, where)
    keep = pair >= 0
    pair = pair[keep]
    times = spikes["time"].to_numpy(dtype=float)[keep] - trials["onset_s"].to_numpy(dtype=float)[pair_trial][pair]
    order = np.lexsort((times, pair))
    offsets = np.zeros(pair_unit.size + 1, dtype=np.int64)
    np.cumsum(np.bincount(pair, minlength=pair_unit.size), out=offsets[1:])
    return Recording(units=tuple(units), trials=trials, pair_unit=pair_unit, pair_trial=pair_trial,
                     offsets=offsets, times_s=times[order])


def _trial_table(trials: pd.DataFrame, scale: float, where: str, locs: dict[str, Loc]) -> pd.DataFrame:
    """The trial table with numeric levels, onsets and offsets (s), in presentation order."""
    trials = trials.copy()
    trials["level"] = _numeric(trials["level"], "levels", locs["level"], where)
    has_onset = "onset" in trials
    trials["onset_s"] = _numeric(trials["onset"], "onsets", locs["onset"], where) * scale if has_onset else 0.0
    if "offset" in trials:
        trials["stim_stop_s"] = _numeric(trials["offset"], "offsets", locs["offset"], where) * scale - trials["onset_s"]
        if (trials["stim_stop_s"] <= 0).any():
            raise DataError(Problem("every stimulus offset must come after its onset", locs["offset"], where))
    else:
        trials["stim_stop_s"] = np.nan
    per_unit = "unit" in trials
    if per_unit:
        trials["unit"] = trials["unit"].astype(str)
    if has_onset:
        trials = trials.sort_values((["unit"] if per_unit else []) + ["onset_s"], kind="stable")
    keep = ["trial", "level", "onset_s", "stim_stop_s"] + (["unit"] if per_unit else [])
    return trials[keep].reset_index(drop=True)


def _unique_trials(trials: pd.DataFrame, locs: dict[str, Loc]) -> None:
    per_unit = "unit" in trials
    dup = trials.duplicated(["unit", "trial"] if per_unit else ["trial"])
    if dup.any():
        raise DataError(Problem(f"trial ids must be unique{' per unit' if per_unit else ''} in the trial table",
                                locs["trial"], repr(trials.loc[dup, "trial"].iloc[0])))


def _pairs(trials: pd.DataFrame, units: list[str]) -> tuple[np.ndarray, np.ndarray]:
    """(unit index, trial row) of every (unit, trial) pair, ordered by unit, then presentation:
    every unit saw every trial, unless the trial table says which unit each trial belongs to."""
    if "unit" in trials:
        unit_index = {u: i for i, u in enumerate(units)}
        pair_unit = trials["unit"].map(unit_index).to_numpy(dtype=np.int64)
        pair_trial = np.arange(len(trials), dtype=np.int64)
        order = np.lexsort((pair_trial, pair_unit))
        return pair_unit[order], pair_trial[order]
    return (np.repeat(np.arange(len(units), dtype=np.int64), len(trials)),
            np.tile(np.arange(len(trials), dtype=np.int64), len(units)))


def _pair_of_spikes(spikes: pd.DataFrame, trials: pd.DataFrame, units: list[str], pair_unit: np.ndarray,
                    pair_trial: np.ndarray, where: str) -> np.ndarray:
    """For each spike, the index of its (unit, trial) pair; -1 (with a warning) for spikes of
    trials the trial table does not have."""
    pairs = pd.DataFrame({"unit": np.asarray(units, dtype=object)[pair_unit].astype(str),
                          "trial": trials["trial"].to_numpy()[pair_trial], "pair": np.arange(pair_unit.size)})
    joined = spikes[["unit", "trial"]].merge(pairs, on=["unit", "trial"], how="left", sort=False)
    lost = joined["pair"].isna()
    if lost.any():
        warnings.warn(f"{where}: {int(lost.sum())} spikes belong to {joined.loc[lost, 'trial'].nunique()} "
                      "trials that are not in the trial table and were left out "
                      f"(first trial id: {joined.loc[lost, 'trial'].iloc[0]!r})", FigspecWarning, stacklevel=3)
    return joined["pair"].fillna(-1).to_numpy(dtype=np.int64)


def _natural_key(name: str) -> tuple:
    """Sort 'u2' before 'u10'."""
    return tuple(int(p) if p.isdigit() else p for p in re.split(r"(\d+)", name))
