"""Build a :class:`Recording` from canonical spike and trial frames, whatever their source.

Sources (CSV, Parquet, NWB ...) only read their format and rename columns to the canonical
names of :mod:`figspec.data.columns`; everything about trials, clocks, alignment and units
happens here, once, with numpy on the columns of :class:`figspec.data.table.Table` (no
pandas). Times become integer ticks as they are read (``np.rint(t * ticks per unit)``), so
alignment subtracts integers.

Canonical spike table: ``time``, ``unit`` (unless the source names its one unit), ``key0`` ...
(the trial key; absent when spikes are assigned to trials by time) and, without a trial table,
``level``. Canonical trial table: ``key0`` ..., ``level`` and optionally ``onset``, ``offset``,
``start``, ``stop``, ``event:NAME``, ``unit`` and ``where:COLUMN``.

Clocks (``Layout.clock``): ``aligned``, spike times are already relative to the alignment
event; ``trial``, spikes and events are relative to each trial's start; ``session``, one clock
for the whole recording. Presentation order is the order of trial start (else of the alignment
event) on a session clock, and the trial table's row order otherwise.
"""

from __future__ import annotations

import re

import numpy as np

from figspec.data.by_time import assign_by_time
from figspec.data.checks import check_durations, check_inside_extent, check_unit_names
from figspec.data.keep import select_trials, shown
from figspec.data.layout import Layout
from figspec.data.recording import Recording, natural_key
from figspec.data.table import (Coded, Table, coded, count_missing, factorize, first_of_each, index_in, lookup, missing,
                                numbers, row_codes, text)
from figspec.data.ticks import finite_numbers, to_ticks
from figspec.data.trial_table import trial_table
from figspec.data.trials_from_spikes import TrialCounts, trials_from_spikes
from figspec.errors import DataError, Problem

__all__ = ["Layout", "TrialCounts", "assemble"]


def _key_columns(table: Table) -> list[str]:
    return sorted((c for c in table if re.fullmatch(r"key\d+", c)), key=lambda c: int(c[3:]))


def key_values(columns: list[np.ndarray]) -> list[np.ndarray]:
    """One key column as it appears in several tables: integers when every value in all of
    them is a whole number, else stripped text."""
    if all(np.asarray(c).dtype.kind in "iu" for c in columns):
        return [np.asarray(c, dtype=np.int64) for c in columns]
    as_numbers = [numbers(c) for c in columns]
    if all(np.all(np.isfinite(n) & (n == np.round(n))) for n in as_numbers):
        return [n.astype(np.int64) for n in as_numbers]
    return [text(c) for c in columns]


def check_keys_present(spikes: Table, trials: Table, keys: list[str], layout: Layout) -> None:
    """A row whose trial key is empty belongs to no trial: an error naming the table and count."""
    for name, table, prefix in (("spike table", spikes, "spikes:"), ("trial table", trials, "")):
        for key in keys:
            if key in table and table[key].dtype.kind not in "iub":
                empty = count_missing(table[key])
                if empty:
                    raise DataError(Problem(f"the trial key is empty in {empty} rows of the {name} of {layout.where}",
                                            layout.locs.get(prefix + key, layout.locs.get("key0", ())), "an empty field"))


def normalise_keys(spikes: Table | None, trials: Table, keys: list[str]) -> tuple[Table | None, Table]:
    """The spike and trial tables with each key column as integers when every value in both
    is a whole number, else as strings."""
    for key in keys:
        both = spikes is not None and key in spikes
        values = key_values([trials[key]] + ([spikes[key]] if both else []))
        trials = trials.with_columns({key: values[0]})
        if both:
            spikes = spikes.with_columns({key: values[1]})
    return spikes, trials


