import numpy as np
import pandas as pd
import pytest
from scipy import stats

from figspec.compute.level_response import response_points
from figspec.spec.panels import LevelResponsePanel

from helpers import build_recording


# scipy.stats.wilcoxon's zero_method values (scipy docs): "wilcox" drops zero differences
# (Wilcoxon 1945), "pratt" ranks them then drops them (Pratt 1959), "zsplit" splits their ranks
SCIPY_ZERO_METHOD = {"drop": "wilcox", "keep": "pratt", "split": "zsplit"}


def response_panel(**keys):
    return LevelResponsePanel.model_validate({"name": "r", "kind": "level_response", "unit": "u1", **keys})


def synthetic(rng, levels=(0, 20, 40, 60), n=20):
    trials, spikes = [], []
    for i in range(len(levels) * n):
        level = levels[i % len(levels)]
        trials.append((i, level, float(i), float(i) + 0.05))
        for t in rng.uniform(-0.05, 0.0, rng.poisson(1.0)):
            spikes.append(("u1", i, i + t))
        for t in rng.uniform(0.0, 0.05, rng.poisson(1.0 + level / 10)):
            spikes.append(("u1", i, i + t))
    return build_recording(spikes, trials), trials, spikes


def raw_counts(trials, spikes, window_s):
    frame = pd.DataFrame(spikes, columns=["unit", "trial", "time"])
    onset = {t: on for t, _, on, _ in trials}
    rel = frame["time"] - frame["trial"].map(onset)
    inside = frame[(rel >= window_s[0]) & (rel < window_s[1])]
    return inside.groupby("trial").size().reindex([t for t, *_ in trials], fill_value=0).to_numpy()


@pytest.mark.parametrize("zero_differences", ["drop", "keep", "split"])
def test_p_values_equal_scipy_wilcoxon_on_per_trial_counts(rng, zero_differences):
    # reference: scipy.stats.wilcoxon(evoked, baseline, alternative='greater', zero_method=...)
    rec, trials, spikes = synthetic(rng)
    table = response_points(rec, response_panel(measure="count", zero_differences=zero_differences))
    evoked, base = raw_counts(trials, spikes, (0, 0.05)), raw_counts(trials, spikes, (-0.05, 0))
    level = np.array([lv for _, lv, *_ in trials])
    for _, row in table.iterrows():
        at = level == row["level"]
        ref = stats.wilcoxon(evoked[at], base[at], alternative="greater",
                             zero_method=SCIPY_ZERO_METHOD[zero_differences])
        assert row["p"] == pytest.approx(ref.pvalue, rel=1e-12)
        assert row["response"] == pytest.approx(evoked[at].mean())
        assert row["error_high"] - row["response"] == pytest.approx(stats.sem(evoked[at]))


def test_holm_and_significance(rng):
    rec, _, _ = synthetic(rng)
    table = response_points(rec, response_panel())
    assert (table["p_corrected"] >= table["p"]).all()  # a family-wise correction never lowers a p-value
    assert table.iloc[-1]["significant"]        # 60 dB: 7 evoked vs 1 baseline spike per trial
    strict = response_points(rec, response_panel(alpha=1e-12))
    assert not strict["significant"].any()      # alpha is the spec's, not a constant


def test_rate_and_baseline_subtraction_units(rng):
    rec, trials, spikes = synthetic(rng)
    counts = response_points(rec, response_panel(measure="count"))
    rates = response_points(rec, response_panel(subtract_baseline=True))
    expected = (counts["response"] - counts["baseline"]) / 0.05
    assert rates["response"].to_numpy() == pytest.approx(expected.to_numpy())
    assert set(rates["response_unit"]) == {"spikes/s"}


def test_trials_without_spikes_count_as_zero(rng):
    trials = [(1, 40, 0.0, 0.05), (2, 40, 1.0, 1.05)]
    table = response_points(build_recording([("u1", 1, 0.01)], trials), response_panel(measure="count",
                                                                                       test="none"))
    assert table.iloc[0]["response"] == 0.5 and table.iloc[0]["n_trials"] == 2


def test_bootstrap_error_brackets_the_mean(rng):
    rec, _, _ = synthetic(rng)
    table = response_points(rec, response_panel(error="bootstrap", resamples=500))
    assert ((table["error_low"] <= table["response"]) & (table["response"] <= table["error_high"])).all()
    assert table["error_kind"].str.contains("bootstrap").all()


def test_counts_need_equal_windows_but_rates_may_compare_any(rng):
    with pytest.raises(ValueError, match="equally long"):
        response_panel(measure="count", response_ms=(0, 50), baseline_ms=(-30, 0))
    rec, trials, spikes = synthetic(rng)
    table = response_points(rec, response_panel(response_ms=(0, 50), baseline_ms=(-30, 0), subtract_baseline=True))
    evoked, base = raw_counts(trials, spikes, (0.0, 0.05)), raw_counts(trials, spikes, (-0.03, 0.0))
    # reference: numpy means of per-trial rates, count / window length in s, for each window
    for level, rows in table.groupby("level"):
        at = [i for i, t in enumerate(trials) if t[1] == level]
        assert rows["response"].iloc[0] == pytest.approx(np.mean(evoked[at] / 0.05 - base[at] / 0.03))
