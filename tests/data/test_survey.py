"""Column recognition and the time-unit and clock guesses of figspec.data.survey, on tables of
our own in the layouts labs write (the values are invented for these tests)."""

from __future__ import annotations

import pytest

from figspec.data.survey import Table, match_role, read_any, survey
from figspec.data.survey_read import sniff_delimiter
from figspec.errors import DataError
from helpers import invented_tables as _recording


def _table(frame, name="t.csv"):
    from pathlib import Path

    return Table(Path(name), "csv", frame)


def test_roles_are_recognised_by_name_without_their_unit_suffix():
    columns = ["Cluster_ID", "Spike_Time_ms", "Trial No", "dB SPL"]
    assert match_role(columns, "unit", set()) == ["Cluster_ID"]
    assert match_role(columns, "time", set()) == ["Spike_Time_ms"]
    assert match_role(columns, "trial", set()) == ["Trial No"]
    assert match_role(columns, "level", set()) == ["dB SPL"]


def test_session_clock_in_seconds_without_suffixes(rng):
    spikes, trials = _recording(rng)
    s = survey(_table(spikes), _table(trials))
    assert s.time_unit.value == "s" and s.time_unit.question is None   # trials of 0.5: s, not ms
    assert s.clock.value == "session"
    assert s.trial_columns["trial"].value == "trial"
    assert s.stimulus_ms == pytest.approx(50.0)
    assert s.before_ms == pytest.approx(100.0, abs=0.1) and s.after_ms == pytest.approx(395.0, abs=5.1)
    assert s.levels == [(0.0, 10), (20.0, 10), (40.0, 10), (60.0, 10)]


def test_trial_clock_in_ms_with_numbers_restarting_per_level(rng):
    spikes, trials = _recording(rng, "ms", "trial", restart=True)
    s = survey(_table(spikes), _table(trials))
    assert s.time_unit.value == "ms"          # trials of 500: ms
    assert s.clock.value == "trial"
    assert s.trial_columns["trial"].value == ["level_db", "trial"]
    assert s.spike_columns["trial"].value == ["level_db", "trial"]


def test_an_ambiguous_trial_length_becomes_a_question(rng):
    spikes, trials = _recording(rng)
    for frame in (spikes, trials):      # trials of 5 (s or ms?)
        for column in frame.columns:
            if column in ("time", "onset", "offset", "start", "stop"):
                frame[column] *= 10
    s = survey(_table(spikes), _table(trials))
    assert s.time_unit.question and "s or in ms" in s.time_unit.question
    assert s.time_unit.question in s.questions


def test_a_name_suffix_wins_but_contradicting_values_are_questioned(rng):
    spikes, trials = _recording(rng, "ms", names={"time": "time_s", "onset": "onset_s", "offset": "offset_s",
                                                  "start": "start_s", "stop": "stop_s"})
    s = survey(_table(spikes), _table(trials))
    assert s.time_unit.value == "s"                      # the name says s ...
    assert "really in s" in s.time_unit.question         # ... but a trial of 500 s is odd


def test_a_spike_table_without_trial_column_is_assigned_by_time(rng):
    spikes, trials = _recording(rng)
    s = survey(_table(spikes.drop(columns="trial")), _table(trials))
    assert s.clock.value == "session" and "trial" not in s.spike_columns


def test_string_unit_ids_are_counted_most_spikes_first(rng):
    spikes, trials = _recording(rng)
    spikes.loc[spikes.index[:5], "unit"] = "tetrode 2 / cluster 11"
    s = survey(_table(spikes), _table(trials))
    assert s.units[0][0] == "u7" and ("tetrode 2 / cluster 11", 5) in s.units


def test_no_unit_column_is_a_data_error_naming_the_file(rng):
    spikes, trials = _recording(rng)
    with pytest.raises(DataError, match="no column looks like the unit"):
        survey(_table(spikes.rename(columns={"unit": "xyz"})), _table(trials))


def test_delimiters_and_parquet_are_read_by_content(tmp_path, rng):
    spikes, _ = _recording(rng)
    spikes.to_csv(tmp_path / "a.txt", sep="\t", index=False)
    assert sniff_delimiter(tmp_path / "a.txt") == "\t"
    assert list(read_any(tmp_path / "a.txt").frame.columns) == list(spikes.columns)
    pytest.importorskip("pyarrow")
    spikes.to_parquet(tmp_path / "a.bin", index=False)     # by content, not by its name
    assert read_any(tmp_path / "a.bin").format == "parquet"


def test_an_attenuation_column_is_questioned(rng):
    spikes, trials = _recording(rng, names={"level": "atten_db"})
    s = survey(_table(spikes), _table(trials))
    assert s.trial_columns["level"].value == "atten_db"
    assert "wrong way" in s.level_unit.question and s.level_unit.question in s.questions


def test_a_trial_clock_without_start_uses_the_stimulus_length(rng):
    spikes, trials = _recording(rng, "ms", "trial")
    s = survey(_table(spikes), _table(trials.drop(columns="start")))
    assert s.time_unit.value == "ms" and s.clock.value == "trial"
