import pytest

from figspec.data.sources import load_source
from figspec.errors import DataError
from figspec.spec.models import SourceSpec

from helpers import SPECS

DEMO = {"spikes": "spikes.csv", "trials": "trials.csv",
        "spike_columns": {"unit": "unit", "trial": "trial", "time": "time_s"},
        "trial_columns": {"trial": "trial", "level": "level_db", "onset": "onset_s", "offset": "offset_s"}}


def test_demo_source_loads_every_trial():
    rec = load_source(SourceSpec.model_validate(DEMO), SPECS / "data", ("sources", "demo"))
    assert rec.units == ("u1", "u2", "u3")
    assert len(rec.trials) == 270 and rec.n_pairs == 3 * 270
    assert rec.trials.groupby("level").size().unique().tolist() == [30]
    assert rec.trials["onset_s"].is_monotonic_increasing


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
