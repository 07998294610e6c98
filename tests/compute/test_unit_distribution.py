"""The distribution of a per-unit quantity: each unit's value is what its own level_response
analysis gives; the median and interquartile range are numpy.percentile's; the test is
scipy.stats.mannwhitneyu (the reference implementation); the rank-biserial correlation equals
Cliff's delta counted here pair by pair: (#(a > b) - #(a < b)) / (n_a n_b) (Cliff 1993)."""

import warnings

import numpy as np
import pytest
from scipy.stats import mannwhitneyu

from figspec import pipeline
from figspec.errors import UserError

from helpers import DEMO_SOURCE, level_head, write_spec

SPEC = level_head(89, 80) + "".join(DEMO_SOURCE.replace("[sources.demo]", f"[sources.{name}]").replace("@DATA@/", f"@DATA@/{prefix}")
              for name, prefix in (("day1", ""), ("day2", "day2_"))) + """
[[panels]]
name = "l50"
kind = "unit_distribution"
source = ["day1", "day2"]
quantity = "L50"
group_by = "source"
test = "mann_whitney"
"""


def tables(tmp, units=None):
    text = SPEC.replace('quantity = "L50"', f'quantity = "L50"\nunits = {units}') if units else SPEC
    spec = pipeline.load(write_spec(tmp, text))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        resolved = pipeline.resolve(spec)
        return pipeline.compute(resolved).panels["l50"]


def test_values_summary_and_test_against_references(tmp_path):
    out = tables(tmp_path)
    units = out["units"]
    assert units["group"].tolist() == ["day1"] * 3 + ["day2"] * 3
    summary = out["summary"].set_index("group")
    for group, rows in units.groupby("group"):
        v = rows.loc[rows["shown"].isin(["filled", "open"]), "value"].to_numpy()
        np.testing.assert_allclose(summary.loc[group, ["median", "q25", "q75"]].to_numpy(dtype=float),
                                   np.percentile(v, [50, 25, 75]))
    a = units.loc[units["group"] == "day1", "value"].to_numpy()
    b = units.loc[units["group"] == "day2", "value"].to_numpy()
    test = out["test"].iloc[0]
    reference = mannwhitneyu(a, b, alternative="two-sided")
    assert test["U"] == reference.statistic and test["p"] == pytest.approx(reference.pvalue)
    cliff = (np.sum(a[:, None] > b[None, :]) - np.sum(a[:, None] < b[None, :])) / (a.size * b.size)
    assert test["r"] == pytest.approx(cliff)
    assert test["r_ci_low"] <= test["r"] <= test["r_ci_high"]


def test_each_value_is_the_units_own_level_response_fit(tmp_path):
    from figspec.compute import level_response, unit_distribution

    out = tables(tmp_path)
    spec = pipeline.load(tmp_path / "spec.toml")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        resolved = pipeline.resolve(spec)
        [panel] = [p for p in resolved.panels if p.name == "l50"]
        rec = resolved.recording(panel)
        params = level_response.compute(rec, unit_distribution.analysis_panel(rec, panel), spec.model.levels)["params"]
    l50 = params[params["quantity"] == "L50"].set_index("unit")["value"]
    np.testing.assert_allclose(out["units"].set_index("unit")["value"], l50.loc[out["units"]["unit"]])


def test_a_group_too_small_for_the_test_is_an_error(tmp_path):
    with pytest.raises(UserError, match="at least 3 units per group; day2 has 1"):
        tables(tmp_path, '["day1/u1", "day1/u2", "day1/u3", "day2/u1"]')
