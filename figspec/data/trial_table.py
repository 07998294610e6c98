"""The trial table of a recording: presentation order, stimulus and recorded-extent times in
ms from each trial's alignment event, the displayed trial key, and each trial's rank in
presentation order (what resampling follows)."""

from __future__ import annotations

import numpy as np

from figspec.data.keep import shown
from figspec.data.layout import Layout
from figspec.data.recording import natural_key
from figspec.data.table import Table, first_of_each, row_codes, text
from figspec.data.ticks import finite_numbers, to_ticks
from figspec.errors import DataError, Problem


def shown_key(key) -> str:
    """A trial key as a message shows it."""
    return str(key.item() if hasattr(key, "item") else key)


def trial_table(trials: Table, keys: list[str], layout: Layout) -> tuple[Table, dict]:
    """The trial table in presentation order with its display columns, and its event times in
    ticks (``align``, and ``start``/``stop`` on the data's clock when given)."""
    locs, where = layout.locs, layout.where
    level = finite_numbers(trials["level"], "levels", locs.get("level", ()), where)
    ticks = {name: to_ticks(trials[name], layout, f"{name} times", name)
             for name in ("onset", "offset", "start", "stop") if name in trials}
    ticks.update({c: to_ticks(trials[c], layout, f"{c[6:]} times", c) for c in trials if c.startswith("event:")})
    align = ticks.get(layout.align_column, np.zeros(len(trials), dtype=np.int64))
    if layout.assign == "by_time" and "stop" not in ticks and layout.extent_ms is not None:
        lo, hi = np.rint(np.asarray(layout.extent_ms) * layout.ticks_per_ms).astype(np.int64)
        ticks["start"], ticks["stop"] = np.maximum(ticks.get("start", align + lo), align + lo), align + hi
    if "unit" in trials:
        trials = trials.with_columns({"unit": text(trials["unit"])})
    order = _presentation_order(trials, ticks, align, layout)
    trials = trials.with_columns({"level": level}).take(order)
    ticks = {k: v[order] for k, v in ticks.items()}
    align = align[order]
    per_ms = layout.ticks_per_ms
    onset = ticks.get("onset", align)
    added = {"stim_start_ms": (onset - align) / per_ms}
    if "offset" in ticks:
        if np.any(ticks["offset"] <= onset):
            bad = ticks["offset"] <= onset
            first = int(np.argmax(bad))
            key = trials["trial"][first] if "trial" in trials else first + 1
            raise DataError(Problem(f"every stimulus offset must come after its onset; "
                                    f"{'1 trial does' if bad.sum() == 1 else f'{int(bad.sum())} trials do'} not, "
                                    f"first trial {shown_key(key)} (onset {(onset[first] - align[first]) / per_ms:g} "
                                    f"ms, offset {(ticks['offset'][first] - align[first]) / per_ms:g} ms from the "
                                    "alignment event)", locs.get("offset", ()), where))
        added["stim_stop_ms"] = (ticks["offset"] - align) / per_ms
    else:
        added["stim_stop_ms"] = np.full(len(trials), np.nan)
    if "start" in ticks and "stop" in ticks and np.any(ticks["stop"] <= ticks["start"]):
        bad = int(np.count_nonzero(ticks["stop"] <= ticks["start"]))
        raise DataError(Problem(f"every trial must stop after it starts; {bad} trials do not", locs.get("stop", ()),
                                where))
    added["extent_lo_ms"], added["extent_hi_ms"] = _extent(ticks, align, layout)
    added["trial"] = trials[keys[0]] if len(keys) == 1 else joined_keys([trials[k] for k in keys])
    added["sequence"] = _sequence(trials, keys, layout)
    trials = trials.with_columns(added)
    _unique_trials(trials, keys, layout)
    return trials, {**ticks, "align": align}


def joined_keys(columns: list[np.ndarray]) -> np.ndarray:
    """The values of a key of several columns shown as one text, joined by "/"."""
    out = np.asarray(columns[0]).astype(str)
    for column in columns[1:]:
        out = np.char.add(np.char.add(out, "/"), np.asarray(column).astype(str))
    return out


def _presentation_order(trials: Table, ticks: dict, align: np.ndarray, layout: Layout) -> np.ndarray:
    rows = np.arange(len(trials))
    if layout.clock == "session":
        when = ticks.get("start", align)
        group = trials["unit"] if "unit" in trials else np.zeros(len(trials))
        return np.lexsort((rows, when, group))
    if "unit" in trials:
        return np.lexsort((rows, trials["unit"]))
    return rows


def _sequence(trials: Table, keys: list[str], layout: Layout) -> np.ndarray:
    """Each trial's rank in presentation order, which resampling follows, so a bootstrap depends on
    the trials and not on how their keys are spelled or the rows ordered: on a session clock the
    order of the table (sorted by time); otherwise the order of the keys, numbers as numbers and
    text in natural order ("t2" before "t10"), so keys 1, 2, ... and "t1", "t2", ... agree."""
    if layout.clock == "session":
        return np.arange(len(trials), dtype=np.int64)
    columns = []
    for key in reversed(keys):
        values = trials[key]
        if values.dtype.kind in "iuf":
            columns.append(values)
        else:
            distinct, codes = np.unique(values.astype(str), return_inverse=True)
            names = distinct.tolist()
            rank = np.empty(len(names), dtype=np.int64)
            rank[sorted(range(len(names)), key=lambda i: natural_key(names[i]))] = np.arange(len(names))
            columns.append(rank[codes.reshape(-1)])
    order = np.lexsort(columns)
    sequence = np.empty(len(trials), dtype=np.int64)
    sequence[order] = np.arange(len(trials))
    return sequence


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


def _unique_trials(trials: Table, keys: list[str], layout: Layout) -> None:
    per_unit = "unit" in trials
    codes, _ = row_codes([trials[c] for c in (["unit"] if per_unit else []) + keys])
    dup = ~first_of_each(codes)
    if dup.any():
        first = int(np.argmax(dup))
        raise DataError(Problem(f"the trial key must be unique{' per unit' if per_unit else ''} in the trial table; "
                                f"{int(dup.sum())} rows repeat a key (a key of several columns, e.g. level and "
                                "trial number, tells trials apart when numbers restart)",
                                layout.locs.get("key0", ()), shown([trials[k][first] for k in keys]) if len(keys) > 1
                                else shown(trials[keys[0]][first])))
