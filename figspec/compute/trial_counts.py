"""Per-trial and per-level quantities of one unit's selection: spike counts in a window,
counts per level and bin, the first spike in a window. Windows and bins are ``[start, stop)``."""

from __future__ import annotations

import numpy as np

from figspec.compute.selection import Selection


def counts_in(sel: Selection, window_ms: tuple[float, float]) -> np.ndarray:
    """Spikes of each selected trial in ``[start, stop)`` (ms), zero for trials without any."""
    return np.bincount(sel.spike_trial[sel.inside(window_ms)], minlength=len(sel.trials))


def level_bin_counts(sel: Selection, edges: np.ndarray) -> np.ndarray:
    """Spike counts per level (rows, as ``sel.levels``) and bin ``[edges[i], edges[i+1])`` (ms),
    summed over each level's trials."""
    n_bins = edges.size - 1
    tick_edges = sel.to_ticks(edges)                 # whole ticks: a spike on an edge is in the bin it starts
    inside = (sel.ticks >= tick_edges[0]) & (sel.ticks < tick_edges[-1])
    bins = np.searchsorted(tick_edges, sel.ticks[inside], side="right") - 1
    flat = sel.spike_level()[inside] * n_bins + bins
    return np.bincount(flat, minlength=sel.levels.size * n_bins).reshape(sel.levels.size, n_bins)


def level_spike_times(sel: Selection) -> list[tuple[np.ndarray, int]]:
    """(pooled spike times in ms, trials presented) of each level of a selection."""
    order = np.argsort(sel.spike_level(), kind="stable")
    bounds = np.searchsorted(sel.spike_level()[order], np.arange(sel.levels.size + 1))
    times = sel.time_ms[order]
    return [(times[bounds[i]:bounds[i + 1]], int(sel.n_trials[i])) for i in range(sel.levels.size)]


def first_spikes(sel: Selection, window_ms: tuple[float, float]) -> np.ndarray:
    """Time (ms) of each selected trial's first spike in ``[start, stop)``; NaN for a trial
    with no spike there (never zero)."""
    inside = sel.inside(window_ms)
    big = np.iinfo(np.int64).max
    first = np.full(len(sel.trials), big, dtype=np.int64)
    np.minimum.at(first, sel.spike_trial[inside], sel.ticks[inside])
    return np.where(first == big, np.nan, first / sel.ticks_per_ms)
