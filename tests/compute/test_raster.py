import numpy as np


from helpers import build_recording, panel, compute_panel

TRIALS = [(1, 40, 0.0, 0.05), (2, 0, 1.0, 1.05), (3, 40, 2.0, 2.05), (4, 0, 3.0, 3.05)]


def test_every_spike_in_window_and_every_empty_trial_has_a_row():
    spikes = [("u1", 1, 0.010), ("u1", 1, -0.2), ("u1", 3, 2.02), ("u1", 3, 2.01), ("u2", 2, 1.0)]
    table = compute_panel(build_recording(spikes, TRIALS), panel("raster", window_ms=(-50, 150)))
    spikes_rows = table.dropna(subset=["time_ms"])
    assert sorted(spikes_rows["time_ms"].round(6)) == [10.0, 10.0, 20.0]
    empty = table[table["time_ms"].isna()]
    assert sorted(empty["trial"]) == [2, 4]            # u1 fired in neither
    assert table.groupby("level")["row"].max().to_dict() == {0.0: 1, 40.0: 1}


def test_rows_follow_presentation_order_within_a_level():
    spikes = [("u1", 3, 2.01), ("u1", 1, 0.03)]
    table = compute_panel(build_recording(spikes, TRIALS), panel("raster"))
    at40 = table[table["level"] == 40].set_index("trial")["row"]
    assert at40[1] == 0 and at40[3] == 1


def test_spike_at_the_window_stop_is_left_out():
    table = compute_panel(build_recording([("u1", 1, 0.150), ("u1", 1, 0.1499)], TRIALS),
                         panel("raster", window_ms=(-50, 150), levels=[40]))
    assert np.count_nonzero(table["time_ms"].notna()) == 1
