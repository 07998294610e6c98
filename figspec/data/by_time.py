"""Spikes on the session clock with no trial column: each spike belongs to the trial whose
[start, stop) holds it. Vectorised: one ``searchsorted`` over the sorted trial starts."""

from __future__ import annotations

import warnings

import numpy as np

from figspec.data.keep import shown
from figspec.errors import DataError, FigspecWarning, Problem


def assign_by_time(spike_t: np.ndarray, spike_unit: np.ndarray, units: list[str], trials,
                   times: dict, layout) -> tuple[np.ndarray, int]:
    """(pair index of each spike, -1 for spikes in no trial; the number of those), for pairs
    ordered as :func:`figspec.data.assemble.pairs` orders them (every unit saw every trial);
    ``spike_unit`` is each spike's index into ``units``.

    Overlapping trials are an error naming two of them; so is a recording where no spike falls
    inside any trial (the clock or the time unit is then probably wrong)."""
    if "unit" in trials:
        raise DataError(Problem("assigning spikes to trials by time needs one trial table for every unit "
                                "(leave out trial_columns.unit)", layout.locs.get("unit", ())))
    start, stop = times["start"], times["stop"]
    if np.any(stop <= start):
        i = int(np.flatnonzero(stop <= start)[0])
        raise DataError(Problem(f"trial {shown(trials['trial'][i])} stops before it starts",
                                layout.locs.get("stop", ()), layout.where))
    order = np.argsort(start, kind="stable")
    s, e = start[order], stop[order]
    overlap = np.flatnonzero(e[:-1] > s[1:])
    if overlap.size:
        a, b = order[overlap[0]], order[overlap[0] + 1]
        raise DataError(Problem(f"trials {shown(trials['trial'][a])} and {shown(trials['trial'][b])} "
                                "overlap in time, so a spike between them belongs to both",
                                layout.locs.get("start", ()), layout.where))
    k = np.searchsorted(s, spike_t, side="right") - 1
    inside = (k >= 0) & (spike_t < e[np.clip(k, 0, None)])
    trial_row = np.where(inside, order[np.clip(k, 0, None)], -1)
    pair = np.where(inside, spike_unit * len(trials) + trial_row, -1)
    outside = int((~inside).sum())
    if spike_t.size and outside == spike_t.size:
        raise DataError(Problem("no spike falls inside any trial's start and stop: is time_unit right, and are "
                                "spikes and trials on the same clock?", layout.locs.get("time", ()), layout.where))
    check_every_unit_inside(np.bincount(spike_unit, minlength=len(units)),
                            np.bincount(spike_unit[inside], minlength=len(units)), units,
                            "inside any trial's start and stop", layout)
    if outside > spike_t.size / 2:
        warnings.warn(f"{layout.where}: {outside} of {spike_t.size} spikes fall inside no trial's start and stop "
                      "(left out): is time_unit right, and are spikes and trials on the same clock?",
                      FigspecWarning, stacklevel=4)
    return pair, outside


def check_every_unit_inside(total: np.ndarray, kept: np.ndarray, units, where_inside: str, layout) -> None:
    """A unit with spikes of which none falls where its trials were recorded is an error naming
    the unit and the likely cause (the time unit or the clock): its figure would be empty rows
    and a fit through zeros. ``total`` and ``kept``: each unit's spikes, and those inside."""
    lost = np.flatnonzero((total > 0) & (kept == 0))
    if lost.size:
        names = ", ".join(shown(units[i]) for i in lost[:3]) + (f" and {lost.size - 3} more" if lost.size > 3 else "")
        raise DataError(Problem(f"no spike of unit {names} falls {where_inside} ({int(total[lost].sum())} spikes): "
                                f"is time_unit = {layout.time_unit!r} right, and are its spikes on the same clock "
                                f"({layout.clock!r}) as the trials?", layout.locs.get("time", ()), layout.where))
