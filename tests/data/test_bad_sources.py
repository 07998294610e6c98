"""Bad data and source keys end in one located line (exit 2), never a traceback."""

import pytest

from figspec import pipeline
from figspec.errors import DataError, SpecError

from helpers import MINIMAL_SPEC, SPECS, write_spec


def problems(tmp_path, text, error=DataError):
    with pytest.raises(error) as info:
        pipeline.check(write_spec(tmp_path, text))
    return [p.format() for p in info.value.problems]


def test_unknown_column_in_a_trial_key(tmp_path):
    [line] = problems(tmp_path, MINIMAL_SPEC.replace('trial_columns = { trial = "trial"', 'trial_columns = { trial = "trail"'))
    assert "sources.demo.trial_columns.trial: column 'trail' not found" in line


def test_unknown_column_in_a_condition(tmp_path):
    text = MINIMAL_SPEC.replace('clock = "session"', 'clock = "session"\nkeep = { where = { running = false } }')
    [line] = problems(tmp_path, text)
    assert "sources.demo.keep.where.running: column 'running' not found" in line


def test_a_rule_that_keeps_no_trial(tmp_path):
    text = MINIMAL_SPEC.replace('clock = "session"', 'clock = "session"\nkeep = { where = { level_db = 95 } }')
    [line] = problems(tmp_path, text)
    assert "sources.demo.keep.where.level_db: no trial is left after this condition (got 95)" in line


def test_excluding_a_key_that_does_not_exist(tmp_path):
    text = MINIMAL_SPEC.replace('clock = "session"', 'clock = "session"\nkeep = { exclude = [1, 999] }')
    [line] = problems(tmp_path, text)
    assert "sources.demo.keep.exclude[1]: no trial has this key" in line and "(got 999)" in line


def test_a_trial_key_that_is_not_unique(tmp_path):
    (tmp_path / "t.csv").write_text("trial,level\n1,10\n1,20\n")
    (tmp_path / "s.csv").write_text("unit,trial,time\nu,1,0.01\n")
    text = MINIMAL_SPEC.replace("@DATA@/spikes.csv", str(tmp_path / "s.csv")).replace("@DATA@/trials.csv", str(tmp_path / "t.csv"))
    text = text.replace('clock = "session"\n', "").replace(
        'trial_columns = { trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s", start = "start_s", stop = "stop_s" }',
        'trial_columns = { trial = "trial", level = "level" }').replace('time = "time_s"', 'time = "time"')
    text = text.replace("per_trial = true", "start_ms = 0\nstop_ms = 50")
    [line] = problems(tmp_path, text)
    assert "the trial key must be unique" in line and "(got 1)" in line


def test_a_folder_given_as_a_data_file(tmp_path):
    (tmp_path / "folder.csv").mkdir()
    [line] = problems(tmp_path, MINIMAL_SPEC.replace("@DATA@/spikes.csv", str(tmp_path / "folder.csv")))
    assert "sources.demo.spikes:" in line and "is a folder, not a data file" in line


def test_a_semicolon_file_read_as_comma_separated_says_so(tmp_path):
    (tmp_path / "s.csv").write_text("unit;trial;time_s\nu1;1;0.2\n")
    [line] = problems(tmp_path, MINIMAL_SPEC.replace("@DATA@/spikes.csv", str(tmp_path / "s.csv")))
    assert "looks semicolon-separated" in line and 'set delimiter = ";"' in line


def test_a_parquet_file_declared_as_csv(tmp_path):
    import pandas as pd

    pd.read_csv(SPECS / "data" / "spikes.csv").to_parquet(tmp_path / "s.csv")
    [line] = problems(tmp_path, MINIMAL_SPEC.replace("@DATA@/spikes.csv", str(tmp_path / "s.csv")))
    assert "is not UTF-8 text" in line and "set format" in line


def test_spike_times_in_ms_declared_as_s_fall_outside_every_trial(tmp_path):
    import pandas as pd

    spikes = pd.read_csv(SPECS / "data" / "sorted_spikes.csv")
    spikes.assign(time_s=spikes["time_s"] * 1000).to_csv(tmp_path / "ms.csv", index=False)
    text = MINIMAL_SPEC.replace("@DATA@/spikes.csv", str(tmp_path / "ms.csv")).replace(
        'clock = "session"', 'clock = "session"\nassign_spikes = "by_time"').replace(
        'spike_columns = { unit = "unit", trial = "trial", time = "time_s" }', 'spike_columns = { unit = "unit", time = "time_s" }')
    # it used to be a warning and a figure of empty rows: a unit with no spike in any trial is an error
    # naming it. Only the units a spec uses are read (the CSV reader keeps their rows alone), so the spec
    # is pointed at u1, which has no spike inside, and u2, which has 4 that land in late trials by chance
    text = text.replace('unit = "u2"', 'unit = "u1"', 1)
    [line] = problems(tmp_path, text)
    assert "no spike of unit 'u1' falls inside any trial's start and stop" in line
    assert "is time_unit = 's' right" in line
    early = spikes[spikes["time_s"] < 0.15].assign(time_s=lambda f: f["time_s"] + 1000)   # every spike after the last trial
    early.to_csv(tmp_path / "late.csv", index=False)
    [line] = problems(tmp_path, text.replace(str(tmp_path / "ms.csv"), str(tmp_path / "late.csv")))
    assert "no spike falls inside any trial's start and stop: is time_unit right" in line


def test_an_onset_column_without_a_clock_asks_which(tmp_path):
    [line] = problems(tmp_path, MINIMAL_SPEC.replace('clock = "session"\n', ""), SpecError)
    assert "sources.demo: say which clock" in line


def test_an_unknown_format_suggests_the_known_ones(tmp_path):
    [line] = problems(tmp_path, MINIMAL_SPEC.replace('clock = "session"', 'clock = "session"\nformat = "parqet"'), SpecError)
    assert "sources.demo.format: format must be one of 'csv', 'parquet', 'nwb', 'sample_arrays'; did you mean 'parquet'?" in line


def test_nwb_files_without_a_units_or_trials_table(tmp_path):
    from datetime import datetime, timezone

    pynwb = pytest.importorskip("pynwb")
    nwb = pynwb.NWBFile(session_description="empty", identifier="x",
                        session_start_time=datetime(2026, 1, 1, tzinfo=timezone.utc))
    with pynwb.NWBHDF5IO(str(tmp_path / "empty.nwb"), "w") as io:
        io.write(nwb)
    text = MINIMAL_SPEC.split("[sources.demo]")[0] + (
        f'[sources.demo]\nformat = "nwb"\nfile = "{tmp_path / "empty.nwb"}"\n'
        'trial_columns = { level = "level", onset = "onset", offset = "offset" }\n\n[[panels]]\nname = "r"\nkind = "raster"\n')
    [line] = problems(tmp_path, text)
    assert "has no units table" in line


def test_onsets_on_another_clock_than_the_spikes_are_an_error(tmp_path):
    import pandas as pd

    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    shifted = trials.assign(onset_s=trials["onset_s"] + 3600, offset_s=trials["offset_s"] + 3600,
                            start_s=trials["start_s"] + 3600, stop_s=trials["stop_s"] + 3600)
    shifted.to_csv(tmp_path / "t.csv", index=False)
    [line] = problems(tmp_path, MINIMAL_SPEC.replace("@DATA@/trials.csv", str(tmp_path / "t.csv")))
    assert "no spike falls inside its trial's recorded extent: is time_unit = 's' right" in line
