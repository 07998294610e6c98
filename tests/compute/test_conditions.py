"""Panels split into conditions, checked against computations written here with pandas and
scipy alone from the demo silencing session's CSV files (invented data), in the layouts a lab
might have: a boolean column, 0/1, on/off strings, shuffled rows, trials in neither condition.

Sources of the checks: the two-sided Mann-Whitney U test and the Wilcoxon signed-rank test are
scipy.stats.mannwhitneyu and scipy.stats.wilcoxon (the reference implementations); Holm's
step-down correction is written out from Holm (1979, Scand J Stat 6:65); Cliff's delta is counted
pair by pair from its definition P(a > b) - P(a < b) (Cliff 1993, Psychol Bull 114:494); the
matched-pairs rank-biserial r is (sum of positive ranks - sum of negative ranks) / sum of ranks
(Kerby 2014, Compr Psychol 3:11); normalising to the control condition's maximum follows the
normalised response-level functions of Albrecht & Hamilton (1982, J Neurophysiol 48:217)."""

import itertools

import numpy as np
import pandas as pd
import pytest
from scipy.stats import mannwhitneyu, rankdata, wilcoxon

from figspec import pipeline
from figspec.errors import UserError

from helpers import SPECS, silencing_head, write_spec

DATA = SPECS / "data" / "silencing"



def spec(tmp_path, panels: str, trials: pd.DataFrame | None = None, spikes: pd.DataFrame | None = None):
    trial_file, spike_file = DATA / "s1_trials.csv", DATA / "s1_spikes.csv"
    if trials is not None:
        trial_file = tmp_path / "trials.csv"
        trials.to_csv(trial_file, index=False)
    if spikes is not None:
        spike_file = tmp_path / "spikes.csv"
        spikes.to_csv(spike_file, index=False)
    text = silencing_head(str(spike_file), str(trial_file)) + panels
    return write_spec(tmp_path, text)


def per_trial_rates(units=("u03",)) -> pd.DataFrame:
    """Per unit and trial: the rate in 0-60 ms less nothing, and the baseline rate in -60-0 ms."""
    spikes = pd.read_csv(DATA / "s1_spikes.csv")
    trials = pd.read_csv(DATA / "s1_trials.csv")
    joined = spikes[spikes["unit"].isin(units)].merge(trials, on="trial")
    rel = np.rint(joined["time_s"] * 1e6).astype(np.int64) - np.rint(joined["onset_s"] * 1e6).astype(np.int64)
    joined = joined.assign(evoked=(rel >= 0) & (rel < 60_000), base=(rel >= -60_000) & (rel < 0))
    counts = joined.groupby(["unit", "trial"])[["evoked", "base"]].sum()
    grid = pd.MultiIndex.from_product([list(units), trials["trial"]], names=["unit", "trial"])
    counts = counts.reindex(grid, fill_value=0).reset_index().merge(trials, on="trial")
    return counts.assign(rate=counts["evoked"] / 0.060, base_rate=counts["base"] / 0.060)


def holm(p: np.ndarray) -> np.ndarray:
    """Holm (1979): the k-th smallest p times (m - k + 1), made monotone, capped at 1."""
    order = np.argsort(p)
    out = np.empty_like(p)
    running = 0.0
    for k, i in enumerate(order):
        running = max(running, min(1.0, (p.size - k) * p[i]))
        out[i] = running
    return out


def cliffs_delta(a, b) -> float:
    pairs = list(itertools.product(a, b))
    return (sum(x > y for x, y in pairs) - sum(x < y for x, y in pairs)) / len(pairs)


LEVEL_RESPONSE = """
[[panels]]
name = "lr"
kind = "level_response"
unit = "u03"
conditions = { column = "light", values = [false, true], names = ["control", "silenced"] }
"""