def assemble(spikes, trials, layout: Layout) -> Recording:
    """Build a :class:`Recording` from canonical tables (or DataFrames) laid out as ``layout`` says."""
    spikes = Table.of(spikes)
    trials = None if trials is None else Table.of(trials)
    unit_names, unit_code, unread = unit_codes(spikes.raw("unit"), layout)
    spikes = spikes.select([c for c in spikes if c != "unit"])          # (large arrays are let go when done)
    spike_t = to_ticks(spikes["time"], layout, "spike times", "time")
    if trials is None:
        spikes = spikes.with_columns({"level": finite_numbers(spikes["level"], "levels", layout.locs.get("level", ()),
                                                        layout.where)})
        trials = trials_from_spikes(spikes, _key_columns(spikes), layout.counts, layout.where)
    keys = _key_columns(trials)
    check_keys_present(spikes, trials, keys, layout)
    spikes, trials = normalise_keys(spikes, trials, keys)
    table, times = trial_table(trials, keys, layout)
    keep, removed = select_trials(table, keys, layout.keep, layout.keep_loc)
    check_unit_names(unit_names, layout)
    per_unit = "unit" in table
    names = set(unit_names.tolist()) | (set(np.unique(table["unit"]).tolist()) if per_unit else set())
    units = sorted(names, key=natural_key)
    spike_unit = index_in(units, unit_names)[unit_code]
    del unit_code
    pair_unit, pair_trial = pairs(table, units)
    if layout.assign == "by_time":
        pair, outside = assign_by_time(spike_t, spike_unit, units, table, times, layout)
        removed += (("spikes outside every trial", outside),) if outside else ()
        spike_t, pair = spike_t[pair >= 0], pair[pair >= 0]
    else:
        pair = pair_of_spikes(spikes, spike_unit, table, keys, pair_unit, pair_trial, layout)
    del spikes, spike_unit
    ticks = spike_t                                                     # aligned in place
    if layout.clock != "aligned":
        ticks -= times["align"][pair_trial][pair]
    check_inside_extent(ticks, table, pair_trial, pair, layout, pair_unit, units)
    check_durations(table, layout)
    order = sort_order(pair, ticks)
    warn_duplicates(pair[order], ticks[order], layout)
    offsets = np.zeros(pair_unit.size + 1, dtype=np.int64)
    np.cumsum(np.bincount(pair, minlength=pair_unit.size), out=offsets[1:])
    shown_cols = ["trial", "sequence", "level", "stim_start_ms", "stim_stop_ms", "extent_lo_ms", "extent_hi_ms"]
    shown_cols += (["unit"] if per_unit else []) + [c for c in table if c.startswith("where:")]
    rec = Recording(units=tuple(units), trials=table.select(shown_cols), pair_unit=pair_unit, pair_trial=pair_trial,
                    offsets=offsets, ticks=ticks[order], ticks_per_ms=layout.ticks_per_ms,
                    unread_units=tuple(sorted(set(unread.tolist()) - set(units), key=natural_key)))
    return rec.keep_trials(keep, removed)


DUPLICATES_SAID = 10      # fewer repeats than this (and than 1 % of the spikes) are coincidences of a
DUPLICATE_SHARE = 0.01    # multi-unit cluster at sample resolution, or of simulated data, not a fault


def warn_duplicates(pair: np.ndarray, ticks: np.ndarray, layout: Layout) -> None:
    """Warn about spikes listed twice: one unit, one trial, the very same time (to the tick). A
    neuron's refractory period rules out two spikes at one instant, so such rows are an export
    or a concatenation gone wrong; they are counted and said, and kept (dropping rows silently
    would hide the fault that made them, and a sorter's doublets would still show in rasters),
    so rates include them until the data are mended. A few repeats (fewer than 10, or than 1 % of
    the spikes) are left unsaid: a multi-unit cluster read at sample resolution has such
    coincidences."""
    same = (pair[1:] == pair[:-1]) & (ticks[1:] == ticks[:-1])
    n = int(np.count_nonzero(same))
    if n >= max(DUPLICATES_SAID, DUPLICATE_SHARE * ticks.size):
        import warnings

        from figspec.errors import FigspecWarning

        warnings.warn(f"{layout.where}: {n} spike rows repeat another row exactly (same unit, trial and time): rates "
                      "and rasters count them twice; is the spike table concatenated twice?", FigspecWarning,
                      stacklevel=2)


