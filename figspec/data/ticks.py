"""Times as whole ticks (1 µs unless a source says otherwise), from seconds, milliseconds or
sample indices, so alignment subtracts integers and a spike on a bin edge lands where exact
arithmetic says.

Rule for samples: a spike at sample ``k`` of a recording sampled at ``fs`` Hz happened ``k / fs``
s after sample 0, and is held as the whole tick nearest to it (halves rounded up), computed in
integers when ``fs`` is a whole number of Hz. So whenever ``k / fs`` is a whole number of ticks
(at 30 kHz: every third sample is a whole 100 µs) it is held exactly, and a spike whose time
equals a bin edge (the edge given in ms from an onset given in s on the same clock) lands in the
bin that starts there, as it does for times read in s or ms.
"""

from __future__ import annotations

import numpy as np

from figspec.data.keep import shown
from figspec.data.table import is_missing, numbers
from figspec.errors import DataError, Loc, Problem

SECONDS_PER = {"s": 1.0, "ms": 1e-3}
LARGEST_TICK = 2 ** 62          # times beyond this many ticks cannot be held exactly


def finite_numbers(values: np.ndarray, what: str, loc: Loc, where: str) -> np.ndarray:
    """``values`` as numbers, every one finite, else an error counting the rows that are not."""
    out = numbers(values)
    bad = ~np.isfinite(out)
    if bad.any():
        first = np.asarray(values)[np.argmax(bad)]
        raise DataError(Problem(f"{what} must be finite numbers in every row of {where}; {int(bad.sum())} rows "
                                "are not", loc, "an empty field or NaN" if is_missing(first) else shown(first)))
    return out


def to_ticks(values: np.ndarray, layout, what: str, name: str) -> np.ndarray:
    """Times of the canonical column ``name`` (``time`` for spikes, else a trial-table time) in
    the unit the layout gives them, as int64 ticks."""
    loc = layout.locs.get(name, ())
    own = layout.trial_time_unit not in (None, layout.time_unit) and name != "time"
    unit, key = (layout.trial_time_unit, "trial_time_unit") if own else (layout.time_unit, "time_unit")
    if unit == "samples":
        return samples_to_ticks(values, layout.sampling_rate_hz, layout.ticks_per_second, what, loc, layout.where)
    values = finite_numbers(values, what, loc, layout.where)
    scaled = values * (layout.ticks_per_second * SECONDS_PER[unit])
    largest = max(abs(float(scaled.min())), abs(float(scaled.max()))) if scaled.size else 0.0
    if largest >= LARGEST_TICK:
        raise DataError(Problem(f"{what} are too large to hold in {1e6 / layout.ticks_per_second:g}-µs ticks "
                                f"(is {key} = {unit!r} right?)", loc, shown(values[np.argmax(np.abs(scaled))])))
    return np.rint(scaled, out=scaled).astype(np.int64)


def samples_to_ticks(values: np.ndarray, rate_hz: float, ticks_per_second: int, what: str, loc: Loc,
                     where: str) -> np.ndarray:
    """Sample indices (whole numbers >= 0) as ticks, by the rule in this module's docstring."""
    values = np.asarray(values)
    if values.dtype.kind not in "iu":
        as_float = finite_numbers(values, what, loc, where)
        whole = as_float == np.round(as_float)
        if not whole.all():
            raise DataError(Problem(f"{what} are sample indices, whole numbers, in every row of {where}; "
                                    f"{int((~whole).sum())} rows are not", loc, shown(as_float[np.argmin(whole)])))
        values = as_float.astype(np.int64)
    if values.size and values.min() < 0:
        raise DataError(Problem(f"{what} are sample indices, >= 0, in every row of {where}; "
                                f"{int((values < 0).sum())} rows are negative", loc, shown(values.min())))
    k = values.astype(np.int64, copy=False)
    if float(rate_hz).is_integer():
        rate = int(rate_hz)
        if k.size and int(k.max()) >= LARGEST_TICK // (2 * ticks_per_second):
            raise DataError(Problem(f"{what} are too large to hold in ticks", loc, shown(k.max())))
        out = k * (2 * ticks_per_second)
        out += rate
        out //= 2 * rate
        return out
    return np.rint(k * (ticks_per_second / float(rate_hz))).astype(np.int64)