def test_level_response_per_condition_and_tests_equal_scipy(tmp_path):
    tables = pipeline.compute(pipeline.check(spec(tmp_path, LEVEL_RESPONSE))).panels["lr"]
    rates = per_trial_rates()
    points = tables["points"]
    assert list(points["condition"].unique()) == ["control", "silenced"]
    for (light, level), rows in rates.groupby(["light", "level_db"]):
        row = points[(points["condition"] == ("silenced" if light else "control")) & (points["level"] == level)]
        assert int(row["n_trials"].iloc[0]) == len(rows) == 15           # every trial, with or without spikes
        assert row["response"].iloc[0] == pytest.approx(rows["rate"].mean(), rel=1e-12)
    tests = tables["tests"].sort_values("level")
    expected_p = []
    for level, rows in rates.groupby("level_db"):
        on, off = rows.loc[rows["light"], "rate"].to_numpy(), rows.loc[~rows["light"], "rate"].to_numpy()
        ref = mannwhitneyu(on, off, alternative="two-sided")
        got = tests[tests["level"] == level].iloc[0]
        assert got["statistic"] == pytest.approx(ref.statistic)
        assert got["p"] == pytest.approx(ref.pvalue, rel=1e-12)
        assert got["effect_size"] == pytest.approx(cliffs_delta(on, off), abs=1e-12)
        assert got["effect_low"] <= got["effect_size"] <= got["effect_high"]
        assert got["n"] == 30 and got["per_condition"] == "15, 15"
        expected_p.append(ref.pvalue)
    np.testing.assert_allclose(tests["p_corrected"].to_numpy(), holm(np.array(expected_p)), rtol=1e-12)
    assert set(tests["comparison"]) == {"silenced vs control"}


def test_the_split_equals_the_same_panel_kept_to_each_condition(tmp_path):
    """A split panel's condition equals the panel restricted with keep.where to that condition."""
    split = pipeline.compute(pipeline.check(spec(tmp_path, LEVEL_RESPONSE))).panels["lr"]["points"]
    kept = LEVEL_RESPONSE.replace('conditions = { column = "light", values = [false, true], names = ["control", '
                                  '"silenced"] }', 'keep = { where = { light = true } }')
    alone = pipeline.compute(pipeline.check(spec(tmp_path, kept))).panels["lr"]["points"]
    mine = split[split["condition"] == "silenced"].drop(columns="condition").reset_index(drop=True)
    pd.testing.assert_frame_equal(mine, alone)


@pytest.mark.parametrize("layout", ["zero_one", "on_off", "shuffled_with_extra"])
def test_lab_layouts_of_the_condition_column_give_the_same_numbers(tmp_path, layout):
    trials = pd.read_csv(DATA / "s1_trials.csv")
    values = "[false, true]"
    if layout == "zero_one":
        trials["light"] = trials["light"].astype(int)
        values = "[0, 1]"
    elif layout == "on_off":
        trials["light"] = np.where(trials["light"], " on", "off")         # with a stray space, as typed by hand
        values = '["off", "on"]'
    else:
        extra = trials.iloc[:10].assign(trial=trials["trial"].max() + np.arange(1, 11), light="sham",
                                         onset_s=lambda t: t["onset_s"] + 1000, offset_s=lambda t: t["offset_s"] + 1000,
                                         start_s=lambda t: t["start_s"] + 1000, stop_s=lambda t: t["stop_s"] + 1000)
        trials = pd.concat([trials.astype({"light": str}), extra]).sample(frac=1.0, random_state=3)
        values = '["False", "True"]'
    panels = LEVEL_RESPONSE.replace("[false, true]", values)
    reference = pipeline.compute(pipeline.check(spec(tmp_path, LEVEL_RESPONSE))).panels["lr"]
    resolved = pipeline.check(spec(tmp_path, panels, trials=trials))
    got = pipeline.compute(resolved).panels["lr"]
    pd.testing.assert_frame_equal(got["points"], reference["points"])
    pd.testing.assert_frame_equal(got["tests"], reference["tests"])
    if layout == "shuffled_with_extra":
        removed = resolved.panel_conditions["lr"][0].recording.removed
        assert ("panel lr: trials in none of the conditions (light)", 10) in removed


