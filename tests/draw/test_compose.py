"""Artist-level checks of composition: grid cells, repeats, shared scales, stimulus encodings,
letters and scale bars."""

import numpy as np
import pytest
from matplotlib.colors import to_rgb

from figspec import pipeline
from figspec.draw.context import styled
from figspec.draw.shading import wavelength_rgb

from helpers import MINIMAL_SPEC, SPECS, draw_now, write_spec, demo_text


def render(path):
    resolved = pipeline.resolve(pipeline.load(path))
    tables = pipeline.compute(resolved)
    with styled(resolved.style):
        fig = pipeline.draw(resolved, tables)
        draw_now(fig)
    return fig, tables


@pytest.fixture(scope="module")
def composite():
    return render(SPECS / "unit_composite.toml")


def panel_axes(fig, title):
    """The axes of the subfigure whose first axes has ``title``."""
    for sub in fig.subfigs:
        if sub.axes and sub.axes[0].get_title() == title:
            return sub.axes
    raise KeyError(title)


def test_repeats_fill_their_cells(composite):
    fig, _ = composite
    spikes, rate = panel_axes(fig, "Spikes"), panel_axes(fig, "Firing rate")
    overlay = panel_axes(fig, "Firing rate, all levels")[0]
    response, latency = panel_axes(fig, "Response vs sound level")[0], panel_axes(fig, "Latency vs sound level")[0]
    assert len(spikes) == 9 and len(rate) == 9
    width, height = fig.bbox.width, fig.bbox.height
    x = lambda ax: ax.get_window_extent().x0 / width       # noqa: E731  (fraction of the figure)
    y = lambda ax: ax.get_window_extent().y0 / height      # noqa: E731
    assert x(spikes[0]) < x(rate[0]) < x(overlay) == pytest.approx(x(response), abs=0.05)
    assert x(overlay) > 2 / 3 - 0.1                         # third column of widths [1, 1, 1.25]
    assert y(overlay) > y(response) > y(latency)
    assert [y(a) for a in spikes] == sorted((y(a) for a in spikes), reverse=True)   # 80 dB on top
    np.testing.assert_allclose([y(a) for a in spikes], [y(a) for a in rate], atol=0.01)  # rows line up


def test_shared_group_locks_limits_and_others_stay_free(composite):
    fig, tables = composite
    locked = panel_axes(fig, "Firing rate") + panel_axes(fig, "Firing rate, all levels")[:1]
    assert len({ax.get_ylim() for ax in locked}) == 1
    assert locked[0].get_ylim()[1] >= tables.panels["rate"]["rate"].max()
    assert panel_axes(fig, "Response vs sound level")[0].get_ylim() != locked[0].get_ylim()


def test_overlay_has_one_line_per_level_in_level_order(composite):
    fig, tables = composite
    ax = panel_axes(fig, "Firing rate, all levels")[0]
    lines = [p for p in ax.patches if (p.get_gid() or "").startswith("rate:")]
    assert len(lines) == 9
    np.testing.assert_array_equal(ax.get_xticks()[(ax.get_xticks() >= -50) & (ax.get_xticks() <= 150)],
                                  [-50, 0, 50, 100, 150])          # x_step = 50


def test_letters_follow_reading_order(composite):
    fig, _ = composite
    letters = [(sub.get_suptitle(), sub.axes[0].get_title()) for sub in fig.subfigs]
    assert letters == [("a", "Spikes"), ("b", "Firing rate"), ("c", "Firing rate, all levels"),
                       ("d", "Response vs sound level"), ("e", "Latency vs sound level")]


def test_scale_bars_measure_what_they_say(composite):
    fig, _ = composite
    bottom = panel_axes(fig, "Firing rate")[-1]
    time_bar = [l for l in bottom.lines if l.get_gid() == "time_bar"][0]
    rate_bar = [l for l in bottom.lines if l.get_gid() == "rate_bar"][0]
    assert np.ptp(time_bar.get_xdata()) == 50 and np.ptp(rate_bar.get_ydata()) == 100
    labels = {t.get_gid(): t.get_text() for t in bottom.texts}
    assert labels == {"time_bar_label": "50 ms", "rate_bar_label": "100 spikes/s"}      # the gap is an offset
    assert not any(s.get_visible() for s in bottom.spines.values())


def _stimulus_spans(fig, title):
    return [[p for p in ax.patches if p.get_gid() == "stimulus"][0] for ax in panel_axes(fig, title)]


def _variant(tmp_path, stimulus_keys):
    text = MINIMAL_SPEC.replace("per_trial = true", "per_trial = true\n" + stimulus_keys)
    return render(write_spec(tmp_path, text))[0]


def test_opacity_rises_with_level_linear_and_log(tmp_path):
    fig = _variant(tmp_path, "opacity = [0.1, 0.5]")
    alphas = [s.get_alpha() for s in _stimulus_spans(fig, "Spikes")][::-1]     # bottom row first
    assert alphas[0] == pytest.approx(0.1) and alphas[-1] == pytest.approx(0.5)
    assert np.all(np.diff(alphas) > 0)
    np.testing.assert_allclose(np.diff(alphas), np.diff(alphas)[0])            # linear in level


def test_colormap_encoding_darkens_with_level(tmp_path):
    fig = _variant(tmp_path, 'encoding = "colormap"\ncolormap = "Greys"')
    luminance = [np.dot(to_rgb(s.get_facecolor()), [0.2126, 0.7152, 0.0722])
                 for s in _stimulus_spans(fig, "Spikes")][::-1]
    assert np.all(np.diff(luminance) < 0)


