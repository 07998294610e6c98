"""Units of two sessions pooled in one panel: named session/unit, each with its own trials."""

import numpy as np
import pytest

from figspec import pipeline
from figspec.errors import DataError

from helpers import SPECS, demo_text, write_spec


def test_a_pooled_population_is_the_mean_of_each_sessions_units(tmp_path):
    resolved = pipeline.check(write_spec(tmp_path, demo_text("two_sessions")))
    pooled = pipeline.compute(resolved).panels["population"]
    singles = []
    for day in ("day1", "day2"):
        for unit in ("u1", "u2", "u3"):
            text = demo_text("two_sessions").replace(
                'source = ["day1", "day2"]\nunits = ["day1/u1", "day1/u2", "day1/u3", "day2/u1", "day2/u2", "day2/u3"]',
                f'source = "{day}"\nunit = "{unit}"')
            one = pipeline.compute(pipeline.check(write_spec(tmp_path, text, f"{day}{unit}.toml"))).panels["population"]
            singles.append(one["rate"].to_numpy())
    np.testing.assert_allclose(pooled["rate"].to_numpy(), np.mean(singles, axis=0), rtol=1e-12)
    assert set(pooled["n_units"]) == {6} and set(pooled["n_trials"]) == {6 * 30}


def test_a_unit_name_both_sessions_have_must_say_which(tmp_path):
    text = demo_text("two_sessions").replace('"day1/u1", "day1/u2"', '"u1", "day1/u2"')
    with pytest.raises(DataError) as info:
        pipeline.check(write_spec(tmp_path, text))
    [problem] = info.value.problems
    assert problem.loc == ("panels", 0, "units", 0)
    assert "several pooled sources have this unit: name one of day1/u1, day2/u1" in problem.message