POPULATION = """
[[panels]]
name = "pop"
kind = "population_response"
fit = "none"
conditions = { column = "light", values = [false, true], names = ["control", "silenced"] }
"""


def test_population_is_divided_by_the_control_maximum_and_tested_pairwise(tmp_path):
    tables = pipeline.compute(pipeline.check(spec(tmp_path, POPULATION))).panels["pop"]
    units = [f"u{i:02d}" for i in range(1, 25)]
    rates = per_trial_rates(units)
    rates["response"] = rates["rate"] - rates["base_rate"]
    means = rates.groupby(["light", "unit", "level_db"])["response"].mean()
    top = means.loc[False].groupby("unit").max()
    normalised = means.div(top, level="unit")
    got = tables["units"].set_index(["condition", "unit", "level"])["normalised"]
    for light, name in ((False, "control"), (True, "silenced")):
        np.testing.assert_allclose(got.loc[name].sort_index().to_numpy(),
                                   normalised.loc[light].sort_index().to_numpy(), rtol=1e-12, atol=1e-15)
    tests = tables["tests"].set_index("level")
    ps = []
    for level in sorted(rates["level_db"].unique()):
        d = (normalised.loc[True].xs(level, level="level_db") - normalised.loc[False].xs(level, level="level_db"))
        d = np.round(d.to_numpy(), 12)                  # float noise (1e-18) is no difference
        ref = wilcoxon(d, alternative="two-sided")
        assert tests.loc[level, "statistic"] == pytest.approx(ref.statistic)
        assert tests.loc[level, "p"] == pytest.approx(ref.pvalue, rel=1e-9)
        r = rankdata(np.abs(d[d != 0]))
        kerby = (r[d[d != 0] > 0].sum() - r[d[d != 0] < 0].sum()) / r.sum()
        assert tests.loc[level, "effect_size"] == pytest.approx(kerby, abs=1e-12)
        assert tests.loc[level, "n"] == 24
        ps.append(ref.pvalue)
    np.testing.assert_allclose(tests["p_corrected"].to_numpy(), holm(np.array(ps)), rtol=1e-9)


def test_threshold_distribution_by_condition_is_paired(tmp_path):
    panels = """
[[panels]]
name = "d"
kind = "unit_distribution"
quantity = "threshold"
group_by = "condition"
conditions = { column = "light", values = [false, true], names = ["control", "silenced"] }
"""
    tables = pipeline.compute(pipeline.check(spec(tmp_path, panels))).panels["d"]
    units = tables["units"]
    assert set(units["group"]) == {"control", "silenced"} and (units["group"] == units["condition"]).all()
    wide = units[units["shown"] == "filled"].pivot(index="unit", columns="condition", values="value").dropna()
    ref = wilcoxon((wide["silenced"] - wide["control"]).to_numpy(), alternative="two-sided")
    test = tables["tests"].iloc[0]
    assert test["p"] == pytest.approx(ref.pvalue, rel=1e-9) and test["n"] == len(wide)
    no_value = units[units["shown"] == "no value"]
    summary = tables["summary"].set_index("group")
    for name in ("control", "silenced"):             # units without a value are counted, not silently dropped
        assert summary.loc[name, "n_units"] == 24 - (no_value["condition"] == name).sum()


def test_raster_blocks_hold_every_trial_once(tmp_path):
    panels = """
[[panels]]
name = "r"
kind = "raster"
unit = "u05"
draw_as = "ticks"
conditions = { column = "light" }
"""
    table = pipeline.compute(pipeline.check(spec(tmp_path, panels))).panels["r"]
    assert list(table["condition"].unique()) == ["light = false", "light = true"]      # sorted, false first
    for level, rows in table.groupby("level"):
        lines = rows.groupby("condition")["row"].agg(["min", "max", "nunique"])
        assert lines.loc["light = false", "min"] == 0 and lines.loc["light = false", "max"] == 14
        assert lines.loc["light = true", "min"] == 15 and lines.loc["light = true", "max"] == 29
        assert (rows["n_trials"] == 30).all() and (rows["n_condition"] == 15).all()
        assert lines["nunique"].sum() == 30                                   # silent trials keep their line


