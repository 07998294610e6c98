import numpy as np
import pytest

from figspec.data.readers import load_source
from figspec.errors import DataError
from figspec.spec.sources import CsvSource as SourceSpec

from helpers import SPECS

DEMO = {"spikes": "spikes.csv", "trials": "trials.csv",
        "spike_columns": {"unit": "unit", "trial": "trial", "time": "time_s"},
        "clock": "session",
        "trial_columns": {"trial": "trial", "level": "level_db", "onset": "onset_s", "offset": "offset_s"}}


def test_demo_source_loads_every_trial():
    rec = load_source(SourceSpec.model_validate(DEMO), SPECS / "data", ("sources", "demo"))
    assert rec.units == ("u1", "u2", "u3")
    assert len(rec.trials) == 270 and rec.n_pairs == 3 * 270
    assert rec.trials.to_frame().groupby("level").size().unique().tolist() == [30]
    assert rec.trials["trial"].tolist() == list(range(1, 271))          # presentation order: by onset


def test_missing_column_names_the_key_and_lists_columns():
    spec = SourceSpec.model_validate({**DEMO, "spike_columns": {**DEMO["spike_columns"], "time": "t"}})
    with pytest.raises(DataError) as info:
        load_source(spec, SPECS / "data", ("sources", "demo"))
    [problem] = info.value.problems
    assert problem.loc == ("sources", "demo", "spike_columns", "time")
    assert "column 't' not found" in problem.message and "time_s" in problem.got


def test_missing_file_names_the_key(tmp_path):
    with pytest.raises(DataError) as info:
        load_source(SourceSpec.model_validate(DEMO), tmp_path, ("sources", "demo"))
    assert info.value.problems[0].loc == ("sources", "demo", "spikes")


def test_one_unit_file_without_unit_column(tmp_path):
    (tmp_path / "s.csv").write_text("trial,t_ms\n1,12.5\n2,30\n")
    (tmp_path / "t.csv").write_text("trial,level\n1,10\n2,20\n3,20\n")
    spec = SourceSpec.model_validate({"spikes": "s.csv", "trials": "t.csv", "time_unit": "ms",
                                      "unit_name": "cell7", "spike_columns": {"time": "t_ms"}})
    rec = load_source(spec, tmp_path, ("sources", "one"))
    assert rec.units == ("cell7",)
    assert rec.n_pairs == 3 and rec.times_s.tolist() == [0.0125, 0.03]


@pytest.mark.parametrize("text", ["a,b\n1,2\n3\n", "a,b\n1,2\n\n3,4", "a,b\r\n1,2\r\n3,4,5\r\n", "a,b\n1,2\n3,4\n",
                                  "a,b\n1,2\n3,4,", "a,b\n,\n1,2,3,4\n"])
def test_ragged_row_agrees_with_the_csv_module(tmp_path, text):
    """The numpy count of fields per line against Python's csv module (no quotes here, so a
    line is a row), blank lines skipped by both."""
    import csv

    from figspec.data.csv_source import ragged_row

    path = tmp_path / "r.csv"
    path.write_bytes(text.encode())
    rows = list(csv.reader(text.splitlines()))
    expected = next(((i, len(r)) for i, r in enumerate(rows, start=1) if r and len(r) != len(rows[0])), None)
    assert ragged_row(path, ",", 2) == expected


@pytest.mark.parametrize("odd", ["\x1c3", "\u00b2", "3\u00a0", "\u0663"])
def test_trial_ids_int_cannot_read_still_match(tmp_path, odd):
    # str.strip() removes \x1c and str.isdigit() accepts a superscript two, yet int() reads neither
    # (Python docs, int() and str.isdigit()); such an id must still match between the two tables,
    # not crash the reader
    (tmp_path / "s.csv").write_text(f"trial,t_ms\n1,12.5\n{odd},30\n", encoding="utf-8")
    (tmp_path / "t.csv").write_text(f"trial,level\n1,10\n{odd},20\n", encoding="utf-8")
    spec = SourceSpec.model_validate({"spikes": "s.csv", "trials": "t.csv", "time_unit": "ms", "unit_name": "c1",
                                      "spike_columns": {"trial": "trial", "time": "t_ms"},
                                      "trial_columns": {"trial": "trial", "level": "level"}})
    rec = load_source(spec, tmp_path, ("sources", "odd"))
    assert len(rec.trials) == 2 and rec.n_pairs == 2
    assert np.diff(rec.offsets).tolist() == [1, 1]               # each trial keeps its one spike
