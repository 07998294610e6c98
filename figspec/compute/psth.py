"""Peri-stimulus time histogram (binned rate) table."""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.spec.models import PsthPanel

RATE_UNITS = {"spikes_per_s": "spikes/s", "spikes_per_trial": "spikes/trial", "count": "spikes"}


def bin_edges(window_ms: tuple[float, float], bin_ms: float) -> np.ndarray:
    """Edges of whole bins of ``bin_ms`` covering ``window_ms`` (ms)."""
    n = int(round((window_ms[1] - window_ms[0]) / bin_ms))
    return window_ms[0] + bin_ms * np.arange(n + 1)


def psth_table(rec: Recording, panel: PsthPanel) -> pd.DataFrame:
    """Spike counts per level and bin, and the rate in the panel's measure.

    The rate divides by the number of trials *presented* at the level (from the trial table),
    not by the trials that happen to contain a spike: count / (n_trials x bin width) for
    ``spikes_per_s`` (common practice), count / n_trials for ``spikes_per_trial``, the raw
    summed count for ``count``. Bins are half-open, ``[start, stop)``.

    Columns
    -------
    unit, level : as in the raster table.
    bin_start_ms, bin_stop_ms : bin edges from stimulus onset (ms).
    n_trials : trials presented at the level.
    count : spikes in the bin summed over those trials.
    rate : the measure named in ``rate_unit``.
    rate_unit : ``spikes/s``, ``spikes/trial`` (per bin) or ``spikes`` (per bin, summed).
    """
    sel = select(rec, panel.unit, panel.window_ms, panel.levels)
    edges = bin_edges(panel.window_ms, panel.bin_ms)
    n_bins = edges.size - 1
    levels, level_of_trial = np.unique(sel.trials["level"].to_numpy(), return_inverse=True)
    n_trials = np.bincount(level_of_trial, minlength=levels.size)
    bins = np.searchsorted(edges, sel.time_ms, side="right") - 1
    bins = np.clip(bins, 0, n_bins - 1)  # guards round-off at the edges; times are inside the window
    flat = level_of_trial[sel.spike_trial] * n_bins + bins
    counts = np.bincount(flat, minlength=levels.size * n_bins).reshape(levels.size, n_bins)
    trials = np.repeat(n_trials, n_bins)
    count = counts.ravel()
    if panel.measure == "spikes_per_s":
        rate = count / (trials * panel.bin_ms * 1e-3)
    elif panel.measure == "spikes_per_trial":
        rate = count / trials
    else:
        rate = count.astype(float)
    return pd.DataFrame({"unit": panel.unit, "level": np.repeat(levels, n_bins),
                         "bin_start_ms": np.tile(edges[:-1], levels.size),
                         "bin_stop_ms": np.tile(edges[1:], levels.size),
                         "n_trials": trials, "count": count, "rate": rate,
                         "rate_unit": RATE_UNITS[panel.measure]})
