"""Build a :class:`Recording` from canonical spike and trial frames, whatever their source.

Sources (CSV, Parquet, NWB ...) only read their format and rename columns to the canonical
names of :mod:`figspec.data.columns`; everything about trials, clocks, alignment and units
happens here, once. Times become integer ticks as they are read (``np.rint(t * ticks per
unit)``), so alignment subtracts integers.

Canonical spike frame: ``time``, ``unit`` (unless the source names its one unit), ``key0`` ...
(the trial key; absent when spikes are assigned to trials by time) and, without a trial table,
``level``. Canonical trial frame: ``key0`` ..., ``level`` and optionally ``onset``, ``offset``,
``start``, ``stop``, ``event:NAME``, ``unit`` and ``where:COLUMN``.

Clocks (``Layout.clock``): ``aligned``, spike times are already relative to the alignment
event; ``trial``, spikes and events are relative to each trial's start; ``session``, one clock
for the whole recording. Presentation order is the order of trial start (else of the alignment
event) on a session clock, and the trial table's row order otherwise.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from figspec.data.by_time import assign_by_time
from figspec.data.keep import select_trials, shown
from figspec.data.recording import Recording
from figspec.data.trials_from_spikes import TrialCounts, trials_from_spikes
from figspec.errors import DataError, FigspecWarning, Loc, Problem
from figspec.spec.selection import TrialSelection

SECONDS_PER = {"s": 1.0, "ms": 1e-3}
LARGEST_TICK = 2 ** 62          # times beyond this many ticks cannot be held exactly

__all__ = ["Layout", "TrialCounts", "assemble"]


@dataclass(frozen=True)
class Layout:
    """How a source's times and trials are laid out (from its spec), and where to point messages."""

    where: str
    locs: dict[str, Loc]
    time_unit: str = "s"
    clock: str = "aligned"
    align: str = "onset"                 # "onset" or an event name
    assign: str = "by_key"
    ticks_per_second: int = 1_000_000
    extent_ms: tuple[float, float] | None = None
    keep: TrialSelection = field(default_factory=TrialSelection)
    keep_loc: Loc = ()
    counts: TrialCounts = field(default_factory=lambda: TrialCounts(None, ()))

    @property
    def ticks_per_ms(self) -> int:
        return self.ticks_per_second // 1000

    @property
    def align_column(self) -> str:
        return "onset" if self.align == "onset" else f"event:{self.align}"


def to_ticks(values: pd.Series, layout: Layout, what: str, name: str) -> np.ndarray:
    """Times in the layout's time unit as int64 ticks; every value must be a finite number."""
    loc = layout.locs.get(name, ())
    numbers = _numbers(values, what, loc, layout.where)
    scaled = numbers * (layout.ticks_per_second * SECONDS_PER[layout.time_unit])
    if np.any(np.abs(scaled) >= LARGEST_TICK):
        raise DataError(Problem(f"{what} are too large to hold in {1e6 / layout.ticks_per_second:g}-µs ticks "
                                f"(is time_unit = {layout.time_unit!r} right?)", loc, shown(numbers[np.argmax(np.abs(scaled))])))
    return np.rint(scaled).astype(np.int64)


def _numbers(values: pd.Series, what: str, loc: Loc, where: str) -> np.ndarray:
    out = pd.to_numeric(values, errors="coerce").to_numpy(dtype=float)
    bad = ~np.isfinite(out)
    if bad.any():
        first = values[bad].iloc[0]
        raise DataError(Problem(f"{what} must be finite numbers in every row of {where}; {int(bad.sum())} rows "
                                "are not", loc, "an empty field" if pd.isna(first) else shown(first)))
    return out


def _key_columns(frame: pd.DataFrame) -> list[str]:
    return sorted((c for c in frame.columns if re.fullmatch(r"key\d+", c)), key=lambda c: int(c[3:]))


def normalise_keys(spikes: pd.DataFrame | None, trials: pd.DataFrame, keys: list[str]) -> None:
    """Each key column as integers when every value in both tables is a whole number, else as
    strings (in place)."""
    for key in keys:
        series = [trials[key]] + ([spikes[key]] if spikes is not None and key in spikes else [])
        numeric = [pd.to_numeric(s, errors="coerce") for s in series]
        whole = all(n.notna().all() and (n == n.round()).all() for n in numeric)
        converted = [n.astype("int64") if whole else s.astype(str).str.strip() for n, s in zip(numeric, series)]
        trials[key] = converted[0]
        if len(converted) > 1:
            spikes[key] = converted[1]


