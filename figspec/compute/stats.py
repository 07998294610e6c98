"""Small statistics shared by the summary computations: SEM, percentile bootstrap, Holm, the
one-sided signed-rank test of evoked against baseline."""

from __future__ import annotations

import warnings
from typing import Callable

import numpy as np


def sem(values: np.ndarray) -> float:
    """Standard error of the mean, sample SD (ddof = 1) / sqrt(n); NaN below two values."""
    values = np.asarray(values, dtype=float)
    if values.size < 2:
        return float("nan")
    return float(np.std(values, ddof=1) / np.sqrt(values.size))


def bootstrap_ci(values: np.ndarray, statistic: Callable[..., np.ndarray], confidence: float,
                 resamples: int, rng: np.random.Generator) -> tuple[float, float]:
    """Percentile bootstrap confidence interval of ``statistic`` (Efron & Tibshirani 1993, ch. 13).

    ``statistic`` must accept ``axis=-1``. Returns NaNs for fewer than two values.
    """
    values = np.asarray(values, dtype=float)
    if values.size < 2:
        return float("nan"), float("nan")
    idx = rng.integers(0, values.size, size=(resamples, values.size))
    boot = statistic(values[idx], axis=-1)
    tail = (1 - confidence) / 2
    low, high = np.quantile(boot, [tail, 1 - tail])
    return float(low), float(high)


def holm(p_values: np.ndarray) -> np.ndarray:
    """Holm (1979) step-down adjusted p-values; NaN stays NaN and is not counted as a test.

    adjusted p_(i) = max over j <= i of min(1, (m - j + 1) p_(j)), p sorted ascending.
    """
    p = np.asarray(p_values, dtype=float)
    out = np.full(p.shape, np.nan)
    tested = np.flatnonzero(~np.isnan(p))
    m = tested.size
    if m == 0:
        return out
    order = tested[np.argsort(p[tested], kind="stable")]
    scaled = np.minimum(1.0, (m - np.arange(m)) * p[order])
    out[order] = np.maximum.accumulate(scaled)
    return out


CORRECTION_TEXT = {"holm": "Holm-corrected across levels within each unit", "none": "not corrected for multiple levels"}
CORRECTION_SHORT = {"holm": "Holm", "none": "uncorrected"}


def corrected(p_values: np.ndarray, correction: str) -> np.ndarray:
    """p-values corrected across one unit's levels as the panel says: Holm (1979), or as they are."""
    return holm(p_values) if correction == "holm" else np.asarray(p_values, dtype=float)


# the spec's names for how trials with equal evoked and baseline counts are treated, and
# scipy.stats.wilcoxon's: dropped (Wilcoxon 1945), kept in the ranking (Pratt 1959), or their
# ranks split between the signs
ZERO_DIFFERENCES = {"drop": "wilcox", "keep": "pratt", "split": "zsplit"}
ZERO_TEXT = {"drop": "dropped", "keep": "kept in the ranking (Pratt)", "split": "ranked and split between signs"}


def signed_rank_p(evoked: np.ndarray, baseline: np.ndarray, zero_differences: str) -> tuple[float, float]:
    """One-sided Wilcoxon signed-rank test, evoked > baseline (scipy.stats.wilcoxon), zero
    differences treated as ``zero_differences`` says. Returns (statistic, p); NaNs when every
    difference is zero or fewer than two trials."""
    from scipy.stats import wilcoxon

    d = np.asarray(evoked, dtype=float) - baseline
    if d.size < 2 or np.all(d == 0):
        return np.nan, np.nan
    zero_method = ZERO_DIFFERENCES[zero_differences]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # scipy notes ties and small samples; stated in docs
        result = wilcoxon(evoked, baseline, alternative="greater", zero_method=zero_method)
    return float(result.statistic), float(result.pvalue)
