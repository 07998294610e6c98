import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import poisson

from figspec.compute.latency import first_spike_latency, surprise_latency, threshold_latency
from figspec.spec.panels import LatencyPanel

from helpers import build_recording

# generated spike trains often repeat one time many times: the warning about repeated spike rows
# is figspec working as it should, not what these tests are about
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")


def latency_panel(**keys):
    return LatencyPanel.model_validate({"name": "l", "kind": "latency", "unit": "u1", **keys})


def test_first_spike_median_and_trials_without_spike():
    trials = [(i, 40, float(i), float(i) + 0.05) for i in range(1, 6)]
    spikes = [("u1", 1, 1.010), ("u1", 1, 1.004), ("u1", 2, 2.020), ("u1", 3, 3.030),
              ("u1", 4, 3.9)]                                  # trial 4: only a pre-stimulus spike
    table = first_spike_latency(build_recording(spikes, trials), "u1", latency_panel(response_ms=(0, 50)))
    row = table.iloc[0]
    assert row["latency_ms"] == pytest.approx(20.0)            # median of 4, 20, 30 ms
    assert row["n_no_spike"] == 2 and row["n_trials"] == 5    # trials 4 and 5 are not 0-ms latencies
    assert row["ci_low_ms"] <= 20.0 <= row["ci_high_ms"]


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(0.5, 49.5), min_size=2, max_size=12), st.integers(1, 5))
def test_adding_silent_trials_changes_only_the_no_spike_count(latencies_ms, extra):
    trials = [(i + 1, 40, float(i), float(i) + 0.05) for i in range(len(latencies_ms))]
    spikes = [("u1", i + 1, i + t / 1e3) for i, t in enumerate(latencies_ms)]
    more = trials + [(len(trials) + j + 1, 40, 100.0 + j, 100.05 + j) for j in range(extra)]
    p = latency_panel(response_ms=(0, 50))
    a = first_spike_latency(build_recording(spikes, trials), "u1", p).iloc[0]
    b = first_spike_latency(build_recording(spikes, more), "u1", p).iloc[0]
    assert b["latency_ms"] == a["latency_ms"]
    assert (b["ci_low_ms"], b["ci_high_ms"]) == (a["ci_low_ms"], a["ci_high_ms"])
    assert b["n_no_spike"] == a["n_no_spike"] + extra


def test_threshold_crossing_finds_the_onset_bin(rng):
    trials, spikes = [], []
    for i in range(40):
        trials.append((i, 60, float(i), float(i) + 0.05))
        for t in rng.uniform(-0.05, 0.05, rng.poisson(2)):     # 20 spikes/s background
            spikes.append(("u1", i, i + t))
        for t in rng.uniform(0.012, 0.030, 4):                 # response from 12 ms
            spikes.append(("u1", i, i + t))
    p = latency_panel(method="threshold", bin_ms=2, threshold_sd=3, threshold_bins=2,
                      response_ms=(0, 50), baseline_ms=(-50, 0))
    row = threshold_latency(build_recording(spikes, trials), "u1", p).iloc[0]
    assert row["latency_ms"] == 12.0


def test_threshold_reports_no_crossing():
    trials = [(i, 60, float(i), float(i) + 0.05) for i in range(5)]
    spikes = [("u1", i, i - 0.02) for i in range(5)] + [("u1", 0, 0.01)]
    p = latency_panel(method="threshold", bin_ms=5, threshold_bins=3, response_ms=(0, 50))
    row = threshold_latency(build_recording(spikes, trials), "u1", p).iloc[0]
    assert np.isnan(row["latency_ms"]) and "no run of 3 bins" in row["note"]


def test_surprise_matches_the_poisson_tail_by_hand():
    # Legendy & Salcman 1985: S = -log10 P(N >= k), N ~ Poisson(r n t); P from scipy.stats.poisson.sf
    trials = [(i, 60, float(i), float(i) + 0.05) for i in range(10)]
    baseline = [("u1", i, i - 0.025) for i in range(10)]       # 1 spike per 50 ms: r = 20 spikes/s
    evoked = [("u1", i, i + 0.010 + 0.0001 * i) for i in range(10)]
    p = latency_panel(method="surprise", surprise=3.0, response_ms=(0, 50), baseline_ms=(-50, 0))
    row = surprise_latency(build_recording(baseline + evoked, trials), "u1", p).iloc[0]
    times = 10.0 + 0.1 * np.arange(10)                          # ms, pooled over the 10 trials
    s = -np.log10(poisson.sf(np.arange(10), 20 * 10 * times / 1e3))
    expected = times[np.flatnonzero(s >= 3.0)[0]]
    assert row["latency_ms"] == pytest.approx(expected)