def assemble(spikes: pd.DataFrame, trials: pd.DataFrame | None, layout: Layout) -> Recording:
    """Build a :class:`Recording` from canonical frames laid out as ``layout`` says."""
    spikes = spikes.copy()
    if "unit" in spikes and spikes["unit"].isna().any():
        raise DataError(Problem(f"the unit column is empty in {int(spikes['unit'].isna().sum())} rows of "
                                f"{layout.where}", layout.locs.get("unit", ()), "an empty field"))
    spike_t = to_ticks(spikes["time"], layout, "spike times", "time")
    if trials is None:
        spikes["level"] = _numbers(spikes["level"], "levels", layout.locs.get("level", ()), layout.where)
        trials = trials_from_spikes(spikes, _key_columns(spikes), layout.counts, layout.where)
    keys = _key_columns(trials)
    normalise_keys(spikes, trials := trials.copy(), keys)
    table, times = trial_table(trials, keys, layout)
    keep, removed = select_trials(table, keys, layout.keep, layout.keep_loc)
    spikes["unit"] = spikes["unit"].astype(str)
    check_unit_names(spikes["unit"], layout)
    per_unit = "unit" in table
    names = set(spikes["unit"].unique().tolist()) | (set(table["unit"].unique().tolist()) if per_unit else set())
    units = sorted(names, key=natural_key)
    pair_unit, pair_trial = pairs(table, units)
    if layout.assign == "by_time":
        pair, outside = assign_by_time(spike_t, spikes["unit"], units, table, times, layout)
        removed += (("spikes outside every trial", outside),) if outside else ()
        spike_t, pair = spike_t[pair >= 0], pair[pair >= 0]
    else:
        pair = pair_of_spikes(spikes, table, keys, units, pair_unit, pair_trial, layout)
    align = times["align"][pair_trial][pair] if layout.clock != "aligned" else 0
    ticks = spike_t - align
    check_inside_extent(ticks, table, pair_trial[pair], layout)
    check_durations(table, layout)
    order = sort_order(pair, ticks)
    offsets = np.zeros(pair_unit.size + 1, dtype=np.int64)
    np.cumsum(np.bincount(pair, minlength=pair_unit.size), out=offsets[1:])
    shown_cols = ["trial", "level", "stim_start_ms", "stim_stop_ms", "extent_lo_ms", "extent_hi_ms"]
    shown_cols += (["unit"] if per_unit else []) + [c for c in table if c.startswith("where:")]
    rec = Recording(units=tuple(units), trials=table[shown_cols], pair_unit=pair_unit, pair_trial=pair_trial,
                    offsets=offsets, ticks=ticks[order], ticks_per_ms=layout.ticks_per_ms)
    return rec.keep_trials(keep, removed)


def check_inside_extent(ticks: np.ndarray, table: pd.DataFrame, trial_of_spike: np.ndarray, layout: Layout,
                        chunk: int = 1 << 20) -> None:
    """Spikes far outside their own trial's recorded extent mean the time unit or the clock is
    wrong: an error when none is inside, a warning when most are not. Counted in chunks, so the
    check needs no full-size temporary arrays."""
    lo = table["extent_lo_ms"].to_numpy(dtype=float) * layout.ticks_per_ms
    hi = table["extent_hi_ms"].to_numpy(dtype=float) * layout.ticks_per_ms
    if not (np.isfinite(lo).any() or np.isfinite(hi).any()):
        return
    outside = 0
    for start in range(0, ticks.size, chunk):
        t, k = ticks[start:start + chunk], trial_of_spike[start:start + chunk]
        outside += int(np.count_nonzero((t < lo[k]) | (t >= hi[k])))
    hint = (f"is time_unit = {layout.time_unit!r} right, and are spike and trial times on the same clock "
            f"({layout.clock!r})?")
    if ticks.size and outside == ticks.size:
        raise DataError(Problem(f"no spike falls inside its trial's recorded extent: {hint}",
                                layout.locs.get("time", ()), layout.where))
    if outside > ticks.size / 2:
        warnings.warn(f"{layout.where}: {outside} of {ticks.size} spikes fall outside their trial's recorded extent: "
                      f"{hint}", FigspecWarning, stacklevel=3)


