"""Evoked response per level (intensity-response), with a per-level test against baseline."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
from scipy.stats import wilcoxon

from figspec.compute.selection import select
from figspec.compute.stats import bootstrap_ci, holm, sem
from figspec.compute.trial_counts import counts_in
from figspec.data.recording import Recording
from figspec.spec.panels import LevelResponsePanel


def per_trial_responses(rec: Recording, unit: str, panel: LevelResponsePanel):
    """(levels of the trials, evoked counts, baseline counts) for every trial presented."""
    window = (min(panel.baseline_ms[0], panel.response_ms[0]), max(panel.baseline_ms[1], panel.response_ms[1]))
    sel = select(rec, unit, window, panel.levels)
    return sel.trials["level"].to_numpy(), counts_in(sel, panel.response_ms), counts_in(sel, panel.baseline_ms)


def signed_rank_p(evoked: np.ndarray, baseline: np.ndarray, zero_method: str) -> tuple[float, float]:
    """One-sided Wilcoxon signed-rank test, evoked > baseline (scipy.stats.wilcoxon). Returns
    (statistic, p); NaNs when every difference is zero or fewer than two trials."""
    d = evoked.astype(float) - baseline
    if d.size < 2 or np.all(d == 0):
        return np.nan, np.nan
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # scipy notes ties and small samples; stated in docs
        result = wilcoxon(evoked, baseline, alternative="greater", zero_method=zero_method)
    return float(result.statistic), float(result.pvalue)


def response_points(rec: Recording, panel: LevelResponsePanel, units: list[str]) -> pd.DataFrame:
    """Response per unit and level in the response window.

    The per-trial response is the count in ``response_ms`` (or count / window length in s for
    ``spikes_per_s``), less the same trial's baseline count over the equally long
    ``baseline_ms`` when ``subtract_baseline``. Every trial presented counts, with or without
    spikes.

    Columns
    -------
    unit, level, n_trials : as elsewhere.
    response : mean per-trial response (``response_unit``).
    error_low, error_high : mean - SEM and mean + SEM (``error`` = "sem", ddof = 1), or the
        percentile bootstrap CI of the mean.
    baseline : mean baseline response in the same unit.
    error_kind : what the error bounds are.
    statistic, p : one-sided Wilcoxon signed-rank test of evoked > baseline counts per trial
        (``zero_method`` as named), empty when all differences are zero.
    p_holm : p adjusted by Holm across the levels of the unit.
    significant : p_holm < alpha.
    """
    duration_s = (panel.response_ms[1] - panel.response_ms[0]) * 1e-3
    scale = 1.0 / duration_s if panel.measure == "spikes_per_s" else 1.0
    rng = np.random.default_rng(panel.seed)
    rows = []
    for unit in units:
        level, evoked, base = per_trial_responses(rec, unit, panel)
        unit_rows = []
        for lv in np.unique(level):
            e, b = evoked[level == lv], base[level == lv]
            values = (e - b if panel.subtract_baseline else e) * scale
            mean = float(values.mean())
            if panel.error == "sem":
                s = sem(values)
                low, high, kind = mean - s, mean + s, "mean +/- SEM"
            else:
                low, high = bootstrap_ci(values, np.mean, panel.confidence, panel.resamples, rng)
                kind = f"{panel.confidence:.0%} bootstrap CI of the mean"
            stat, p = signed_rank_p(e, b, panel.zero_method) if panel.test == "wilcoxon" else (np.nan, np.nan)
            unit_rows.append([unit, lv, e.size, mean, low, high, float(b.mean() * scale), kind, stat, p])
        frame = pd.DataFrame(unit_rows, columns=["unit", "level", "n_trials", "response", "error_low",
                                                 "error_high", "baseline", "error_kind", "statistic", "p"])
        frame["p_holm"] = holm(frame["p"].to_numpy())
        frame["significant"] = frame["p_holm"] < panel.alpha
        rows.append(frame)
    out = pd.concat(rows, ignore_index=True)
    out["response_unit"] = "spikes/s" if panel.measure == "spikes_per_s" else "spikes"
    out["test"] = f"Wilcoxon signed-rank, one-sided, zero_method={panel.zero_method}, Holm" if panel.test == "wilcoxon" else "none"
    return out
