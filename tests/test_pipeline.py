"""The pipeline's named steps, stopped before drawing, and options that change the grid."""

import pytest

from figspec import pipeline
from figspec.draw.context import styled
from figspec.errors import DataError

from helpers import MINIMAL_SPEC, write_spec


def test_steps_can_stop_before_drawing(minimal_spec):
    resolved = pipeline.resolve(pipeline.load(minimal_spec))
    tables = pipeline.compute(resolved)
    assert set(tables.for_export()) == {"spikes", "rate", "stimulus"}
    assert tables.panels["rate"]["n_trials"].unique().tolist() == [30]


def test_level_subset_fixed_window_and_low_at_top(tmp_path):
    text = (MINIMAL_SPEC.replace("per_trial = true", "start_ms = 0\nstop_ms = 50")
            .replace("[stimulus]", '[levels]\norder = "low_at_top"\nunit = "dB"\n\n[stimulus]')
            .replace('unit = "u2"\nbin_ms = 10', 'unit = "u2"\nbin_ms = 10\nlevels = [20, 60]'))
    resolved = pipeline.resolve(pipeline.load(write_spec(tmp_path, text)))
    tables = pipeline.compute(resolved)
    with styled(resolved.style):
        fig = pipeline.draw(resolved, tables)
    raster_axes, rate_axes = fig.axes[:9], fig.axes[9:]
    labels = [ax.get_ylabel().split("\n")[0] for ax in raster_axes]
    assert labels[0] == "0 dB" and labels[-1] == "80 dB"
    # the rate panel repeats over its own two levels, labelled since its rows differ from the raster's
    assert [ax.get_ylabel().split("\n")[0] for ax in rate_axes] == ["20 dB", "60 dB"]


def test_unknown_level_is_a_data_error_at_its_key(tmp_path):
    text = MINIMAL_SPEC.replace('unit = "u2"\nbin_ms = 10', 'unit = "u2"\nbin_ms = 10\nlevels = [25]')
    with pytest.raises(DataError) as info:
        pipeline.check(write_spec(tmp_path, text))
    [problem] = info.value.problems
    assert problem.loc == ("panels", 1, "levels") and problem.got == "25"


def test_several_units_need_a_unit_key(tmp_path):
    text = MINIMAL_SPEC.replace('kind = "raster"\nunit = "u2"', 'kind = "raster"')
    with pytest.raises(DataError, match="several units"):
        pipeline.check(write_spec(tmp_path, text))


def test_a_failed_fit_still_renders_the_data(tmp_path):
    from figspec.errors import FigspecWarning

    text = MINIMAL_SPEC.replace("[stimulus]", '[levels]\nunit = "dB SPL"\nscale = "pressure_db"\n\n[stimulus]') + (
        '\n[[panels]]\nname = "lat"\nkind = "latency"\nunit = "u2"\nlevels = [20, 30, 40, 50]\nfit = "pieron"\n')
    text = text.replace("width_mm = 100", "width_mm = 183")
    # u2 responds significantly only from 50 dB: too few responsive levels are left for 3 parameters
    with pytest.warns(FigspecWarning, match="Piéron fit failed: 1 levels for 3 parameters"):
        written = pipeline.render(write_spec(tmp_path, text), tmp_path / "out", ["png"]).files
    assert (tmp_path / "out" / "spec.png") in written
    import pandas as pd

    params = pd.read_csv(tmp_path / "out" / "spec_data" / "lat_params.csv")
    assert params.set_index("quantity").loc["status", "note"].startswith("failed")
    assert pd.read_csv(tmp_path / "out" / "spec_data" / "lat_fit.csv").empty
    points = pd.read_csv(tmp_path / "out" / "spec_data" / "lat_points.csv")
    assert points["note"].str.contains("left out of the fit: no significant response").sum() == 3
