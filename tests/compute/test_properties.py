"""Properties every per-level computation keeps (Hypothesis)."""

import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from figspec.spec.panels import LatencyPanel, LevelResponsePanel

from helpers import build_recording, panel, compute_panel

# generated trains often repeat one time many times: the warning about repeated spike rows is
# figspec working as it should, not what these properties test
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")

trains = st.lists(st.lists(st.floats(-0.1, 0.2, allow_nan=False), max_size=12), min_size=2, max_size=8)


@settings(max_examples=30, deadline=None)
@given(trains, st.randoms(use_true_random=False))
def test_row_order_of_the_spike_table_changes_no_result(spike_lists, shuffler):
    trials = [(i + 1, (i % 2) * 20, float(i), float(i) + 0.05) for i in range(len(spike_lists))]
    spikes = [("u1", i + 1, i + t) for i, train in enumerate(spike_lists) for t in train] + [("u1", 1, 9.0)]
    shuffled = spikes[:]
    shuffler.shuffle(shuffled)
    a, b = build_recording(spikes, trials), build_recording(shuffled, trials)
    lat = LatencyPanel.model_validate({"name": "l", "kind": "latency", "unit": "u1", "resamples": 200})
    resp = LevelResponsePanel.model_validate({"name": "r", "kind": "level_response", "unit": "u1", "resamples": 200})
    for compute in (lambda r: compute_panel(r, panel("raster")),
                    lambda r: compute_panel(r, panel("psth", bin_ms=10)),
                    lambda r: compute_panel(r, lat)["points"],
                    lambda r: compute_panel(r, resp)["points"]):
        pd.testing.assert_frame_equal(compute(a), compute(b))


@settings(max_examples=30, deadline=None)
@given(trains, st.integers(1, 4))
def test_adding_silent_trials_lowers_every_rate(spike_lists, extra):
    trials = [(i + 1, 20, float(i), float(i) + 0.05) for i in range(len(spike_lists))]
    spikes = [("u1", i + 1, i + t) for i, train in enumerate(spike_lists) for t in train] + [("u1", 1, 9.0)]
    more = trials + [(100 + j, 20, 100.0 + j, 100.05 + j) for j in range(extra)]
    p = panel("psth", bin_ms=10)
    before = compute_panel(build_recording(spikes, trials), p)["rate"].to_numpy()
    after = compute_panel(build_recording(spikes, more), p)["rate"].to_numpy()
    assert (after <= before).all() and ((after < before) | (before == 0)).all()
    assert after == pytest.approx(before * len(trials) / (len(trials) + extra))
