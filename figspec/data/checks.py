"""Checks of an assembled recording that catch a wrong time unit or clock (spikes outside their
trials, stimuli that last minutes) and unit names that could not be drawn."""

from __future__ import annotations

import warnings

import numpy as np

from figspec.data.by_time import check_every_unit_inside
from figspec.data.layout import Layout
from figspec.data.table import Table
from figspec.errors import DataError, FigspecWarning, Problem


def check_inside_extent(ticks: np.ndarray, table: Table, pair_trial: np.ndarray, pair: np.ndarray, layout: Layout,
                        pair_unit: np.ndarray, units: list[str], chunk: int = 1 << 20) -> None:
    """Spikes far outside their own trial's recorded extent mean the time unit or the clock is
    wrong: an error when none is inside (in all, or of one unit), a warning when most are not.
    Counted in chunks, so the check needs no full-size temporary arrays."""
    lo = table["extent_lo_ms"].astype(float) * layout.ticks_per_ms
    hi = table["extent_hi_ms"].astype(float) * layout.ticks_per_ms
    if not (np.isfinite(lo).any() or np.isfinite(hi).any()):
        return
    outside = 0
    total, inside = np.zeros(len(units), dtype=np.int64), np.zeros(len(units), dtype=np.int64)
    for start in range(0, ticks.size, chunk):
        p = pair[start:start + chunk]
        t, k = ticks[start:start + chunk], pair_trial[p]
        out = (t < lo[k]) | (t >= hi[k])
        outside += int(np.count_nonzero(out))
        total += np.bincount(pair_unit[p], minlength=len(units))
        inside += np.bincount(pair_unit[p[~out]], minlength=len(units))
    hint = (f"is time_unit = {layout.time_unit!r} right, and are spike and trial times on the same clock "
            f"({layout.clock!r})?")
    if ticks.size and outside == ticks.size:
        raise DataError(Problem(f"no spike falls inside its trial's recorded extent: {hint}",
                                layout.locs.get("time", ()), layout.where))
    check_every_unit_inside(total, inside, units, "inside its trial's recorded extent", layout)
    if outside > ticks.size / 2:
        warnings.warn(f"{layout.where}: {outside} of {ticks.size} spikes fall outside their trial's recorded extent: "
                      f"{hint}", FigspecWarning, stacklevel=3)


def check_unit_names(names: np.ndarray, layout: Layout) -> None:
    """Unit names are drawn as text: one with a control character would make an invalid SVG."""
    from figspec.spec.fields import control_characters

    bad = [name for name in names.tolist() if control_characters(name)]
    if bad:
        raise DataError(Problem(f"unit names may not hold control characters ({len(bad)} do, e.g. "
                                f"{bad[0]!r})", layout.locs.get("unit", ()), layout.where))


LONGEST_STIMULUS_MS = 10_000     # common practice: single-unit stimuli last ms to seconds, rarely longer


SHORTEST_TRIAL_MS = 1.0


def check_durations(table: Table, layout: Layout) -> None:
    """Stimuli that last minutes, or trials recorded for less than a millisecond, mean the
    time unit is likely wrong (ms read as s, or s as ms): a warning, since a lab may mean it."""
    hint = f"is time_unit = {layout.time_unit!r} right?"
    stimulus = table["stim_stop_ms"] - table["stim_start_ms"]
    stimulus = stimulus[np.isfinite(stimulus)]
    if stimulus.size and np.median(stimulus) > LONGEST_STIMULUS_MS:
        warnings.warn(f"{layout.where}: the stimulus lasts {np.median(stimulus) / 1000:g} s in the median trial: "
                      f"{hint}", FigspecWarning, stacklevel=3)
    extent = table["extent_hi_ms"] - table["extent_lo_ms"]
    extent = extent[np.isfinite(extent)]
    if extent.size and np.median(extent) < SHORTEST_TRIAL_MS:
        warnings.warn(f"{layout.where}: each trial was recorded for {np.median(extent):g} ms in the median trial: "
                      f"{hint}", FigspecWarning, stacklevel=3)