def check_unit_names(units: pd.Series, layout: Layout) -> None:
    """Unit names are drawn as text: one with a control character would make an invalid SVG."""
    from figspec.spec.fields import control_characters

    names = units.unique()
    bad = [name for name in names if control_characters(name)]
    if bad:
        raise DataError(Problem(f"unit names may not hold control characters ({len(bad)} do, e.g. "
                                f"{bad[0]!r})", layout.locs.get("unit", ()), layout.where))


LONGEST_STIMULUS_MS = 10_000     # common practice: single-unit stimuli last ms to seconds, rarely longer
SHORTEST_TRIAL_MS = 1.0


def check_durations(table: pd.DataFrame, layout: Layout) -> None:
    """Stimuli that last minutes, or trials recorded for less than a millisecond, mean the
    time unit is likely wrong (ms read as s, or s as ms): a warning, since a lab may mean it."""
    hint = f"is time_unit = {layout.time_unit!r} right?"
    stimulus = (table["stim_stop_ms"] - table["stim_start_ms"]).to_numpy(dtype=float)
    stimulus = stimulus[np.isfinite(stimulus)]
    if stimulus.size and np.median(stimulus) > LONGEST_STIMULUS_MS:
        warnings.warn(f"{layout.where}: the stimulus lasts {np.median(stimulus) / 1000:g} s in the median trial: "
                      f"{hint}", FigspecWarning, stacklevel=3)
    extent = (table["extent_hi_ms"] - table["extent_lo_ms"]).to_numpy(dtype=float)
    extent = extent[np.isfinite(extent)]
    if extent.size and np.median(extent) < SHORTEST_TRIAL_MS:
        warnings.warn(f"{layout.where}: each trial was recorded for {np.median(extent):g} ms in the median trial: "
                      f"{hint}", FigspecWarning, stacklevel=3)


def sort_order(pair: np.ndarray, ticks: np.ndarray) -> np.ndarray | slice:
    """The order that sorts spikes by pair, then time: nothing to do when they arrive so (as a
    sorter's per-unit time-sorted output usually does), else one stable sort by pair of the
    time-sorted spikes."""
    if pair.size < 2:
        return slice(None)
    same = pair[1:] == pair[:-1]
    if np.all(pair[1:] >= pair[:-1]) and np.all(ticks[1:][same] >= ticks[:-1][same]):
        return slice(None)
    by_time = np.argsort(ticks, kind="stable")
    return by_time[np.argsort(pair[by_time], kind="stable")]


def trial_table(trials: pd.DataFrame, keys: list[str], layout: Layout) -> tuple[pd.DataFrame, dict]:
    """The trial table in presentation order with its display columns, and its event times in
    ticks (``align``, and ``start``/``stop`` on the data's clock when given)."""
    locs, where = layout.locs, layout.where
    trials = trials.copy()
    trials["level"] = _numbers(trials["level"], "levels", locs.get("level", ()), where)
    ticks = {name: to_ticks(trials[name], layout, f"{name} times", name)
             for name in ("onset", "offset", "start", "stop") if name in trials}
    ticks.update({c: to_ticks(trials[c], layout, f"{c[6:]} times", c) for c in trials if c.startswith("event:")})
    align = ticks.get(layout.align_column, np.zeros(len(trials), dtype=np.int64))
    order = _presentation_order(trials, ticks, align, layout)
    trials = trials.iloc[order].reset_index(drop=True)
    ticks = {k: v[order] for k, v in ticks.items()}
    align = align[order]
    per_ms = layout.ticks_per_ms
    onset = ticks.get("onset", align)
    trials["stim_start_ms"] = (onset - align) / per_ms
    if "offset" in ticks:
        if np.any(ticks["offset"] <= onset):
            raise DataError(Problem("every stimulus offset must come after its onset", locs.get("offset", ()), where))
        trials["stim_stop_ms"] = (ticks["offset"] - align) / per_ms
    else:
        trials["stim_stop_ms"] = np.nan
    if "start" in ticks and "stop" in ticks and np.any(ticks["stop"] <= ticks["start"]):
        bad = int(np.count_nonzero(ticks["stop"] <= ticks["start"]))
        raise DataError(Problem(f"every trial must stop after it starts; {bad} trials do not", locs.get("stop", ()),
                                where))
    trials["extent_lo_ms"], trials["extent_hi_ms"] = _extent(ticks, align, layout)
    trials["trial"] = trials[keys[0]] if len(keys) == 1 else trials[keys].astype(str).agg("/".join, axis=1)
    _unique_trials(trials, keys, layout)
    return trials, {**ticks, "align": align}


