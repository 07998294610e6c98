"""Artist checks of the summary demo figure (response and latency vs level)."""

import numpy as np
import pytest

from figspec import pipeline
from figspec.draw.context import styled

from helpers import SPECS, draw_now, figspec_warnings


@pytest.fixture(scope="module")
def drawn():
    resolved = pipeline.resolve(pipeline.load(SPECS / "level_summary.toml"))
    with figspec_warnings() as caught:
        tables = pipeline.compute(resolved)
    assert any("u2: Naka–Rushton fit poorly constrained" in str(w.message) for w in caught)
    with styled(resolved.style):
        fig = pipeline.draw(resolved, tables)
        draw_now(fig)
    axes = {ax.get_title(): ax for ax in fig.axes if ax.get_title()}
    return resolved, tables, axes


def by_gid(ax, prefix):
    return {line.get_gid()[len(prefix):].split(":")[0]: line for line in ax.lines
            if (line.get_gid() or "").startswith(prefix)}


def test_response_panel_points_fits_and_thresholds(drawn):
    _, tables, axes = drawn
    ax = axes["Response vs sound level"]
    points = tables.panels["response"]["points"]
    filled, open_ = by_gid(ax, "category:"), by_gid(ax, "points_ns:")
    assert set(filled) == {"u1", "u2", "u3"} and set(by_gid(ax, "fit:")) == {"u1", "u2", "u3"}
    for unit, rows in points.groupby("unit"):
        sig = rows[rows["significant"]]
        np.testing.assert_array_equal(filled[unit].get_xdata(), sig["level"])
        np.testing.assert_array_equal(filled[unit].get_ydata(), sig["response"])
        assert len(open_[unit].get_xdata()) == (~rows["significant"]).sum()
    colours = {line.get_color() for line in filled.values()}
    assert len(colours) == 3
    assert set(by_gid(ax, "threshold:")) == {"u1", "u2", "u3"}
    assert ax.get_xlabel() == "Sound level (dB SPL)"
    assert [t.get_text() for t in ax.get_legend().get_texts()] == ["u1", "u2", "u3", "threshold (test)"]


def test_fit_curve_is_the_fit_table(drawn):
    _, tables, axes = drawn
    curve = tables.panels["latency"]["fit"]
    line = by_gid(axes["Latency vs sound level"], "fit:")["u2"]
    np.testing.assert_array_equal(line.get_ydata(), curve[curve["unit"] == "u2"]["latency_ms"])


def test_population_panel_rows_share_limits_and_show_sem(drawn):
    _, _, axes = drawn
    fig = axes["Response vs sound level"].get_figure(root=True)
    population = [ax for ax in fig.axes if any(p.get_gid() == "rate_sem" for p in ax.patches)]
    assert len(population) == 3
    assert len({ax.get_ylim() for ax in population}) == 1


def test_latency_marks_unresponsive_levels_open_and_offsets_units(drawn):
    _, tables, axes = drawn
    ax = axes["Latency vs sound level"]
    points = tables.panels["latency"]["points"]
    filled, open_ = by_gid(ax, "category:"), by_gid(ax, "points_ns:")
    for unit, rows in points.groupby("unit"):
        assert len(filled[unit].get_xdata()) == rows["responsive"].sum()
        assert len(open_[unit].get_xdata()) == (~rows["responsive"]).sum()
    # every unit responds at 80 dB: the data keep the true level, and on the page the three markers sit
    # side by side (in points, so the offset shows at print size, not half a pixel)
    assert {line.get_xdata()[-1] for line in filled.values()} == {80.0}
    marker_px = filled[next(iter(filled))].get_markersize() * ax.figure.dpi / 72
    shown = sorted(line.get_transform().transform((80.0, line.get_ydata()[-1]))[0] for line in filled.values())
    steps = np.diff(shown)          # evenly, at most a marker width (less where levels are close on the page)
    assert np.allclose(steps, steps[0]) and 0.5 * marker_px < steps[0] <= marker_px * (1 + 1e-9)
    assert len(ax.containers) == 3          # one error-bar container per unit


def test_y_labels_say_what_is_plotted():
    from figspec.draw.level_response import response_label
    from figspec.spec.panels import LevelResponsePanel

    panel = LevelResponsePanel.model_validate({"name": "r", "kind": "level_response", "response_ms": [0, 60],
                                               "baseline_ms": [-60, 0]})
    assert response_label(panel, "spikes/s") == "Rate in 0–60 ms (spikes/s)"
    assert response_label(panel.model_copy(update={"subtract_baseline": True}), "spikes/s") == \
        "Rate above baseline (spikes/s)"
