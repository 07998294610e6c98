"""Per-trial quantities of one unit: spike counts in a window, first spike in a window."""

from __future__ import annotations

import numpy as np

from figspec.compute.selection import Selection


def counts_in(sel: Selection, window_ms: tuple[float, float]) -> np.ndarray:
    """Spikes of each selected trial in ``[start, stop)`` (ms), zero for trials without any."""
    inside = (sel.time_ms >= window_ms[0]) & (sel.time_ms < window_ms[1])
    return np.bincount(sel.spike_trial[inside], minlength=len(sel.trials))


def level_bin_counts(sel: Selection, edges: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(levels, trials presented per level, spike counts per level and bin) for bins
    ``[edges[i], edges[i+1])`` (ms), summed over each level's trials."""
    levels, level_of_trial = np.unique(sel.trials["level"].to_numpy(), return_inverse=True)
    n_trials = np.bincount(level_of_trial, minlength=levels.size)
    n_bins = edges.size - 1
    inside = (sel.time_ms >= edges[0]) & (sel.time_ms < edges[-1])
    bins = np.searchsorted(edges, sel.time_ms[inside], side="right") - 1
    bins = np.clip(bins, 0, n_bins - 1)  # guards round-off at the edges
    flat = level_of_trial[sel.spike_trial[inside]] * n_bins + bins
    counts = np.bincount(flat, minlength=levels.size * n_bins).reshape(levels.size, n_bins)
    return levels, n_trials, counts


def first_spikes(sel: Selection, window_ms: tuple[float, float]) -> np.ndarray:
    """Time (ms) of each selected trial's first spike in ``(start, stop]``; NaN for a trial with
    no spike there (never zero)."""
    inside = (sel.time_ms > window_ms[0]) & (sel.time_ms <= window_ms[1])
    trial, time = sel.spike_trial[inside], sel.time_ms[inside]
    first = np.full(len(sel.trials), np.nan)
    order = np.lexsort((time, trial))
    trial, time = trial[order], time[order]
    starts = np.flatnonzero(np.r_[True, trial[1:] != trial[:-1]]) if trial.size else np.array([], int)
    first[trial[starts]] = time[starts]
    return first