def unit_codes(values, layout: Layout) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(unit names as stripped text, each spike's code into them, names of units whose rows the
    reader left out). The distinct values are found first (or come with a coded column, as
    Arrow read them) and only they are checked and turned into text; an empty field is an error."""
    try:
        distinct, codes = coded(values)
    except TypeError:                       # text mixed with None or NaN, which do not sort with it
        distinct, codes = factorize(np.where(missing(values), "", np.asarray(values).astype(str)))
    unread = distinct[:0]
    if isinstance(values, Coded):           # a reader that kept some units' rows: drop the names of the others
        present = np.bincount(codes, minlength=distinct.size) > 0
        if not present.all():
            unread = text(distinct[~present & ~missing(distinct)])
            check_unit_names(unread, layout)    # the names read are checked with the rest of the assembly
            distinct, codes = distinct[present], (np.cumsum(present) - 1)[codes]
    empty = np.flatnonzero(missing(distinct))
    if empty.size:
        rows = int(np.count_nonzero(np.isin(codes, empty)))
        raise DataError(Problem(f"the unit column is empty in {rows} rows of {layout.where}",
                                layout.locs.get("unit", ()), "an empty field"))
    names, renamed = np.unique(text(distinct), return_inverse=True)    # " u1" and "u1" are one unit
    renamed = renamed.reshape(-1)
    return names, (codes if np.array_equal(renamed, np.arange(distinct.size)) else renamed[codes]), unread


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


def pairs(trials: Table, units: list[str]) -> tuple[np.ndarray, np.ndarray]:
    """(unit index, trial row) of every (unit, trial) pair, ordered by unit, then presentation:
    every unit saw every trial, unless the trial table says which unit each trial belongs to."""
    if "unit" in trials:
        pair_unit = index_in(units, trials["unit"])
        pair_trial = np.arange(len(trials), dtype=np.int64)
        order = np.lexsort((pair_trial, pair_unit))
        return pair_unit[order], pair_trial[order]
    return (np.repeat(np.arange(len(units), dtype=np.int64), len(trials)),
            np.tile(np.arange(len(trials), dtype=np.int64), len(units)))


def pair_of_spikes(spikes: Table, spike_unit: np.ndarray, trials: Table, keys: list[str], pair_unit: np.ndarray,
                   pair_trial: np.ndarray, layout: Layout) -> np.ndarray:
    """For each spike, the index of its (unit, trial) pair by the trial key. Spikes whose key
    the trial table does not have are an error (count and first three keys).

    Each key column is coded against the trial table's distinct values, the codes combine with
    the unit into one number per spike, and that number indexes a table of pairs (or, when the
    combinations are too many for a table, is looked up by bisection)."""
    coded = [factorize(trials[k]) for k in keys]
    size = max(int(pair_unit.max(initial=0)) + 1, 1) * int(np.prod([max(u.size, 1) for u, _ in coded], dtype=float))
    if size < 2 ** 62:                              # in place: a spike costs a few bytes of temporaries
        spike_code, pair_code = spike_unit.astype(np.int64), pair_unit.astype(np.int64)
        lost, found = spike_code < 0, None
        for k, (uniques, trial_code) in zip(keys, coded):
            found = lookup(uniques, spikes[k])
            lost |= found < 0
            spike_code *= uniques.size
            spike_code += found
            pair_code = pair_code * uniques.size + trial_code[pair_trial]
        del found
    else:                                           # too many combinations for one number: codes row by row
        pair_code, spike_code = row_codes([pair_unit] + [trials[k][pair_trial] for k in keys],
                                          [spike_unit] + [spikes[k] for k in keys])
        lost = spike_code < 0
    spike_code[lost] = 0
    if size <= max(8 * pair_code.size, 1 << 22):
        of_code = np.full(int(size), -1, dtype=np.int64)
        of_code[pair_code] = np.arange(pair_code.size)
        pair = of_code[spike_code]
    else:
        order = np.argsort(pair_code, kind="stable")
        at = np.clip(np.searchsorted(pair_code[order], spike_code), 0, max(order.size - 1, 0))
        pair = np.where(pair_code[order][at] == spike_code, order[at], -1) if order.size else spike_code - 1
    pair[lost] = -1
    lost = pair < 0
    if lost.any():
        lost_keys, first_lost = row_codes([spikes[k][lost] for k in keys])[0], np.flatnonzero(lost)
        distinct = np.flatnonzero(first_of_each(lost_keys))
        first = ", ".join(shown([spikes[k][first_lost[i]] for k in keys]) if len(keys) > 1
                          else shown(spikes[keys[0]][first_lost[i]]) for i in distinct[:3])
        one = distinct.size == 1
        raise DataError(Problem(f"{int(lost.sum())} spike{'' if lost.sum() == 1 else 's'} belong"
                                f"{'s' if lost.sum() == 1 else ''} to {distinct.size} trial key"
                                f"{' that is' if one else 's that are'} not in the trial table of {layout.where}",
                                layout.locs.get("key0", ()), f"first: {first}"))
    return pair
