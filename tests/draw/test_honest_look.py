"""What the summary figures show is true at print size, on data unlike the demo: a contrast series
0-100 % (a level of 0 = no stimulus) with eight units on a trial clock in ms."""

import warnings

import numpy as np
import pandas as pd
import pytest

from figspec import pipeline
from figspec.draw.context import styled
from figspec.errors import FigspecWarning
from figspec.steps.save import legend

from helpers import draw_now

CONTRAST = [0, 4, 8, 16, 32, 64, 100]
UNITS = [f"c{i}" for i in range(1, 9)]


def contrast_files(folder, n_units=8):
    """Eight units; trials numbered per contrast ([contrast, trial] key); times in ms on each trial's clock."""
    rng = np.random.default_rng(11)
    trials = pd.DataFrame([(c, t, 200.0, 300.0, 800.0) for c in CONTRAST for t in range(1, 13)],
                          columns=["contrast_pct", "trial", "onset_ms", "offset_ms", "stop_ms"])
    rows = []
    for k, unit in enumerate(UNITS[:n_units]):
        for c, t in zip(trials["contrast_pct"], trials["trial"]):
            rate = 5 + 60 * c ** 2 / (c ** 2 + (10 + 3 * k) ** 2)          # spikes/s, Naka-Rushton in contrast
            n = rng.poisson(rate * 0.1)
            rows += [(unit, c, t, x) for x in 200 + rng.uniform(5, 100, n)]
            rows += [(unit, c, t, x) for x in rng.uniform(0, 800, rng.poisson(5 * 0.8))]
    pd.DataFrame(rows, columns=["cell", "contrast_pct", "trial", "t_ms"]).sample(frac=1, random_state=1).to_csv(
        folder / "spikes.csv", index=False)
    trials.to_csv(folder / "trials.csv", index=False)


SPEC = """[figure]
width_mm = 183
height_mm = 170
[levels]
quantity = "Contrast"
unit = "%"
scale = "linear"
[units]
names = {{ c1 = "Cell one" }}
[stimulus]
per_trial = true
label = "Grating"
[analysis]
response_ms = [0, 100]
baseline_ms = [-100, 0]
[sources.v1]
spikes = "spikes.csv"
trials = "trials.csv"
time_unit = "ms"
clock = "trial"
spike_columns = {{ unit = "cell", trial = ["contrast_pct", "trial"], time = "t_ms" }}
trial_columns = {{ trial = ["contrast_pct", "trial"], level = "contrast_pct", onset = "onset_ms", offset = "offset_ms", stop = "stop_ms" }}
[[panels]]
name = "rows"
kind = "psth"
units = {units}
window_ms = [-100, 200]
bin_ms = 10
[[panels]]
name = "response"
kind = "level_response"
units = {units}
fit = "naka_rushton"
fit_resamples = 50
[[panels]]
name = "latency"
kind = "latency"
units = {units}
"""


@pytest.fixture(scope="module")
def drawn(tmp_path_factory):
    folder = tmp_path_factory.mktemp("contrast")
    contrast_files(folder)
    path = folder / "contrast.toml"
    path.write_text(SPEC.format(units=str(UNITS).replace("'", '"')))
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FigspecWarning)
        resolved = pipeline.check(path)
        tables = pipeline.compute(resolved)
        text = legend(resolved, tables)
    with styled(resolved.style):
        fig = pipeline.draw(resolved, tables)
        draw_now(fig)
    axes = {ax.get_title(): ax for ax in fig.axes if ax.get_title()}
    return resolved, tables, fig, axes, text, [str(w.message) for w in caught]


def test_check_warns_before_a_colour_repeats_and_the_units_past_the_palette_change_marker(drawn):
    resolved, _, _, axes, _, notes = drawn
    size = len(resolved.style.palette.units)
    assert size < 8
    assert any(f"shows 8 units but the style's palette has {size} colours" in n for n in notes)
    ax = axes["Response vs contrast"]
    seen = {(line.get_color(), line.get_marker()) for line in ax.lines if (line.get_gid() or "").startswith("category:")}
    assert len(seen) == 8                                  # every unit distinct by colour and marker together


def test_markers_at_0_are_not_clipped_and_coincident_units_sit_side_by_side(drawn):
    _, _, fig, axes, _, _ = drawn
    ax = axes["Response vs contrast"]
    points = [line for line in ax.lines if (line.get_gid() or "").startswith(("category:", "points_ns:"))]
    assert points and all(not line.get_clip_on() for line in points)
    marker_px = points[0].get_markersize() * fig.dpi / 72
    at_100 = sorted(line.get_transform().transform((100.0, 0.0))[0] for line in points
                    if line.get_gid().startswith("category:") and 100.0 in line.get_xdata())
    # side by side, evenly, at most one marker width apart (here less: 0, 4 and 8 % are close on the page)
    assert len(at_100) == 8 and np.allclose(np.diff(at_100), np.diff(at_100)[0])
    assert 0 < np.diff(at_100)[0] <= marker_px * (1 + 1e-9)
    thresholds = sorted(line.get_transform().transform((line.get_xdata()[0], 0))[0] for line in ax.lines
                        if (line.get_gid() or "").startswith("threshold:") and line.get_xdata()[0] == 4.0)
    assert len(thresholds) < 2 or np.min(np.diff(thresholds)) >= marker_px * 0.999   # none hides another


def test_a_level_without_a_stimulus_is_left_unshaded_and_the_key_says_so(drawn):
    _, tables, fig, _, _, _ = drawn
    stim = tables.stimulus["rows"]
    assert stim.set_index("level").loc[0.0, "presented"].all() == False      # noqa: E712 (numpy bool)
    assert stim[stim["level"] > 0]["presented"].all()
    rows = [ax for ax in fig.axes if ax.get_ylabel().startswith(("0 %", "100 %"))]
    shaded = {ax.get_ylabel().split("\n")[0]: sum(p.get_gid() == "stimulus" for p in ax.patches) for ax in rows}
    assert shaded["0 %"] == 0 and shaded["100 %"] == 1
    key_texts = [t.get_text() for holder in [fig, *fig.subfigs] for lg in holder.legends for t in lg.get_texts()]
    assert "0 %: none" in key_texts


def test_population_rows_say_what_n_counts_and_the_top_sits_just_above_the_data(drawn):
    _, tables, fig, _, _, _ = drawn
    rows = [ax for ax in fig.axes if "units (" in ax.get_ylabel()]
    assert rows and all(ax.get_ylabel().split("\n")[1] == "n = 8 units (96 trials)" for ax in rows)
    table = tables.panels["rows"]
    peak = float((table["rate"] + table["rate_sem"].fillna(0)).max())
    top = rows[0].get_ylim()[1]
    assert peak <= top < 1.25 * peak


def test_legends_name_what_was_fitted_and_the_units_as_the_figure_does(drawn):
    _, _, _, _, text, _ = drawn
    assert "fits on the level in %" in text and "linear level" not in text
    assert "Cell one (c1)" in text
    assert "+/-" not in text
    assert "side by side at each level" in text
    assert "refits that succeeded" in text


def test_a_fit_on_db_levels_names_the_linear_quantity():
    from figspec.compute.fit_tables import fitted_on

    # the Naka-Rushton fit of dB SPL levels runs on 10^(L/20) (sound pressure), of power in dB on 10^(L/10)
    assert fitted_on("pressure_db", "dB SPL") == "on the linear quantity 10^(L/20) of the level L in dB SPL"
    assert fitted_on("power_db", "dB") == "on the linear quantity 10^(L/10) of the level L in dB"
