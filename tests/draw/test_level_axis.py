"""Level axes: plain tick labels on a log axis, x_ticks honoured on every axis type, and a level
of 0 on a log axis at its own position left of the log range, after an axis break."""

from __future__ import annotations

import numpy as np
import pytest

from figspec import pipeline
from figspec.draw.level_axis import ZERO_GAP_DECADES, LogWithZero
from helpers import figspec_warnings, write_spec

CONTRAST = """\
[figure]
title = "Contrast"
width_mm = 120
height_mm = 80
formats = ["png"]

[levels]
quantity = "Contrast"
unit = "%"

[stimulus]
start_ms = 0
stop_ms = 50

[sources.rig]
spikes = "spikes.csv"
trials = "trials.csv"
spike_columns = { unit = "unit", trial = "trial", time = "time_s" }
trial_columns = { trial = "trial", level = "contrast" }

[[panels]]
name = "curve"
kind = "level_response"
unit = "u1"
level_axis = "log"
"""


@pytest.fixture()
def contrast(tmp_path):
    import pandas as pd

    rng = np.random.default_rng(5)
    levels = np.array([0, 2, 4, 8, 16, 32, 64])                 # invented contrasts, %
    trials = pd.DataFrame({"trial": np.arange(levels.size * 20), "contrast": np.repeat(levels, 20)})
    rows = []
    for trial, level in zip(trials["trial"], trials["contrast"]):
        n = rng.poisson(1 + 0.1 * level)
        rows += [("u1", trial, t) for t in rng.uniform(0.0, 0.05, n)]
        rows += [("u1", trial, t) for t in rng.uniform(-0.05, 0.0, rng.poisson(0.5))]
    pd.DataFrame(rows, columns=["unit", "trial", "time_s"]).to_csv(tmp_path / "spikes.csv", index=False)
    trials.to_csv(tmp_path / "trials.csv", index=False)
    return tmp_path


def _axes(folder, text):
    with figspec_warnings():
        resolved = pipeline.check(write_spec(folder, text))
        fig = pipeline.draw(resolved, pipeline.compute(resolved))
    from helpers import draw_now

    draw_now(fig)
    return fig.subfigs[0].axes[0]


def test_a_level_of_zero_sits_left_of_the_log_range_after_a_break(contrast):
    ax = _axes(contrast, CONTRAST)
    labels = [t.get_text() for t in ax.get_xticklabels() if t.get_text()]
    assert labels[0] == "0" and "10" in labels and not any("^" in t or "$" in t for t in labels)
    scale = LogWithZero(np.array([0, 2, 64]))
    assert scale.forward(0.0) == pytest.approx(np.log10(2) - ZERO_GAP_DECADES)
    assert scale.forward(64.0) == pytest.approx(np.log10(64))
    assert scale.inverse(scale.forward(np.array([0, 1, 2, 10, 64]))) == pytest.approx([0, 1, 2, 10, 64])
    assert [line for line in ax.get_lines() if line.get_gid() == "axis_break"]
    xs = np.concatenate([line.get_xdata() for line in ax.get_lines() if str(line.get_gid()).startswith("category")])
    assert 0.0 in xs                                             # the point at 0 stays in the data drawn


def test_x_ticks_are_honoured_on_a_log_axis(contrast):
    ax = _axes(contrast, CONTRAST.replace('level_axis = "log"', 'level_axis = "log"\nx_ticks = [0, 4, 16, 64]'))
    assert list(ax.get_xticks()) == [0, 4, 16, 64]
    assert [t.get_text() for t in ax.get_xticklabels()] == ["0", "4", "16", "64"]


def test_a_plain_log_axis_labels_ticks_plainly(contrast):
    import pandas as pd

    trials = pd.read_csv(contrast / "trials.csv")
    trials[trials["contrast"] > 0].to_csv(contrast / "trials.csv", index=False)
    spikes = pd.read_csv(contrast / "spikes.csv")
    spikes[spikes["trial"].isin(trials[trials["contrast"] > 0]["trial"])].to_csv(contrast / "spikes.csv", index=False)
    ax = _axes(contrast, CONTRAST)
    assert ax.get_xscale() == "log"
    assert "10" in [t.get_text() for t in ax.get_xticklabels()]
