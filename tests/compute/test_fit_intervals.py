"""Fit intervals: coverage in seeded simulations, the vectorised refits against scipy, the
interval rules against scipy.stats.bootstrap."""

import numpy as np
import pytest
from scipy import stats
from scipy.optimize import least_squares as scipy_least_squares

from figspec.compute.batch_fit import refit_all
from figspec.compute.decibels import to_linear
from figspec.compute.fit_tables import UnitPoints, bias_corrected_interval, fit_unit, percentile_interval
from figspec.compute.fits import setup

LEVELS = np.arange(0.0, 81.0, 10.0)
X = to_linear(LEVELS, "pressure_db")


def hill(x, r0, rmax, x50, n):
    # Naka & Rushton 1966 / Hill 1910 on the linear quantity x
    return r0 + rmax * x ** n / (x ** n + x50 ** n)


def test_naka_rushton_intervals_cover_the_truth_in_at_least_90_percent_of_200_simulations():
    # Poisson spike counts per trial (20 trials per level, 50-ms window) from known parameters
    truth = np.array([5.0, 100.0, 40.0, 1.5])                   # R0, Rmax (spikes/s), L50 (dB), n
    covered = np.zeros(4)
    for s in range(200):
        rng = np.random.default_rng(1000 + s)
        values = [rng.poisson(m, 20) / 0.05 for m in hill(X, 5, 100, 10 ** (40 / 20), 1.5) * 0.05]
        data = UnitPoints(LEVELS, values, np.array([v.mean() for v in values]), np.mean, np.full(9, 1 / 20 / 0.05))
        result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 200, s, "u")
        covered += (result.ci_low <= truth) & (truth <= result.ci_high)
    assert np.all(covered / 200 >= 0.90), covered / 200            # measured: 0.935 0.925 0.95 0.945


def test_pieron_intervals_cover_the_truth_in_at_least_90_percent_of_200_simulations():
    # first-spike latencies t0 + k x^(-beta) plus normal jitter (SD 2 ms), 25 trials per level
    truth = np.array([6.0, 20.0, 0.35])
    covered = np.zeros(3)
    for s in range(200):
        rng = np.random.default_rng(5000 + s)
        values = [m + rng.normal(0, 2.0, 25) for m in 6.0 + 20.0 * X ** -0.35]
        data = UnitPoints(LEVELS, values, np.array([np.median(v) for v in values]), np.median, None)
        result, _ = fit_unit("pieron", data, "pressure_db", 0.95, 200, s, "u")
        covered += (result.ci_low <= truth) & (truth <= result.ci_high)
    assert np.all(covered / 200 >= 0.90), covered / 200            # measured: 0.92 0.96 0.97


def test_a_midpoint_the_data_cannot_constrain_is_never_ok():
    for s in range(20):
        rng = np.random.default_rng(s)
        values = [rng.poisson(m, 20) / 0.05 for m in hill(X, 5, 200, 10 ** (100 / 20), 1.5) * 0.05]
        data = UnitPoints(LEVELS, values, np.array([v.mean() for v in values]), np.mean, np.full(9, 1 / 20 / 0.05))
        result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 200, s, "u")
        assert result.status != "ok"


@pytest.mark.parametrize("model, truth", [("naka_rushton", (5.0, 100.0, 40.0, 1.5)), ("pieron", (6.0, 20.0, 0.35))])
def test_vectorised_refits_equal_scipy_least_squares_sample_by_sample(rng, model, truth):
    # reference: scipy.optimize.least_squares (trust region reflective) on each sample alone
    if model == "naka_rushton":
        clean = hill(X, truth[0], truth[1], 10 ** (truth[2] / 20), truth[3])
    else:
        clean = truth[0] + truth[1] * X ** -truth[2]
    y = clean + rng.normal(0, 0.05 * clean.mean(), (30, LEVELS.size))
    sigma = np.full_like(y, 0.05 * clean.mean())
    f, _, _, bounds = setup(model, LEVELS, clean, "pressure_db")
    ours = refit_all(f, model, "pressure_db", LEVELS, y, sigma, np.array(truth), bounds)
    for row, s, mine in zip(y, sigma, ours):
        ref = scipy_least_squares(lambda q: (f(LEVELS, *q) - row) / s, np.array(truth), bounds=bounds, method="trf",
                                  xtol=1e-12, ftol=1e-12, gtol=1e-12).x
        assert mine == pytest.approx(ref, rel=1e-4, abs=1e-6)


def test_interval_rules_match_scipy_bootstrap_on_a_worked_example():
    # reference: scipy.stats.bootstrap on its own bootstrap distribution. For the mean of data
    # symmetric about their mean the jackknife acceleration is exactly 0, so scipy's BCa interval
    # is the bias-corrected one (Efron & Tibshirani 1993, ch. 14).
    values = np.array([-4.0, -2.5, -1.0, -0.5, 0.5, 1.0, 2.5, 4.0]) + 10.0
    for method, ours in (("BCa", bias_corrected_interval), ("percentile", percentile_interval)):
        res = stats.bootstrap((values,), np.mean, confidence_level=0.95, n_resamples=4000, method=method,
                              rng=np.random.default_rng(3))
        dist = res.bootstrap_distribution[:, None]
        low, high = ours(dist, np.array([values.mean()]), 0.95)
        width = res.confidence_interval.high - res.confidence_interval.low
        assert low[0] == pytest.approx(res.confidence_interval.low, abs=0.01 * width)
        assert high[0] == pytest.approx(res.confidence_interval.high, abs=0.01 * width)
