"""Data-driven bin width (Shimazaki & Shinomoto 2007) and Gaussian kernel bandwidth
(Shimazaki & Shinomoto 2010) for rate estimates pooled over trials."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Choice:
    """The chosen width, the candidates tried and their cost, and whether the minimum lies
    inside the candidates (``interior``); an edge minimum means no optimum was found."""

    best: float
    candidates: np.ndarray
    cost: np.ndarray
    interior: bool


def bin_cost(counts: np.ndarray, n_trials: int, width: float) -> float:
    """Shimazaki & Shinomoto (2007) cost C_n(D) = (2 k_mean - v) / (n D)^2 of a histogram with
    ``counts`` pooled over ``n_trials`` trials in bins of ``width``; v is the biased variance
    (divided by the number of bins)."""
    counts = np.asarray(counts, dtype=float)
    mean = counts.mean()
    var = ((counts - mean) ** 2).mean()
    return float((2 * mean - var) / (n_trials * width) ** 2)


def choose_bin_width(groups: list[tuple[np.ndarray, int]], window: tuple[float, float],
                     search: tuple[float, float]) -> Choice:
    """The bin width that minimises the summed 2007 cost over ``groups`` of (spike times,
    trials), among widths that divide ``window`` into whole bins and lie in ``search``."""
    length = window[1] - window[0]
    n_bins = np.arange(max(1, int(np.ceil(length / search[1]))), int(np.floor(length / search[0])) + 1)
    widths = length / n_bins
    cost = np.zeros(widths.size)
    for i, (n, width) in enumerate(zip(n_bins, widths)):
        for times, n_trials in groups:
            bins = np.clip(((times - window[0]) / width).astype(np.int64), 0, n - 1)
            cost[i] += bin_cost(np.bincount(bins, minlength=n), n_trials, width)
    order = np.argsort(widths)
    widths, cost = widths[order], cost[order]
    best = int(np.argmin(cost))
    return Choice(float(widths[best]), widths, cost, 0 < best < widths.size - 1)


def kernel_cost(times: np.ndarray, n_trials: int, widths: np.ndarray, resolution: float) -> np.ndarray:
    """Shimazaki & Shinomoto (2010) cost of a Gaussian kernel rate of SD ``w`` for each of
    ``widths``, from the spike times pooled over ``n_trials`` trials:

    C_n(w) = (1/n^2) [ sum_{i,j} psi_w(t_i - t_j) - 2 sum_{i != j} k_w(t_i - t_j) ],
    psi_w(d) = exp(-d^2 / 4w^2) / (2 sqrt(pi) w), k_w the Gaussian density of SD w.

    The pair sums are taken over the autocorrelation of the spike counts on a grid of
    ``resolution`` (same unit as times), so ties within one grid step count as distance 0.
    """
    times = np.asarray(times, dtype=float)
    if times.size < 2:
        return np.full(np.shape(widths), np.nan)
    start = times.min()
    grid = np.floor((times - start) / resolution).astype(np.int64)
    y = np.bincount(grid).astype(float)
    size = 1 << int(np.ceil(np.log2(2 * y.size)))
    spectrum = np.fft.rfft(y, size)
    auto = np.fft.irfft(spectrum * np.conj(spectrum), size)[: y.size]
    auto = np.rint(auto)                                    # pair counts at lag 0, 1, 2 ... steps
    lags = np.arange(y.size) * resolution
    weight = np.where(np.arange(y.size) == 0, 1.0, 2.0)     # lags +d and -d
    n_spikes = times.size
    out = np.empty(np.shape(widths))
    for i, w in enumerate(np.atleast_1d(widths)):
        psi = np.exp(-lags ** 2 / (4 * w * w)) / (2 * np.sqrt(np.pi) * w)
        k = np.exp(-lags ** 2 / (2 * w * w)) / (np.sqrt(2 * np.pi) * w)
        all_pairs_psi = np.sum(weight * auto * psi)
        off_diagonal_k = np.sum(weight * auto * k) - n_spikes * k[0]
        out[i] = (all_pairs_psi - 2 * off_diagonal_k) / n_trials ** 2
    return out


EXACT_PAIRS_LIMIT = 4000       # spikes per group up to which the cost is summed over exact pairs


def exact_kernel_cost(times: np.ndarray, n_trials: int, width: float) -> float:
    """The 2010 cost of :func:`kernel_cost` summed over every pair of spike times exactly (no
    grid): C = (1/n^2) [N psi(0) + 2 sum_{i<j} (psi(d_ij) - 2 k(d_ij))]."""
    t = np.sort(np.asarray(times, dtype=float))
    n_spikes = t.size
    if n_spikes < 2:
        return 0.0
    d = (t[None, :] - t[:, None])[np.triu_indices(n_spikes, 1)]
    psi = np.exp(-d * d / (4 * width * width)) / (2 * np.sqrt(np.pi) * width)
    k = np.exp(-d * d / (2 * width * width)) / (np.sqrt(2 * np.pi) * width)
    return float((n_spikes / (2 * np.sqrt(np.pi) * width) + 2 * np.sum(psi - 2 * k)) / n_trials ** 2)


def choose_bandwidth(groups: list[tuple[np.ndarray, int]], search: tuple[float, float],
                     resolution: float, candidates: int = 120) -> Choice:
    """The kernel SD minimising the summed 2010 cost over ``groups``: the cost on a log-spaced
    grid over ``search`` (pair sums on a ``resolution`` grid), then, around every local minimum
    of the grid, a bounded 1-D minimisation (scipy ``minimize_scalar``) of the exact pair-sum
    cost (where groups hold at most ``EXACT_PAIRS_LIMIT`` spikes; else of the gridded one); the
    lowest wins. Two near-equal grid minima are both refined, so gridding cannot pick the wrong one."""
    from scipy.optimize import minimize_scalar

    widths = np.geomspace(search[0], search[1], candidates)
    gridded = lambda ws: sum(np.nan_to_num(kernel_cost(t, n, ws, resolution)) for t, n in groups)  # noqa: E731
    cost = gridded(widths)
    best = int(np.argmin(cost))
    if not 0 < best < widths.size - 1:
        return Choice(float(widths[best]), widths, cost, False)
    exact = all(t.size <= EXACT_PAIRS_LIMIT for t, _ in groups)
    total = (lambda w: sum(exact_kernel_cost(t, n, w) for t, n in groups)) if exact else \
        (lambda w: float(gridded(np.array([w]))[0]))
    minima = [i for i in range(1, widths.size - 1) if cost[i] <= cost[i - 1] and cost[i] <= cost[i + 1]]
    found = []
    for i in minima:
        result = minimize_scalar(lambda lw: total(np.exp(lw)), bounds=(np.log(widths[i - 1]), np.log(widths[i + 1])),
                                 method="bounded", options={"xatol": 1e-7})
        found.append((float(result.fun), float(np.exp(result.x))))
    return Choice(min(found)[1], widths, cost, True)
