"""Fit intervals: coverage in seeded simulations, the vectorised refits against scipy, the
interval rules against scipy.stats.bootstrap."""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats
from scipy.optimize import approx_fprime
from scipy.optimize import least_squares as scipy_least_squares

from figspec.compute.batch_fit import jacobian, refit_all
from figspec.compute.decibels import to_linear
from figspec.compute.fit_tables import UnitPoints, bias_corrected_interval, bootstrap, fit_unit, percentile_interval
from figspec.compute.fits import naka_rushton, setup
from figspec.errors import FigspecWarning

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


# Contrast-style levels: linear, with a level of 0 (contrast 0 %, a sham); and log-spaced levels with
# 0, as a log level axis shows them (mPa with silence). Both fitted on the linear quantity.
CONTRAST = np.array([0, 2, 4, 8, 16, 32, 64, 100.0])
LOG_SPACED = np.array([0, 1, 2, 5, 10, 20, 50, 100, 200.0])


@pytest.mark.parametrize("levels, truth, measured", [
    (CONTRAST, (5.0, 80.0, 20.0, 2.0), "0.90 0.885 0.91 0.925"),
    (LOG_SPACED, (3.0, 60.0, 15.0, 1.5), "0.895 0.91 0.90 0.925"),
])
def test_naka_rushton_intervals_with_a_level_of_0_on_a_linear_scale_cover_the_truth(levels, truth, measured):
    # 200 seeded simulations, Poisson counts, 20 trials per level, 50-ms window. A level of 0 used to
    # give every refit a NaN Jacobian, so every interval collapsed onto its estimate (coverage near 0).
    covered = np.zeros(4)
    for s in range(200):
        rng = np.random.default_rng(7000 + s)
        values = [rng.poisson(m, 20) / 0.05 for m in hill(levels, *truth) * 0.05]
        data = UnitPoints(levels, values, np.array([v.mean() for v in values]), np.mean, np.full(levels.size, 1.0))
        result, _ = fit_unit("naka_rushton", data, "linear", 0.95, 200, s, "u")
        covered += (result.ci_low <= truth) & (np.asarray(truth) <= result.ci_high)
    assert np.all(covered / 200 >= 0.85), (covered / 200, "measured:", measured)


@pytest.mark.parametrize("scale, levels", [("linear", CONTRAST), ("linear", LOG_SPACED), ("pressure_db", LEVELS),
                                           ("power_db", LEVELS)])
def test_the_naka_rushton_jacobian_equals_finite_differences_at_every_level_including_0(scale, levels):
    # reference: scipy.optimize.approx_fprime (forward differences) of the model itself
    f, _ = naka_rushton(levels, scale)
    p = np.array([4.0, 70.0, 20.0 if scale == "linear" else 40.0, 1.7])
    ours = jacobian("naka_rushton", scale, levels, p[None, :])[0]
    assert np.all(np.isfinite(ours))
    for j, level in enumerate(levels):
        ref = approx_fprime(p, lambda q: f(np.array([level]), *q)[0], 1e-7)
        assert ours[j] == pytest.approx(ref, rel=1e-4, abs=1e-5)


@pytest.mark.parametrize("model, truth, scale, levels", [
    ("naka_rushton", (5.0, 100.0, 40.0, 1.5), "pressure_db", LEVELS),
    ("pieron", (6.0, 20.0, 0.35), "pressure_db", LEVELS),
    ("naka_rushton", (5.0, 80.0, 20.0, 2.0), "linear", CONTRAST),
])
def test_vectorised_refits_equal_scipy_least_squares_sample_by_sample(rng, model, truth, scale, levels):
    # reference: scipy.optimize.least_squares (trust region reflective) on each sample alone
    if model == "naka_rushton":
        x50 = 10 ** (truth[2] / 20) if scale == "pressure_db" else truth[2]
        clean = hill(to_linear(levels, scale), truth[0], truth[1], x50, truth[3])
    else:
        clean = truth[0] + truth[1] * to_linear(levels, scale) ** -truth[2]
    y = clean + rng.normal(0, 0.05 * clean.mean(), (30, levels.size))
    sigma = np.full_like(y, 0.05 * clean.mean())
    f, _, _, bounds = setup(model, levels, clean, scale)
    ours = refit_all(f, model, scale, levels, y, sigma, np.array(truth), bounds)
    assert np.isfinite(ours).all()
    for row, s, mine in zip(y, sigma, ours):
        ref = scipy_least_squares(lambda q: (f(levels, *q) - row) / s, np.array(truth), bounds=bounds, method="trf",
                                  xtol=1e-12, ftol=1e-12, gtol=1e-12).x
        assert mine == pytest.approx(ref, rel=1e-4, abs=1e-6)


