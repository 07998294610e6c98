"""Artist-level checks of the level grid drawn from the demo data."""

import numpy as np
import pytest
from figspec.draw.raster import tick_positions

from figspec import pipeline
from figspec.draw.context import styled

from helpers import DEMO_SPEC, draw_now, demo_text


@pytest.fixture(scope="module")
def drawn():
    resolved = pipeline.resolve(pipeline.load(DEMO_SPEC))
    tables = pipeline.compute(resolved)
    with styled(resolved.style):
        fig = pipeline.draw(resolved, tables)
        draw_now(fig)
    return resolved, tables, fig


def grid(fig, n_cols=2):
    """Rows of [raster axes, rate axes]: each panel's column of axes is added top to bottom."""
    axes = fig.axes
    n_rows = len(axes) // n_cols
    return [[axes[c * n_rows + r] for c in range(n_cols)] for r in range(n_rows)]


def test_one_row_per_level_high_at_top(drawn):
    resolved, tables, fig = drawn
    rows = grid(fig)
    assert len(rows) == 9
    labels = [r[0].get_ylabel().split("\n")[0] for r in rows]
    assert labels[0] == "80 dB SPL" and labels[-1] == "0 dB SPL"
    assert all(r[0].get_ylabel().endswith("n = 30") for r in rows)


def test_raster_is_one_compound_path_per_row_with_one_tick_per_spike(drawn):
    from matplotlib.path import Path

    resolved, tables, fig = drawn
    raster = tables.panels["spikes"]
    for row in grid(fig):
        level = float(row[0].get_ylabel().split(" ")[0])
        [patch] = [p for p in row[0].patches if p.get_gid() == "raster"]
        path = patch.get_path()
        n_spikes = raster[(raster["level"] == level)]["time_ms"].notna().sum()
        assert len(path.vertices) == 2 * n_spikes
        assert (path.codes[0::2] == Path.MOVETO).all() and (path.codes[1::2] == Path.LINETO).all()
        expected = np.sort(raster[(raster["level"] == level)]["time_ms"].dropna().to_numpy())
        np.testing.assert_array_equal(np.sort(tick_positions(patch)), expected)
        assert not row[0].collections or all(c.get_gid() != "raster" for c in row[0].collections)


def test_raster_rows_span_all_trials_presented(drawn):
    _, _, fig = drawn
    for row in grid(fig):
        assert row[0].get_ylim() == (29.5, -0.5)


def test_every_rate_row_has_the_same_y_limits(drawn):
    _, tables, fig = drawn
    limits = {row[1].get_ylim() for row in grid(fig)}
    assert len(limits) == 1
    assert limits.pop()[1] >= tables.panels["rate"]["rate"].max()


def test_unlocked_rows_scale_apart(tmp_path):
    spec = tmp_path / "unlocked.toml"
    spec.write_text(demo_text("level_grid").replace("bin_ms = 5", "bin_ms = 5\nlock_y = false"))
    resolved = pipeline.resolve(pipeline.load(spec))
    with styled(resolved.style):
        fig = pipeline.draw(resolved, pipeline.compute(resolved))
    assert len({row[1].get_ylim() for row in grid(fig)}) > 1


def test_every_row_has_the_declared_x_limits(drawn):
    _, _, fig = drawn
    assert {ax.get_xlim() for ax in fig.axes} == {(-50.0, 150.0)}


def test_shading_opacity_increases_with_level(drawn):
    _, _, fig = drawn
    for col in (0, 1):
        alphas = []
        for row in grid(fig)[::-1]:  # bottom (0 dB) to top (80 dB)
            spans = [p for p in row[col].patches if p.get_gid() == "stimulus"]
            assert len(spans) == 1
            alphas.append(spans[0].get_alpha())
        assert np.all(np.diff(alphas) > 0)


def test_stimulus_spans_the_burst(drawn):
    _, _, fig = drawn
    span = [p for p in fig.axes[0].patches if p.get_gid() == "stimulus"][0]
    box = span.get_bbox()
    assert (box.x0, box.x1) == pytest.approx((0.0, 50.0))


def test_titles_once_per_column_and_x_label_only_at_the_bottom(drawn):
    _, _, fig = drawn
    rows = grid(fig)
    assert [ax.get_title() for ax in rows[0]] == ["Spikes", "Firing rate"]
    assert all(ax.get_title() == "" for row in rows[1:] for ax in row)
    assert all(ax.get_xlabel() == "Time from stimulus onset (ms)" for ax in rows[-1])
    assert all(ax.get_xlabel() == "" for row in rows[:-1] for ax in row)
    assert fig.get_suptitle().startswith("Unit u1")


def test_figure_has_the_declared_physical_size(drawn):
    resolved, _, fig = drawn
    w, h = fig.get_size_inches() * 25.4
    assert (w, h) == pytest.approx((resolved.spec.model.figure.width_mm, resolved.spec.model.figure.height_mm))


def test_raster_ticks_read_as_ticks_not_dots(drawn):
    """At the demo's 30 trials per row a tick at the style's 0.6 pt would be about as long as
    wide; its width is lowered (not below 0.25 pt) so each tick is 2.5 times as long as wide."""
    _, _, fig = drawn
    for row in grid(fig):
        [patch] = [p for p in row[0].patches if p.get_gid() == "raster"]
        height_pt = row[0].get_window_extent().height / fig.dpi * 72
        length_pt = height_pt / 30 * 0.8
        assert 0.25 <= patch.get_linewidth() <= 0.6
        assert length_pt / patch.get_linewidth() >= 2.0          # the layout takes about a fifth less