def test_wavelength_encoding_uses_the_spectrum_colour(tmp_path):
    fig = _variant(tmp_path, 'encoding = "wavelength"\nwavelength_nm = 470')
    spans = _stimulus_spans(fig, "Spikes")
    assert to_rgb(spans[0].get_facecolor()) == pytest.approx(wavelength_rgb(470), abs=1 / 255)
    assert np.all(np.diff([s.get_alpha() for s in spans][::-1]) > 0)


def test_wavelength_approximation_at_its_knots():
    # piecewise-linear approximation after Bruton (1996, from memory): pure primaries and
    # secondaries at its knots, where the 0.8 gamma leaves 0 and 1 unchanged
    assert wavelength_rgb(440) == pytest.approx((0, 0, 1))
    assert wavelength_rgb(510) == pytest.approx((0, 1, 0))
    assert wavelength_rgb(580) == pytest.approx((1, 1, 0))
    assert wavelength_rgb(645) == pytest.approx((1, 0, 0))


def test_stimulus_bar_sits_above_the_axes(tmp_path):
    fig = _variant(tmp_path, 'mark = "bar"')
    bar = _stimulus_spans(fig, "Spikes")[0]
    assert not bar.get_clip_on() and bar.get_y() > 1.0


def test_differing_offsets_are_drawn_as_a_range(tmp_path):
    import pandas as pd

    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    trials.loc[trials.index % 2 == 0, "offset_s"] += 0.02           # half the bursts 20 ms longer
    trials.to_csv(tmp_path / "trials.csv", index=False)
    text = MINIMAL_SPEC.replace("@DATA@/trials.csv", str(tmp_path / "trials.csv"))
    fig, _ = render(write_spec(tmp_path, text))
    ax = panel_axes(fig, "Spikes")[0]
    spans = [p for p in ax.patches if p.get_gid() == "stimulus"]
    assert len(spans) == 2 and spans[1].get_alpha() < spans[0].get_alpha()
    assert (spans[1].get_x(), spans[1].get_x() + spans[1].get_width()) == pytest.approx((50, 70))
    assert "range of onsets or offsets" in fig.legends[0].get_title().get_text()


def test_columns_and_units(tmp_path):
    text = MINIMAL_SPEC.replace('kind = "raster"\nunit = "u2"',
                                'kind = "raster"\nunits = ["u1", "u2", "u3"]\nrepeat = "unit"\nlevels = [80]')
    text = text.replace('kind = "psth"\nunit = "u2"', 'kind = "psth"\nunit = "u2"\narrange = "columns"\n'
                                                      'levels = [0, 40, 80]')
    fig, _ = render(write_spec(tmp_path, text))
    raster, rate = fig.subfigs[0].axes, fig.subfigs[1].axes
    assert [ax.get_ylabel().split("\n")[0] for ax in raster] == ["u1", "u2", "u3"]
    assert [ax.get_title() for ax in rate] == ["0, n = 30", "40, n = 30", "80, n = 30"]
    assert len({round(ax.get_window_extent().y0, 3) for ax in rate}) == 1
    assert len({ax.get_ylim() for ax in rate}) == 1                 # rate repeats locked by default


def test_letter_case_and_position_come_from_the_style(tmp_path):
    text = demo_text("unit_composite")
    text += '\n[style.letters]\ncase = "upper"\nposition = "center"\n'
    fig, _ = render(write_spec(tmp_path, text))
    sub = fig.subfigs[0]
    assert sub.get_suptitle() == "A"
    assert sub._suptitle.get_horizontalalignment() == "center"


def test_scale_bar_rows_keep_a_baseline_and_hold_no_invisible_text(composite):
    """Text kept only to reserve space is selectable in a PDF and read by screen readers: none."""
    from matplotlib.colors import to_rgba
    from matplotlib.text import Text

    fig, _ = composite
    rate = panel_axes(fig, "Firing rate")
    hidden = [t.get_text() for t in fig.findobj(Text) if t.get_text().strip() and t.get_visible()
              and (to_rgba(t.get_color())[3] == 0 or t.get_alpha() == 0)]
    assert hidden == []
    for ax in rate:
        [baseline] = [line for line in ax.get_lines() if line.get_gid() == "baseline"]
        assert list(baseline.get_ydata()) == [0.0, 0.0]
        assert not any(t.get_visible() and t.get_text() for t in ax.get_xticklabels())


def test_the_stimulus_key_sits_under_the_shaded_panels_only(tmp_path):
    """Two shaded panels (raster, rate) beside a level_response panel: the key is centred under
    the two, not under the figure, and below every panel."""
    text = demo_text("level_grid").replace('journal = "nature"', "") + """
[[panels]]
name = "response"
kind = "level_response"
unit = "u1"
response_ms = [0, 60]
baseline_ms = [-50, 0]
"""
    fig, _ = render(write_spec(tmp_path, text))
    renderer = fig.canvas.get_renderer()
    shaded = [sub for sub in fig.subfigs if sub.get_gid() in ("spikes", "rate")]
    other = next(sub for sub in fig.subfigs if sub.get_gid() == "response")
    left, right = min(s.bbox.x0 for s in shaded), max(s.bbox.x1 for s in shaded)
    key = fig.legends[0].get_window_extent(renderer)
    assert (key.x0 + key.x1) / 2 == pytest.approx((left + right) / 2, abs=2)
    assert key.x1 < other.bbox.x0                                  # not under the unshaded panel
    assert key.y1 <= min(s.bbox.y0 for s in shaded) + 1            # below the panels
