import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from figspec.compute.psth import bin_edges

from helpers import build_recording, panel, compute_panel

# generated spike trains often repeat one time many times: the warning about repeated spike rows
# is figspec working as it should, not what these tests are about
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")


def demo_like(rng, n_trials=12, levels=(0, 20, 40)):
    trials, spikes = [], []
    for i in range(n_trials * len(levels)):
        onset = 10.0 * i + 1.0
        trials.append((i + 1, levels[i % len(levels)], onset, onset + 0.05))
        for t in rng.uniform(-0.1, 0.2, rng.poisson(6)):
            spikes.append(("u1", i + 1, onset + t))
    return build_recording(spikes, trials), trials, spikes


def aligned_ms(trials, spikes, level):
    onset = {t: on for t, lv, on, _ in trials if lv == level}
    return np.array([(time - onset[t]) * 1e3 for _, t, time in spikes if t in onset])


def test_counts_equal_numpy_histogram(rng):
    # reference: numpy.histogram on the pooled spikes of each level (its last bin is closed,
    # ours half-open; random float times never land on the edge)
    rec, trials, spikes = demo_like(rng)
    table = compute_panel(rec, panel("psth", window_ms=(-50, 150), bin_ms=5, measure="count"))
    edges = bin_edges((-50, 150), 5)
    for level, rows in table.groupby("level"):
        expected, _ = np.histogram(aligned_ms(trials, spikes, level), edges)
        assert rows["count"].tolist() == expected.tolist()


def test_rate_is_count_over_trials_presented_times_width(rng):
    # rate = count / (n_trials x bin width): common practice (e.g. Dayan & Abbott 2001, Theoretical
    # Neuroscience, ch. 1, the trial-averaged rate), from memory
    rec, _, _ = demo_like(rng)
    table = compute_panel(rec, panel("psth", window_ms=(-50, 150), bin_ms=5))
    assert (table["n_trials"] == 12).all()
    assert table["rate"].to_numpy() == pytest.approx(table["count"] / (12 * 0.005))
    per_trial = compute_panel(rec, panel("psth", window_ms=(-50, 150), bin_ms=5, measure="spikes_per_trial"))
    assert per_trial["rate"].to_numpy() == pytest.approx(table["count"] / 12)
    assert set(per_trial["rate_unit"]) == {"spikes/trial"}


@pytest.mark.filterwarnings("ignore:The 'copy' argument in Quantity")
def test_rate_equals_elephant_time_histogram(rng):
    # reference: elephant.statistics.time_histogram(..., output='rate') (elephant 1.2, PyPI)
    neo = pytest.importorskip("neo")
    pq = pytest.importorskip("quantities")
    from elephant.statistics import time_histogram

    rec, trials, spikes = demo_like(rng)
    table = compute_panel(rec, panel("psth", window_ms=(-50, 150), bin_ms=5))
    for level, rows in table.groupby("level"):
        onset = {t: on for t, lv, on, _ in trials if lv == level}
        trains = []
        for t, on in onset.items():
            times = np.array([(time - on) * 1e3 for _, tt, time in spikes if tt == t])
            times = times[(times >= -50) & (times < 150)]
            trains.append(neo.SpikeTrain(times * pq.ms, t_start=-50 * pq.ms, t_stop=150 * pq.ms))
        ref = time_histogram(trains, 5 * pq.ms, output="rate").rescale("Hz").magnitude.ravel()
        assert rows["rate"].to_numpy() == pytest.approx(ref, rel=1e-12)


def test_a_trial_with_no_spikes_lowers_the_rate():
    spikes = [("u1", 1, 0.01), ("u1", 2, 1.012)]
    two = build_recording(spikes, [(1, 50, 0.0, 0.05), (2, 50, 1.0, 1.05)])
    three = build_recording(spikes, [(1, 50, 0.0, 0.05), (2, 50, 1.0, 1.05), (3, 50, 2.0, 2.05)])
    p = panel("psth", window_ms=(0, 20), bin_ms=10)
    r2, r3 = compute_panel(two, p)["rate"].to_numpy(), compute_panel(three, p)["rate"].to_numpy()
    assert r2.tolist() == [0.0, 100.0]            # 2 spikes in [10, 20) ms / (2 trials x 10 ms)
    assert r3 == pytest.approx(r2 * 2 / 3)


spike_times = st.lists(st.floats(-0.2, 0.3, allow_nan=False), max_size=30)


@settings(max_examples=60, deadline=None)
@given(st.lists(spike_times, min_size=1, max_size=6), st.sampled_from([1.0, 2.5, 5.0, 10.0]),
       st.randoms(use_true_random=False))
def test_properties_total_and_row_order(trains, bin_ms, shuffler):
    trials = [(i + 1, (i % 2) * 10, float(i), float(i) + 0.05) for i in range(len(trains))]
    spikes = [("u1", i + 1, i + t) for i, train in enumerate(trains) for t in train]
    spikes.append(("u1", 1, 5.0))  # outside the window; makes sure the unit exists
    p = panel("psth", window_ms=(-50, 150), bin_ms=bin_ms, measure="count")
    table = compute_panel(build_recording(spikes, trials), p)
    rec = build_recording(spikes, trials)
    aligned = rec.times_s * 1e3
    # total counts equal the spikes inside the half-open window
    assert table["count"].sum() == np.count_nonzero((aligned >= -50) & (aligned < 150))
    # the order of rows in the spike table changes nothing
    shuffled = spikes[:]
    shuffler.shuffle(shuffled)
    again = compute_panel(build_recording(shuffled, trials), p)
    pd.testing.assert_frame_equal(table, again)
