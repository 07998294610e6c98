"""Small statistics shared by the summary computations: SEM, percentile bootstrap, Holm."""

from __future__ import annotations

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
