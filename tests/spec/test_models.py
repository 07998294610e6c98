import pytest
from pydantic import ValidationError

from figspec.registry import PANEL_KINDS
from figspec.spec.models import FigureFile, StimulusSpec, cross_check
from figspec.spec.panels import Panel, PsthPanel

SOURCE = {"spikes": "s.csv", "trials": "t.csv"}


def figure(**over):
    data = {"stimulus": {"per_trial": True}, "sources": {"a": SOURCE},
            "panels": [{"name": "r", "kind": "raster"}]}
    data.update(over)
    return FigureFile.model_validate(data)


def test_good_spec_gets_defaults():
    spec = figure()
    assert spec.figure.formats == ["svg", "pdf", "png"]
    assert spec.panels[0].window_ms == (-50.0, 150.0)


def test_models_are_frozen():
    spec = figure()
    with pytest.raises(ValidationError):
        spec.figure.title = "x"


def test_every_kind_in_the_union_has_a_registry_entry():
    import typing

    union = typing.get_args(Panel)[0]
    kinds = {typing.get_args(m.model_fields["kind"].annotation)[0] for m in typing.get_args(union)}
    assert kinds == set(PANEL_KINDS)
    for kind, entry in PANEL_KINDS.items():
        assert typing.get_args(entry.model.model_fields["kind"].annotation) == (kind,)


@pytest.mark.parametrize("bad, fragment", [
    ({"bin_ms": -5}, "greater than 0"),
    ({"bin_ms": 7}, "whole number of bins"),
    ({"window_ms": [100, 0]}, "start < stop"),
    ({"measure": "hz"}, "spikes_per_s"),
])
def test_bad_psth_keys_are_rejected(bad, fragment):
    with pytest.raises(ValidationError, match=fragment):
        PsthPanel.model_validate({"name": "p", "kind": "psth", **bad})


def test_stimulus_needs_one_kind_of_window():
    with pytest.raises(ValidationError, match="not both"):
        StimulusSpec(per_trial=True, start_ms=0, stop_ms=50)
    with pytest.raises(ValidationError, match="needs both"):
        StimulusSpec(start_ms=0)
    assert StimulusSpec(start_ms=0, stop_ms=50).stop_ms == 50


def test_no_trial_table_needs_a_level_column():
    with pytest.raises(ValidationError, match="spike_columns.level"):
        figure(sources={"a": {"spikes": "s.csv"}})


def test_cross_checks_name_the_key():
    spec = figure(panels=[{"name": "r", "kind": "raster", "source": "b"},
                          {"name": "r", "kind": "psth"}])
    problems = {p.loc: p for p in cross_check(spec)}
    assert ("panels", 0, "source") in problems
    assert ("panels", 1, "name") in problems


@pytest.mark.parametrize("keys, fragment", [
    ({"smooth": "gaussian"}, "needs kernel_ms"),
    ({"kernel_ms": 3}, "smooth is 'none'"),
    ({"smooth": "causal", "kernel_ms": "auto"}, "for smooth = 'gaussian'"),
    ({"measure": "z_score", "window_ms": [0, 100]}, "pre-stimulus bins"),
    ({"baseline_ms": [-80, 0]}, "inside window_ms"),
])
def test_psth_option_combinations(keys, fragment):
    with pytest.raises(ValidationError, match=fragment):
        PsthPanel.model_validate({"name": "p", "kind": "psth", **keys})


def test_db_levels_cannot_be_linear():
    with pytest.raises(ValidationError, match="pressure_db"):
        figure(levels={"unit": "dB SPL", "scale": "linear"})


def test_summary_windows_must_sit_around_onset():
    with pytest.raises(ValidationError, match="start at or after stimulus onset"):
        figure(panels=[{"name": "l", "kind": "latency", "response_ms": [-5, 50]}])
