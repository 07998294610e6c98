"""Kernel smoothing of a binned rate along time (last axis)."""

from __future__ import annotations

import numpy as np


def gaussian_weights(sigma_bins: float, truncate: float = 4.0) -> np.ndarray:
    """A normalised Gaussian of SD ``sigma_bins`` sampled at whole bins out to ``truncate`` SDs."""
    radius = int(truncate * sigma_bins + 0.5)
    x = np.arange(-radius, radius + 1)
    w = np.exp(-0.5 * (x / sigma_bins) ** 2)
    return w / w.sum()


def gaussian_smooth(values: np.ndarray, sigma_bins: float) -> np.ndarray:
    """Gaussian smoothing with the edges reflected (``d c b a | a b c d``), as
    ``scipy.ndimage.gaussian_filter1d(values, sigma, mode='reflect')`` does."""
    w = gaussian_weights(sigma_bins)
    radius = w.size // 2
    values = np.asarray(values, dtype=float)
    if radius == 0:
        return values.copy()
    padded = _reflect_pad(values, radius)
    windows = np.lib.stride_tricks.sliding_window_view(padded, w.size, axis=-1)
    return windows @ w[::-1]


def _reflect_pad(values: np.ndarray, radius: int) -> np.ndarray:
    n = values.shape[-1]
    idx = np.arange(-radius, n + radius)
    period = 2 * n
    idx = np.mod(idx, period)
    idx = np.where(idx >= n, period - 1 - idx, idx)
    return values[..., idx]


def causal_weights(tau_bins: float, length: float = 6.0) -> np.ndarray:
    """An exponential decay of time constant ``tau_bins``, integrated over each bin (lag 0, 1,
    ...), cut at ``length`` time constants and normalised."""
    lags = np.arange(int(np.ceil(length * tau_bins)) + 1)
    w = np.exp(-lags / tau_bins) - np.exp(-(lags + 1) / tau_bins)
    return w / w.sum()


def causal_smooth(values: np.ndarray, tau_bins: float) -> np.ndarray:
    """Causal exponential smoothing: each bin mixes only itself and earlier bins, so no rate
    appears before it happened. Before the first bin the first value is repeated."""
    w = causal_weights(tau_bins)
    values = np.asarray(values, dtype=float)
    padded = np.concatenate([np.repeat(values[..., :1], w.size - 1, axis=-1), values], axis=-1)
    windows = np.lib.stride_tricks.sliding_window_view(padded, w.size, axis=-1)
    return windows @ w[::-1]
