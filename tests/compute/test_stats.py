import numpy as np
import pytest
from scipy import stats

from figspec.compute.stats import bootstrap_ci, holm, sem


def test_holm_hand_worked_example():
    # Holm 1979, Scand J Statist 6:65. p = (0.01, 0.04, 0.03, 0.005), m = 4. Ascending: 0.005 x 4 =
    # 0.02; 0.01 x 3 = 0.03; 0.03 x 2 = 0.06; 0.04 x 1 = 0.04, raised to the running maximum 0.06.
    assert holm([0.01, 0.04, 0.03, 0.005]) == pytest.approx([0.03, 0.06, 0.06, 0.02])


def test_holm_skips_untested_levels_and_caps_at_one():
    out = holm([np.nan, 0.2, 0.9])
    assert np.isnan(out[0]) and out[1:] == pytest.approx([0.4, 0.9])
    assert holm([0.6, 0.7]) == pytest.approx([1.0, 1.0])


def test_sem_equals_scipy(rng):
    # reference: scipy.stats.sem (ddof = 1)
    values = rng.poisson(4, 25)
    assert sem(values) == pytest.approx(stats.sem(values))


def _reference_ci(values, statistic):
    # reference: scipy.stats.bootstrap(method='percentile'); other resamples than ours, so the
    # bounds agree within Monte Carlo error only (10 000 resamples each)
    return stats.bootstrap((values,), statistic, confidence_level=0.95, n_resamples=10_000,
                           method="percentile", rng=np.random.default_rng(2)).confidence_interval


def test_percentile_bootstrap_of_the_mean_agrees_with_scipy(rng):
    values = rng.gamma(2.0, 5.0, 60)
    ours = bootstrap_ci(values, np.mean, 0.95, 10_000, np.random.default_rng(1))
    ref = _reference_ci(values, np.mean)
    width = ref.high - ref.low
    assert ours[0] == pytest.approx(ref.low, abs=0.05 * width)
    assert ours[1] == pytest.approx(ref.high, abs=0.05 * width)


def test_percentile_bootstrap_of_the_median_agrees_with_scipy(rng):
    # bootstrap medians of 61 values are order statistics (or midpoints of two), so the bounds
    # are compared by rank in the sorted sample: at most one position apart
    values = np.sort(rng.gamma(2.0, 5.0, 61))
    ours = bootstrap_ci(values, np.median, 0.95, 10_000, np.random.default_rng(1))
    ref = _reference_ci(values, np.median)
    for a, b in zip(ours, (ref.low, ref.high)):
        assert abs(np.searchsorted(values, a) - np.searchsorted(values, b)) <= 1
