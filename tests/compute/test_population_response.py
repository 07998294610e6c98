"""The population response against a computation written here from the demo CSV files with
pandas alone: per trial, the rate in 0-60 ms after onset less the rate in the 60 ms before it;
each unit's mean per level divided by its largest mean (the normalised response-level function
of Albrecht & Hamilton 1982; Sclar, Maunsell & Lennie 1990); per level the mean and SEM (ddof = 1)
across units, and the median and interquartile range (numpy.percentile, linear interpolation)."""

import numpy as np
import pandas as pd
import pytest

from figspec import pipeline

from helpers import DEMO_SOURCE, SPECS, write_spec

SPEC = """
[figure]
title = "t"
width_mm = 89
height_mm = 75

[levels]
quantity = "Sound level"
unit = "dB SPL"
scale = "pressure_db"

[stimulus]
per_trial = true

""" + DEMO_SOURCE + """
[[panels]]
name = "pop"
kind = "population_response"
response_ms = [0, 60]
baseline_ms = [-60, 0]
summary = "SUMMARY"
fit = "FIT"
"""


def by_hand() -> pd.DataFrame:
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    joined = spikes.merge(trials, on="trial")
    rel = np.rint(joined["time_s"] * 1e6).astype(np.int64) - np.rint(joined["onset_s"] * 1e6).astype(np.int64)
    joined = joined.assign(evoked=(rel >= 0) & (rel < 60_000), base=(rel >= -60_000) & (rel < 0))
    counts = joined.groupby(["unit", "trial"])[["evoked", "base"]].sum()
    grid = pd.MultiIndex.from_product([["u1", "u2", "u3"], trials["trial"]], names=["unit", "trial"])
    counts = counts.reindex(grid, fill_value=0).reset_index().merge(trials[["trial", "level_db"]], on="trial")
    counts["response"] = (counts["evoked"] - counts["base"]) / 0.060            # every trial, with or without spikes
    means = counts.groupby(["unit", "level_db"])["response"].mean().unstack()
    return means.div(means.max(axis=1), axis=0)


@pytest.mark.parametrize("summary", ["mean_sem", "median_iqr"])
def test_points_equal_an_independent_computation(tmp_path, summary):
    spec = write_spec(tmp_path, SPEC.replace("SUMMARY", summary).replace("FIT", "none"))
    tables = pipeline.compute(pipeline.check(spec)).panels["pop"]
    normalised = by_hand()
    units = tables["units"].pivot(index="unit", columns="level", values="normalised")
    np.testing.assert_allclose(units.to_numpy(), normalised.to_numpy(), rtol=1e-12)
    points = tables["points"].set_index("level")
    values = normalised.to_numpy()
    if summary == "mean_sem":
        centre = values.mean(axis=0)
        spread = values.std(axis=0, ddof=1) / np.sqrt(3)
        low, high = centre - spread, centre + spread
    else:
        low, centre, high = np.percentile(values, [25, 50, 75], axis=0)
    np.testing.assert_allclose(points["value"], centre, rtol=1e-12)
    np.testing.assert_allclose(points["error_low"], low, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(points["error_high"], high, rtol=1e-12, atol=1e-12)
    assert set(points["n_units"]) == {3}


def test_a_population_fit_and_each_units_own_fit_are_listed(tmp_path):
    import warnings

    spec = write_spec(tmp_path, SPEC.replace("SUMMARY", "mean_sem").replace("FIT", "naka_rushton"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        tables = pipeline.compute(pipeline.check(spec)).panels["pop"]
    params = tables["params"]
    assert set(params["unit"]) == {"population", "u1", "u2", "u3"}
    assert len(tables["fit"]) and set(tables["fit"]["unit"]) == {"population"}
    # the curve runs through the population points: residuals well inside the 0-1 scale
    points = tables["points"]
    curve = np.interp(points["level"], tables["fit"]["level"], tables["fit"]["value"])
    assert np.max(np.abs(curve - points["value"])) < 0.1


def test_units_whose_fit_fails_are_left_out_and_counted(tmp_path, monkeypatch):
    import warnings

    from figspec.compute import fit_tables
    from figspec.compute.fits import FitResult

    real = fit_tables.fit_unit

    def failing(model, data, scale, confidence, resamples, seed, unit):
        if unit == "u2":
            empty = np.full(4, np.nan)
            return FitResult(model, ("R0", "Rmax", "L50", "n"), empty, empty, empty, "failed", ("forced",)), \
                np.empty((0, 4))
        return real(model, data, scale, confidence, resamples, seed, unit)

    monkeypatch.setattr(fit_tables, "fit_unit", failing)
    spec = write_spec(tmp_path, SPEC.replace("SUMMARY", "mean_sem").replace("FIT", "naka_rushton").replace(
        'summary = "mean_sem"', 'summary = "mean_sem"\nnormalise = "fit_max"'))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        resolved = pipeline.check(spec)
        tables = pipeline.compute(resolved)
    units = tables.panels["pop"]["units"].drop_duplicates("unit").set_index("unit")
    assert not units.loc["u2", "included"] and "fit failed" in units.loc["u2", "note"]
    assert set(tables.panels["pop"]["points"]["n_units"]) == {2}
    from figspec.steps.save import legend

    assert "1 units left out (u2: left out: its Naka-Rushton fit failed: forced)" in legend(resolved, tables)
