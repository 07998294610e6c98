import numpy as np
import pandas as pd
import pytest

from figspec.data.assemble import Layout, TrialCounts, assemble
from figspec.errors import DataError, FigspecWarning

from helpers import build_recording

TRIALS = [(1, 40, 1.0, 1.05), (2, 0, 2.0, 2.05), (3, 40, 3.0, 3.05), (4, 0, 4.0, 4.05)]


def test_trials_without_spikes_are_kept():
    rec = build_recording([("u1", 1, 1.01), ("u1", 3, 3.02)], TRIALS)
    assert rec.n_pairs == 4                           # trials 2 and 4 have no spike
    assert np.diff(rec.offsets).tolist() == [1, 0, 1, 0]


def test_levels_sort_numerically_not_as_text():
    trials = [(1, "9", 0, 1), (2, "10", 2, 3), (3, "100", 4, 5), (4, "-5", 6, 7)]
    rec = build_recording([("u1", 1, 0.1)], trials)
    assert rec.levels.tolist() == [-5.0, 9.0, 10.0, 100.0]


def test_times_are_aligned_to_onset_and_ms_converted_to_s():
    rec_s = build_recording([("u1", 1, 1.012)], TRIALS)
    ms_trials = [(t, lv, on * 1e3, off * 1e3) for t, lv, on, off in TRIALS]
    rec_ms = build_recording([("u1", 1, 1012.0)], ms_trials, time_unit="ms")
    assert rec_s.times_s == pytest.approx([0.012])
    assert rec_ms.times_s == pytest.approx([0.012])
    assert rec_ms.trials["stim_stop_ms"].tolist() == [50.0] * 4            # exact: integer ticks


def test_units_are_kept_apart():
    rec = build_recording([("u2", 1, 1.01), ("u10", 1, 1.03), ("u2", 3, 3.02)], TRIALS)
    assert rec.units == ("u2", "u10")                 # natural order
    per_unit = np.bincount(rec.pair_unit[rec.spike_pair()], minlength=2)
    assert per_unit.tolist() == [2, 1]
    assert rec.n_pairs == 8                           # every unit saw every trial


def test_spikes_are_sorted_within_each_trial():
    rec = build_recording([("u1", 1, 1.03), ("u1", 1, 1.01), ("u1", 1, 1.02)], TRIALS)
    assert rec.times_s == pytest.approx([0.01, 0.02, 0.03])


def test_spikes_of_unknown_trials_are_an_error_in_the_users_values():
    with pytest.raises(DataError) as info:
        build_recording([("u1", 1, 1.01), ("u1", 99, 9.0), ("u1", 98, 9.5), ("u1", 97, 9.6), ("u1", 96, 9.7)], TRIALS)
    [problem] = info.value.problems
    assert "4 spikes belong to 4 trial keys that are not in the trial table" in problem.message
    assert problem.got == "first: 99, 98, 97"


def test_non_numeric_level_is_a_data_error():
    with pytest.raises(DataError, match="levels must be finite numbers"):
        build_recording([("u1", 1, 0.1)], [(1, "loud", 0, 1)])


def test_duplicate_trial_ids_are_a_data_error():
    with pytest.raises(DataError, match="unique"):
        build_recording([("u1", 1, 0.1)], [(1, 0, 0, 1), (1, 10, 2, 3)])


def _no_trial_table(per_level):
    spikes = pd.DataFrame({"unit": "u1", "key0": [1, 2, 3], "time": [0.01, 0.02, 0.03],
                           "level": [0, 0, 20]})
    locs = {k: ("sources", "t", k) for k in ("unit", "key0", "time", "level", "onset", "offset")}
    return assemble(spikes, None, Layout(where="test", locs=locs,
                                         counts=TrialCounts(per_level, ("sources", "t", "trials_per_level"))))


def test_declared_trials_per_level_add_the_empty_trials():
    rec = _no_trial_table(5)
    assert rec.trials.to_frame().groupby("level").size().to_dict() == {0.0: 5, 20.0: 5}
    rec = _no_trial_table({"0": 2, "20": 4, "40": 3})
    assert rec.trials.to_frame().groupby("level").size().to_dict() == {0.0: 2, 20.0: 4, 40.0: 3}


def test_more_trials_with_spikes_than_declared_is_an_error():
    with pytest.raises(DataError, match="more than the 1 declared"):
        _no_trial_table(1)


def test_inferring_trials_from_spikes_warns_loudly():
    with pytest.warns(FigspecWarning, match="trials without any spike are missing"):
        rec = _no_trial_table(None)
    assert len(rec.trials) == 3


@pytest.mark.parametrize("assign", ["by_key", "by_time"])
def test_a_unit_whose_spikes_fall_in_no_trial_is_an_error_naming_it_and_the_likely_cause(assign):
    # u2's times were exported in ms but the source says s: on a session clock every one of them lands
    # hours after the last trial, while u1 is fine (so the whole-recording checks saw nothing wrong)
    trials = pd.DataFrame({"key0": [1, 2, 3], "level": [0.0, 40.0, 80.0], "onset": [0.1, 0.6, 1.1],
                           "start": [0.0, 0.5, 1.0], "stop": [0.5, 1.0, 1.5]})
    spikes = pd.DataFrame({"unit": ["u1", "u1", "u2", "u2", "u2"], "key0": [1, 3, 1, 2, 3],
                           "time": [0.12, 1.13, 120.0, 620.0, 1130.0]})
    if assign == "by_time":
        spikes = spikes.drop(columns="key0")
    layout = Layout(where="spikes.csv", locs={"time": ("sources", "s", "spike_columns", "time")}, clock="session",
                    assign=assign)
    with pytest.raises(DataError) as err:
        assemble(spikes, trials, layout)
    message = str(err.value)
    assert "no spike of unit 'u2'" in message and "(3 spikes)" in message and "time_unit = 's'" in message
    assert "u1" not in message
