from figspec.compute.stimulus import stimulus_table
from figspec.spec.models import StimulusSpec

from helpers import build_recording


def test_per_trial_windows_keep_the_range_of_stops():
    trials = [(1, 40, 0.0, 0.05), (2, 40, 1.0, 1.06), (3, 0, 2.0, 2.05)]
    rec = build_recording([("u1", 1, 0.01)], trials)
    table = stimulus_table(rec, "u1", StimulusSpec(per_trial=True)).set_index("level")
    assert table.loc[40.0, "stop_min_ms"] == 50.0 and table.loc[40.0, "stop_max_ms"] == 60.0
    assert table.loc[0.0, "n_trials"] == 1


def test_fixed_window():
    rec = build_recording([("u1", 1, 0.01)], [(1, 40, 0.0, 0.05)])
    table = stimulus_table(rec, "u1", StimulusSpec(start_ms=5, stop_ms=55))
    assert table[["start_ms", "stop_min_ms", "stop_max_ms"]].iloc[0].tolist() == [5.0, 55.0, 55.0]