def _presentation_order(trials: pd.DataFrame, ticks: dict, align: np.ndarray, layout: Layout) -> np.ndarray:
    rows = np.arange(len(trials))
    if layout.clock == "session":
        when = ticks.get("start", align)
        group = trials["unit"].astype(str).to_numpy() if "unit" in trials else np.zeros(len(trials))
        return np.lexsort((rows, when, group))
    if "unit" in trials:
        return np.lexsort((rows, trials["unit"].astype(str).to_numpy()))
    return rows


def _extent(ticks: dict, align: np.ndarray, layout: Layout) -> tuple[np.ndarray, np.ndarray]:
    """What was recorded of each trial around its alignment event (ms; -inf/inf when unknown):
    from start and stop, from a declared extent, or (on a trial clock) from the trial start at 0."""
    per_ms = layout.ticks_per_ms
    lo, hi = np.full(align.size, -np.inf), np.full(align.size, np.inf)
    if "start" in ticks:
        lo = (ticks["start"] - align) / per_ms
    elif layout.clock == "trial":
        lo = -align / per_ms
    if "stop" in ticks:
        hi = (ticks["stop"] - align) / per_ms
    if layout.extent_ms is not None:
        lo, hi = np.maximum(lo, layout.extent_ms[0]), np.minimum(hi, layout.extent_ms[1])
    return lo, hi


def _unique_trials(trials: pd.DataFrame, keys: list[str], layout: Layout) -> None:
    per_unit = "unit" in trials
    dup = trials.duplicated((["unit"] if per_unit else []) + keys)
    if dup.any():
        first = trials.loc[dup].iloc[0]
        raise DataError(Problem(f"the trial key must be unique{' per unit' if per_unit else ''} in the trial table; "
                                f"{int(dup.sum())} rows repeat a key (a key of several columns, e.g. level and "
                                "trial number, tells trials apart when numbers restart)",
                                layout.locs.get("key0", ()), shown([first[k] for k in keys]) if len(keys) > 1
                                else shown(first[keys[0]])))


def pairs(trials: pd.DataFrame, units: list[str]) -> tuple[np.ndarray, np.ndarray]:
    """(unit index, trial row) of every (unit, trial) pair, ordered by unit, then presentation:
    every unit saw every trial, unless the trial table says which unit each trial belongs to."""
    if "unit" in trials:
        unit_index = {u: i for i, u in enumerate(units)}
        pair_unit = trials["unit"].astype(str).map(unit_index).to_numpy(dtype=np.int64)
        pair_trial = np.arange(len(trials), dtype=np.int64)
        order = np.lexsort((pair_trial, pair_unit))
        return pair_unit[order], pair_trial[order]
    return (np.repeat(np.arange(len(units), dtype=np.int64), len(trials)),
            np.tile(np.arange(len(trials), dtype=np.int64), len(units)))


def pair_of_spikes(spikes: pd.DataFrame, trials: pd.DataFrame, keys: list[str], units: list[str],
                   pair_unit: np.ndarray, pair_trial: np.ndarray, layout: Layout) -> np.ndarray:
    """For each spike, the index of its (unit, trial) pair by the trial key. Spikes whose key
    the trial table does not have are an error (count and first three keys)."""
    frame = pd.DataFrame({"unit": np.asarray(units, dtype=object)[pair_unit].astype(str),
                          **{k: trials[k].to_numpy()[pair_trial] for k in keys}, "pair": np.arange(pair_unit.size)})
    joined = spikes[["unit", *keys]].merge(frame, on=["unit", *keys], how="left", sort=False)
    lost = joined["pair"].isna().to_numpy()
    if lost.any():
        missing = spikes.loc[lost, keys].drop_duplicates().head(3)
        first = ", ".join(shown(list(r)) if len(keys) > 1 else shown(r[0]) for r in missing.itertuples(index=False))
        raise DataError(Problem(f"{int(lost.sum())} spikes belong to {len(spikes.loc[lost, keys].drop_duplicates())} "
                                f"trial keys that are not in the trial table of {layout.where}",
                                layout.locs.get("key0", ()), f"first: {first}"))
    return joined["pair"].to_numpy(dtype=np.int64)


def natural_key(name: str) -> tuple:
    """Sort 'u2' before 'u10'."""
    return tuple((0, int(p), "") if p.isdigit() else (1, 0, p) for p in re.split(r"(\d+)", name))