def test_a_refit_that_cannot_move_is_counted_as_failed_not_returned_as_the_estimate():
    # a model whose Jacobian is NaN everywhere cannot take a step: every refit must fail
    f, _, _, bounds = setup("naka_rushton", CONTRAST, hill(CONTRAST, 5, 80, 20, 2), "linear")
    y = hill(CONTRAST, 5, 80, 20, 2) + np.random.default_rng(0).normal(0, 3, (20, CONTRAST.size))
    import figspec.compute.batch_fit as batch_fit

    real = batch_fit.jacobian
    try:
        batch_fit.jacobian = lambda *a: real(*a) * np.nan
        out = refit_all(f, "naka_rushton", "linear", CONTRAST, y, None, np.array([5.0, 80.0, 20.0, 2.0]), bounds)
    finally:
        batch_fit.jacobian = real
    assert np.isnan(out).all()


@settings(max_examples=25, deadline=None)
@given(rmax=st.floats(10, 150), x50=st.floats(3, 60), n=st.floats(0.7, 3.5), trials=st.integers(8, 30),
       seed=st.integers(0, 2 ** 31), with_zero=st.booleans())
def test_intervals_have_positive_width_whenever_the_resampled_data_vary(rmax, x50, n, trials, seed, with_zero):
    levels = CONTRAST if with_zero else CONTRAST[1:]
    rng = np.random.default_rng(seed)
    values = [rng.poisson(m, trials) / 0.05 for m in hill(levels, 4.0, rmax, x50, n) * 0.05]
    data = UnitPoints(levels, values, np.array([v.mean() for v in values]), np.mean,
                      np.full(levels.size, 1 / trials / 0.05))
    result, refits = fit_unit("naka_rushton", data, "linear", 0.95, 100, seed, "u")
    if not result.drawn or not any(np.ptp(v) > 0 for v in values):
        return
    # the refits themselves move: not one of them is the estimate returned unchanged
    assert not np.any(np.all(refits == result.estimate, axis=1))
    for i, name in enumerate(result.names):
        if np.isfinite(result.ci_low[i]):
            assert result.ci_high[i] > result.ci_low[i], name
        else:                        # no interval: said, and the fit is not ok
            assert result.status != "ok" and any("no interval" in r for r in result.reasons), name


def test_the_share_of_failed_refits_is_counted_in_the_parameter_table():
    from types import SimpleNamespace

    from figspec.compute.fit_tables import fit_tables
    from figspec.spec.models import LevelSpec

    rng = np.random.default_rng(4)
    values = [rng.poisson(m, 20) / 0.05 for m in hill(CONTRAST, 5, 80, 20, 2) * 0.05]
    data = UnitPoints(CONTRAST, values, np.array([v.mean() for v in values]), np.mean, np.full(CONTRAST.size, 1.0))
    panel = SimpleNamespace(confidence=0.95, fit_resamples=200, seed=0, level_axis="linear")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FigspecWarning)          # whatever its status: the counts are the point
        _, params = fit_tables({"u": data}, "response", "naka_rushton", LevelSpec(unit="%", scale="linear"), panel,
                               "spikes/s", "weighted")
    rows = {r[2]: r for r in params}
    succeeded = int(rows["refits_succeeded"][3])
    assert 180 <= succeeded <= 200 and f"{200 - succeeded} failed" in rows["refits_succeeded"][7]
    assert f"{succeeded} of 200 refits succeeded" in rows["x50"][7]
    assert rows["x50"][5] > rows["x50"][4]


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
