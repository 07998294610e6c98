"""Every claim of a legend is checked against what was done: the resolved panels, the fit
results and the tables."""

import re

import pandas as pd
import pytest

from helpers import SPECS


@pytest.fixture(scope="module")
def summary(demo_render):
    out = demo_render[0] / "level_summary_data"
    return ((out / "legend.md").read_text(), pd.read_csv(out / "response_params.csv"),
            pd.read_csv(out / "latency_params.csv"), pd.read_csv(out / "latency_points.csv"),
            pd.read_csv(out / "population.csv"))


def line(legend, label):
    [found] = [x for x in legend.splitlines() if x.startswith(f"- *{label}*:")]
    return found


def test_fit_claims_follow_the_fit_results(summary):
    legend, response, latency, _, _ = summary
    text = line(legend, "response")
    weighting = set(response[response["quantity"] == "weighting"]["note"])
    assert weighting == {"weighted by 1/SE^2 of each level's mean, the SE floored at that of one spike among the "
                         "level's trials (1/n spikes, 1/(n T) spikes/s)"}
    assert next(iter(weighting)) in text
    for params, label in ((response, "response"), (latency, "latency")):
        status = params[params["quantity"] == "status"].set_index("unit")["note"].str.split(":").str[0]
        dashed = sorted(status[status == "poorly constrained"].index)
        sentence = line(legend, label)
        if dashed:
            assert re.search(r"poorly constrained, drawn dashed: " + ", ".join(dashed) + r" \(", sentence)
        else:
            assert "dashed" not in sentence
    assert "unweighted" in line(legend, "latency") and set(latency[latency["quantity"] == "weighting"]["note"]) == {"unweighted"}


def test_latency_claims_follow_the_points(summary):
    legend, _, _, points, _ = summary
    text = line(legend, "latency")
    for unit, n in points.groupby("unit")["n_no_spike"].sum().astype(int).items():
        assert f"{unit} {n}" in text
    left_out = int((~points["in_fit"] & points["latency_ms"].notna()).sum())
    assert f"{left_out} unit-levels were left out of the fit" in text


def test_population_counts_say_what_was_summed(summary):
    legend, _, _, _, population = summary
    n = int(population["n_trials"].iloc[0])
    units = int(population["n_units"].iloc[0])
    assert f"n = {n} trials per level in all, over {units} units" in line(legend, "population")


def test_letters_name_the_panels_where_the_figure_draws_them(demo_render):
    legend = (demo_render[0] / "unit_composite_data" / "legend.md").read_text()
    assert [x.split("*")[1] for x in legend.splitlines()[1:]] == ["a", "b", "c", "d", "e"]


def test_an_automatic_width_is_reported_as_chosen(tmp_path):
    from figspec import pipeline
    from figspec.steps.save import legend

    from helpers import SMALL_SPEC, write_spec

    text = SMALL_SPEC.replace("bin_ms = 10", 'bin_ms = 5\nsmooth = "gaussian"\nkernel_ms = "auto"')
    resolved = pipeline.check(write_spec(tmp_path, text))
    chosen = resolved.panels[1].kernel_ms
    assert isinstance(chosen, float)
    sentence = legend(resolved, pipeline.compute(resolved)).splitlines()[2]
    assert f"SD {chosen:.3g} ms chosen by the Shimazaki & Shinomoto 2010 cost" in sentence
