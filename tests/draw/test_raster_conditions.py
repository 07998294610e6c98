"""A raster split by a condition, drawn as ticks or as a density image: each condition's block of
trials is ruled off and named, and each level's label counts the trials of every block."""

import pytest
from matplotlib.text import Text

from figspec import pipeline

from helpers import SPECS, silencing_head, write_spec

DATA = SPECS / "data" / "silencing"


@pytest.mark.parametrize("draw_as", ["ticks", "density"])
def test_condition_blocks_are_ruled_named_and_counted(tmp_path, draw_as):
    panels = f"""
[[panels]]
name = "r"
kind = "raster"
unit = "u05"
levels = [40, 80]
draw_as = "{draw_as}"
conditions = {{ column = "light", values = [false, true], names = ["off", "on"] }}
"""
    resolved = pipeline.check(write_spec(tmp_path, silencing_head(str(DATA / "s1_spikes.csv"),
                                                                  str(DATA / "s1_trials.csv")) + panels))
    tables = pipeline.compute(resolved)
    fig = pipeline.draw(resolved, tables)
    axes = [ax for ax in fig.get_axes() if ax.get_gid() != "raster_density_key" and ax.get_ylim()[0] > 1]
    assert len(axes) == 2
    table = tables.panels["r"]
    for ax in axes:
        names = {t.get_text(): t.get_position()[1] for t in ax.texts if (t.get_gid() or "").startswith("condition_name")}
        rules = [line.get_ydata()[0] for line in ax.lines if (line.get_gid() or "").startswith("condition_rule")]
        assert list(names) == ["off", "on"] and names["off"] < names["on"]      # the first block on top
        assert rules == [14.5]                                                   # between line 14 and line 15
    counts = table.groupby(["level", "condition"])["n_condition"].first()
    assert counts.tolist() == [15, 15, 15, 15]
    labels = [t.get_text() for t in fig.findobj(Text)]
    assert labels.count("40 dB SPL\nn = 15 + 15") == 1 and labels.count("80 dB SPL\nn = 15 + 15") == 1
