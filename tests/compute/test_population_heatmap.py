"""The population heatmap's numbers against a computation written here from the demo CSV files
with pandas alone: spikes relative to each trial's onset, counted in [start, stop) bins, divided
by trials presented per level and by the bin width, averaged over levels with equal weight; the
z-score against the baseline bins' mean and SD (ddof = 1; the definition of a z-score, e.g.
scipy.stats.zscore's), the fraction of the peak, and rows in order of the median first-spike
latency."""

import numpy as np
import pandas as pd
import pytest

from figspec import pipeline

from helpers import DEMO_SOURCE, SPECS, write_spec

SPEC = """
[figure]
title = "t"
width_mm = 120
height_mm = 90

[stimulus]
per_trial = true

""" + DEMO_SOURCE + """
[[panels]]
name = "map"
kind = "population_heatmap"
levels = [40, 60, 80]
window_ms = [-50, 150]
bin_ms = 10
scale = "SCALE"
"""


def by_hand(scale: str) -> tuple[dict, list[str]]:
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    trials = trials[trials["level_db"].isin([40, 60, 80])]
    joined = spikes.merge(trials, on="trial")
    us = np.rint(joined["time_s"] * 1e6).astype(np.int64) - np.rint(joined["onset_s"] * 1e6).astype(np.int64)
    joined = joined.assign(rel_us=us)
    inside = joined[(joined["rel_us"] >= -50_000) & (joined["rel_us"] < 150_000)]
    per_level_trials = trials.groupby("level_db").size()
    values, latency = {}, {}
    for unit in ["u1", "u2", "u3"]:
        mine = inside[inside["unit"] == unit]
        counts = np.zeros((3, 20))
        for i, level in enumerate([40, 60, 80]):
            b = (mine[mine["level_db"] == level]["rel_us"] + 50_000) // 10_000
            counts[i] = np.bincount(b, minlength=20)
        rate = (counts / per_level_trials.loc[[40, 60, 80]].to_numpy()[:, None] / 0.010).mean(axis=0)
        if scale == "z_score":
            base = rate[:5]                                   # bins wholly in -50..0 ms
            values[unit] = (rate - base.mean()) / base.std(ddof=1)
        else:
            values[unit] = rate / rate.max()
        response = mine[(mine["rel_us"] >= 0) & (mine["rel_us"] < 50_000)]
        latency[unit] = np.median(response.groupby("trial")["rel_us"].min() / 1000)
    return values, sorted(latency, key=latency.get)


@pytest.mark.parametrize("scale", ["z_score", "peak"])
def test_values_and_order_equal_an_independent_computation(tmp_path, scale):
    spec = write_spec(tmp_path, SPEC.replace("SCALE", scale))
    resolved = pipeline.check(spec)
    matrix = pipeline.compute(resolved).panels["map"]["matrix"]
    values, order = by_hand(scale)
    assert matrix.drop_duplicates("unit").sort_values("rank")["unit"].tolist() == order
    for unit, expected in values.items():
        got = matrix[matrix["unit"] == unit].sort_values("bin_start_ms")["value"].to_numpy()
        np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-12)


def test_the_picture_is_the_table_in_rank_order(tmp_path):
    from helpers import draw_now

    spec = write_spec(tmp_path, SPEC.replace("SCALE", "z_score"))
    resolved = pipeline.check(spec)
    tables = pipeline.compute(resolved)
    fig = draw_now(pipeline.draw(resolved, tables))
    matrix = tables.panels["map"]["matrix"]
    [image] = [a for ax in fig.subfigs[0].axes for a in ax.images if a.get_gid() == "population_heatmap"]
    order = matrix.drop_duplicates("unit").sort_values("rank")["unit"].tolist()
    embedded = np.asarray(image.get_array())
    n_bins = matrix["bin_start_ms"].nunique()             # each cell is embedded as a block of equal pixels
    fy, fx = embedded.shape[0] // len(order), embedded.shape[1] // n_bins
    assert embedded.shape == (fy * len(order), fx * n_bins)
    shown = embedded[::fy, ::fx]
    np.testing.assert_array_equal(np.repeat(np.repeat(shown, fy, axis=0), fx, axis=1), embedded)
    for row, unit in enumerate(order):
        np.testing.assert_allclose(shown[row], matrix[matrix["unit"] == unit].sort_values("bin_start_ms")["value"])
    low, high = image.get_clim()
    assert low == -high                                   # diverging map centred on the baseline
    names = [t.get_text() for t in image.axes.get_yticklabels()]
    assert names == order
    legend = pipeline.render(spec, tmp_path / "out", ["png"]).files
    text = (tmp_path / "out" / "spec_data" / "legend.md").read_text()
    assert "z-scored against each unit's own baseline (-50–0 ms" in text and "n = 3 units" in text


def test_sorting_by_a_unit_table_column_and_too_few_units(tmp_path):
    from figspec.errors import UserError

    (tmp_path / "units.csv").write_text("unit_id,depth_um\nu1,300\nu2,100\nu3,200\n")
    text = SPEC.replace("SCALE", "peak").replace('scale = "peak"', 'scale = "peak"\nsort_by = "table"\nsort_column = "depth_um"')
    text = text.replace('trial_columns = {', 'unit_table = { file = "units.csv" }\ntrial_columns = {')
    spec = write_spec(tmp_path, text)
    matrix = pipeline.compute(pipeline.check(spec)).panels["map"]["matrix"]
    assert matrix.drop_duplicates("unit").sort_values("rank")["unit"].tolist() == ["u2", "u3", "u1"]
    one = write_spec(tmp_path, SPEC.replace("SCALE", "peak").replace('kind = "population_heatmap"',
                                                                     'kind = "population_heatmap"\nunits = ["u1", "u1"]'),
                     "one.toml")
    with pytest.raises(UserError):
        pipeline.check(one)