@pytest.mark.parametrize("panels, message", [
    ('conditions = { column = "lamp" }', "lamp"),
    ('conditions = { column = "level_db" }\nlevels = [40]', "has one value"),
    ('conditions = { column = "light", values = [false, "dim"] }', "no trial has light = 'dim'"),
])
def test_bad_condition_columns_are_located_errors(tmp_path, panels, message):
    text = f'\n[[panels]]\nname = "lr"\nkind = "level_response"\nunit = "u03"\n{panels}\n'
    with pytest.raises(UserError) as err:
        pipeline.check(spec(tmp_path, text))
    assert message in str(err.value)
    assert "panels[0].conditions" in str(err.value) or "lamp" in str(err.value)


def test_a_condition_without_trials_at_a_level_is_an_error(tmp_path):
    trials = pd.read_csv(DATA / "s1_trials.csv")
    trials = trials[~(trials["light"] & (trials["level_db"] == 50))]
    spikes = pd.read_csv(DATA / "s1_spikes.csv")
    with pytest.raises(UserError) as err:
        pipeline.check(spec(tmp_path, LEVEL_RESPONSE, trials=trials, spikes=spikes[spikes["trial"].isin(trials["trial"])]))
    assert "condition light = true has no trial at level(s) 50" in str(err.value)
    assert "panels[0].conditions.column" in str(err.value)


def test_a_paired_test_needs_six_units(tmp_path):
    text = POPULATION.replace('fit = "none"', 'fit = "none"\nunits = ["u01", "u02", "u03", "u04", "u05"]')
    with pytest.raises(UserError) as err:
        pipeline.check(spec(tmp_path, text))
    assert "at least 6 units" in str(err.value) and "panels[0].conditions.test" in str(err.value)


def test_small_multiples_share_one_scale(tmp_path):
    text = """
[[panels]]
name = "sm"
kind = "level_response"
units = ["u01", "u02", "u03", "u04", "u05"]
small_multiples = true
multiples_columns = 3
"""
    resolved = pipeline.check(spec(tmp_path, text))
    fig = pipeline.draw(resolved, pipeline.compute(resolved))
    axes = [ax for ax in fig.subfigs[0].axes if ax.get_title()]
    assert [ax.get_title() for ax in axes] == ["u01", "u02", "u03", "u04", "u05"]
    assert len({ax.get_ylim() for ax in axes}) == 1 and len({ax.get_xlim() for ax in axes}) == 1


def test_latency_at_a_level_per_condition_equals_medians_by_hand(tmp_path):
    """The median first-spike time in [0, 60) ms of the trials with a spike there, per unit and
    condition at 70 dB SPL (numpy.median), and the paired test on them (scipy.stats.wilcoxon)."""
    panels = """
[[panels]]
name = "d"
kind = "unit_distribution"
quantity = "latency"
at_level = 70
group_by = "condition"
view = "cumulative"
conditions = { column = "light", values = [false, true], names = ["off", "on"] }
"""
    tables = pipeline.compute(pipeline.check(spec(tmp_path, panels))).panels["d"]
    spikes = pd.read_csv(DATA / "s1_spikes.csv")
    trials = pd.read_csv(DATA / "s1_trials.csv")
    joined = spikes.merge(trials[trials["level_db"] == 70], on="trial")
    rel = (np.rint(joined["time_s"] * 1e6).astype(np.int64) - np.rint(joined["onset_s"] * 1e6).astype(np.int64)) / 1e3
    joined = joined.assign(ms=rel)[(rel >= 0) & (rel < 60)]
    first = joined.groupby(["light", "unit", "trial"])["ms"].min()
    median = first.groupby(["light", "unit"]).median()
    got = tables["units"].set_index(["condition", "unit"])["value"]
    for light, name in ((False, "off"), (True, "on")):
        np.testing.assert_allclose(got.loc[name].sort_index().to_numpy(), median.loc[light].sort_index().to_numpy(),
                                   rtol=1e-12)
    d = np.round((median.loc[True] - median.loc[False]).to_numpy(), 12)
    assert tables["tests"]["p"].iloc[0] == pytest.approx(wilcoxon(d, alternative="two-sided").pvalue, rel=1e-9)


