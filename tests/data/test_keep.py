"""Trial selection: by key, by equality, list and range, per source and per panel; the row
labels count the trials kept and the outputs say how many each rule removed."""

import json

import pandas as pd
import pytest

from figspec import pipeline

from helpers import SMALL_SPEC, SPECS, write_spec


def rate_table(tmp_path, text):
    resolved = pipeline.check(write_spec(tmp_path, text))
    return resolved, pipeline.compute(resolved).panels["rate"]


def test_exclude_and_where_per_source_keep_the_right_trials(tmp_path):
    text = SMALL_SPEC.replace('clock = "session"', 'clock = "session"\nkeep = { exclude = [1, 2, 3], where = { trial = { max = 200 } } }')
    resolved, table = rate_table(tmp_path, text)
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    kept = trials[(trials["trial"] > 3) & (trials["trial"] <= 200)]
    expected = kept.groupby("level_db").size()
    got = table.groupby("level")["n_trials"].first()
    assert got.to_dict() == {lv: int(expected[lv]) for lv in (40.0, 80.0)}
    removed = resolved.recording(resolved.panels[1]).removed
    assert removed == (("exclude 3 trials by key", 3), ("where trial <= 200", 70))


def test_a_panel_selection_applies_to_that_panel_only_and_is_reported(tmp_path):
    text = SMALL_SPEC.replace('bin_ms = 10', 'bin_ms = 10\nkeep = { where = { trial = { min = 91 } } }')
    out = tmp_path / "out"
    pipeline.render(write_spec(tmp_path, text), out, ["png"])
    rate = pd.read_csv(out / "spec_data" / "rate.csv")
    spikes = pd.read_csv(out / "spec_data" / "spikes.csv")
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    early = int(((trials["trial"] < 91) & trials["level_db"].isin([40, 80])).sum())
    assert rate["n_trials"].sum() // 20 == 60 - early              # 20 bins per level
    assert spikes.groupby("level")["n_trials"].first().tolist() == [30, 30]
    stats = pd.read_csv(out / "spec_data" / "statistics.csv")
    removed = stats[stats["section"] == "removed"]
    assert removed[["panel", "quantity", "value"]].values.tolist() == [["rate", "panel rate: where 91 <= trial", 90]]
    manifest = json.loads((out / "spec_data" / "manifest.json").read_text())
    assert manifest["parameters"]["removed"] == {"spikes": [], "rate": [["panel rate: where 91 <= trial", 90]]}


def test_string_and_boolean_conditions(tmp_path):
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    trials["running"] = (trials["trial"] % 3 == 0)
    trials["block"] = ["A" if t < 100 else "B" for t in trials["trial"]]
    trials.to_csv(tmp_path / "t.csv", index=False)
    text = SMALL_SPEC.replace('"@DATA@/trials.csv"', f'"{tmp_path / "t.csv"}"').replace(
        'clock = "session"', 'clock = "session"\nkeep = { where = { running = false, block = "B" } }')
    resolved, table = rate_table(tmp_path, text)
    kept = trials[~trials["running"] & (trials["block"] == "B")]
    assert table.groupby("level")["n_trials"].first().to_dict() == \
        {lv: int((kept["level_db"] == lv).sum()) for lv in (40.0, 80.0)}


@pytest.mark.parametrize("value", ['"no"', '"150"'])
def test_strings_are_not_read_as_booleans_or_numbers_in_a_range(tmp_path, value):
    from figspec.errors import SpecError

    text = SMALL_SPEC.replace('clock = "session"', f'clock = "session"\nkeep = {{ where = {{ trial = {{ max = {value} }} }} }}')
    with pytest.raises(SpecError):
        pipeline.check(write_spec(tmp_path, text))
