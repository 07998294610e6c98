import numpy as np
import pytest
from scipy import stats
from scipy.ndimage import gaussian_filter1d


from helpers import build_recording, panel, compute_panel


def recording(rng, units=("u1",), n=30):
    trials, spikes = [], []
    for i in range(n):
        trials.append((i, 50, float(i), float(i) + 0.05))
        for u in units:
            for t in rng.uniform(-0.05, 0.15, rng.poisson(6)):
                spikes.append((u, i, i + t))
    return build_recording(spikes, trials)


def test_z_score_uses_pre_stimulus_bins(rng):
    rec = recording(rng)
    rate = compute_panel(rec, panel("psth", bin_ms=10))["rate"].to_numpy()
    z = compute_panel(rec, panel("psth", bin_ms=10, measure="z_score"))["rate"].to_numpy()
    base = rate[:5]                                           # bins [-50, 0)
    assert z == pytest.approx((rate - base.mean()) / base.std(ddof=1))


def test_gaussian_smoothing_of_the_rate_equals_scipy(rng):
    # reference: scipy.ndimage.gaussian_filter1d (mode='reflect') applied to the unsmoothed rate
    rec = recording(rng)
    raw = compute_panel(rec, panel("psth", bin_ms=2))["rate"].to_numpy()
    smooth = compute_panel(rec, panel("psth", bin_ms=2, smooth="gaussian", kernel_ms=5))["rate"].to_numpy()
    np.testing.assert_allclose(smooth, gaussian_filter1d(raw, 2.5, mode="reflect"), rtol=1e-12)


def test_population_is_mean_and_sem_across_units(rng):
    rec = recording(rng, units=("u1", "u2", "u3"))
    p = panel("psth", bin_ms=10, unit=None, units=["u1", "u2", "u3"])
    pop = compute_panel(rec, p)
    singles = np.vstack([compute_panel(rec, panel("psth", bin_ms=10, unit=u))["rate"] for u in ("u1", "u2", "u3")])
    assert pop["rate"].to_numpy() == pytest.approx(singles.mean(axis=0))
    assert pop["rate_sem"].to_numpy() == pytest.approx(stats.sem(singles, axis=0))   # scipy.stats.sem, ddof=1
    assert set(pop["n_units"]) == {3} and pop["unit"].iloc[0] == "mean of u1, u2, u3"


def test_auto_bin_width_is_reported_in_the_edges(rng):
    trials, spikes = [], []
    for i in range(300):
        trials.append((i, 50, float(i), float(i) + 0.05))
        times = np.r_[rng.uniform(-0.05, 0.15, rng.poisson(3)), rng.normal(0.02, 0.004, rng.poisson(5))]
        spikes += [("u1", i, i + t) for t in times]
    table = compute_panel(build_recording(spikes, trials), panel("psth", bin_ms="auto"))
    widths = (table["bin_stop_ms"] - table["bin_start_ms"]).round(9).unique()
    assert len(widths) == 1 and 1.0 <= widths[0] <= 50.0