def test_a_latency_quantity_needs_a_level_the_panel_shows(tmp_path):
    panels = '\n[[panels]]\nname = "d"\nkind = "unit_distribution"\nquantity = "latency"\nat_level = 75\n'
    with pytest.raises(UserError) as err:
        pipeline.check(spec(tmp_path, panels))
    assert "panels[0].at_level: not a level the panel shows" in str(err.value)


def test_the_baseline_test_reports_its_effect_size(tmp_path):
    """Each level's evoked-vs-baseline effect: the matched-pairs rank-biserial r (Kerby 2014) of the
    per-trial rate differences, zero differences dropped, counted here from scipy.stats.rankdata."""
    text = LEVEL_RESPONSE.replace('conditions = { column = "light", values = [false, true], names = ["control", '
                                  '"silenced"] }', 'keep = { where = { light = false } }')
    resolved = pipeline.check(spec(tmp_path, text))
    tables = pipeline.compute(resolved).panels["lr"]
    rates = per_trial_rates()
    rates = rates[~rates["light"]]
    for level, rows in rates.groupby("level_db"):
        d = np.round((rows["rate"] - rows["base_rate"]).to_numpy(), 12)
        d = d[d != 0]
        r = rankdata(np.abs(d))
        kerby = (r[d > 0].sum() - r[d < 0].sum()) / r.sum()
        got = tables["points"].set_index("level").loc[level]
        assert got["effect_size"] == pytest.approx(kerby, abs=1e-12)
        assert got["effect_low"] <= got["effect_size"] <= got["effect_high"]
    from figspec.steps.save import statistics
    stats = statistics(resolved, pipeline.compute(resolved))
    tested = stats[(stats["section"] == "test") & (stats["panel"] == "lr")]
    assert {"statistic", "n", "p", "p_corrected", "matched-pairs rank-biserial r"} <= set(tested["quantity"])


@pytest.mark.filterwarnings("ignore:.*Naka.Rushton fit")          # the level_response panel reports its fits
def test_a_heatmap_sorted_by_a_fitted_parameter_follows_the_units_own_fits(tmp_path):
    """Rows in the order of each unit's Naka-Rushton L50, as a level_response panel of the same unit
    and window fits it (the same analysis, so the same number); units whose fit failed last."""
    panels = """
[[panels]]
name = "map"
kind = "population_heatmap"
units = ["u01", "u02", "u03", "u04", "u05", "u06"]
sort_by = "fit"
sort_parameter = "L50"
response_ms = [0, 60]
"""
    tables = pipeline.compute(pipeline.check(spec(tmp_path, panels))).panels["map"]["matrix"]
    first = tables.drop_duplicates("unit").sort_values("rank")
    alone = """
[[panels]]
name = "lr"
kind = "level_response"
units = ["u01", "u02", "u03", "u04", "u05", "u06"]
fit = "naka_rushton"
test = "none"
baseline_ms = [-50, 0]
"""
    params = pipeline.compute(pipeline.check(spec(tmp_path, alone))).panels["lr"]["params"]
    l50 = params[params["quantity"] == "L50"].set_index("unit")["value"]
    keys = first.set_index("unit")["sort_key"]
    finite = keys.dropna()
    np.testing.assert_allclose(finite.to_numpy(), l50[finite.index].to_numpy(), rtol=1e-12)
    assert list(finite.index) == list(finite.sort_values(kind="stable").index)
    assert first["sort_key"].isna().to_numpy().tolist() == sorted(first["sort_key"].isna().tolist())
