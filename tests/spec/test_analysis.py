"""``[analysis]``: one set of windows and test settings for every panel that tests, notes when
two panels test the same unit and level differently, legends that state the windows."""

import warnings

import numpy as np
import pytest

from figspec import pipeline
from figspec.errors import FigspecWarning, SpecError
from figspec.spec.loader import load_spec

from helpers import MINIMAL_SPEC, write_spec

# a response and a latency panel of one unit, on a trial table the demo's size (9 levels x 30 trials)
SUMMARY = MINIMAL_SPEC.replace("[stimulus]", "@ANALYSIS@\n[stimulus]") + """
[[panels]]
name = "response"
kind = "level_response"
unit = "u2"
@RESPONSE@

[[panels]]
name = "latency"
kind = "latency"
unit = "u2"
@LATENCY@
"""


def spec(tmp_path, analysis="", response_keys="", latency_keys=""):
    text = SUMMARY.replace("@ANALYSIS@", analysis).replace("@RESPONSE@", response_keys)
    return write_spec(tmp_path, text.replace("@LATENCY@", latency_keys))


def loaded(path):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", FigspecWarning)
        model = load_spec(path).model
    return model, [str(w.message) for w in caught if issubclass(w.category, FigspecWarning)]


def test_every_testing_panel_takes_the_figures_windows_and_test_settings(tmp_path):
    model, notes = loaded(spec(tmp_path, '[analysis]\nresponse_ms = [0, 60]\nbaseline_ms = [-300, 0]\n'
                                         'alpha = 0.01\nzero_differences = "keep"\ncorrection = "none"\n'))
    response, latency = model.panels[2], model.panels[3]
    for panel in (response, latency):
        assert (panel.response_ms, panel.baseline_ms) == ((0, 60), (-300, 0))
        assert (panel.alpha, panel.zero_differences, panel.correction) == (0.01, "keep", "none")
    assert notes == []
    assert model.panels[1].kind == "psth" and model.panels[1].baseline_ms is None   # a psth does not test


def test_a_panel_that_sets_its_own_window_keeps_it_and_check_notes_the_disagreement(tmp_path):
    model, notes = loaded(spec(tmp_path, "[analysis]\nbaseline_ms = [-300, 0]\n", latency_keys="baseline_ms = [-50, 0]"))
    assert model.panels[2].baseline_ms == (-300, 0) and model.panels[3].baseline_ms == (-50, 0)
    assert len(notes) == 1 and "panels[2] (response) and panels[3] (latency)" in notes[0]
    assert "baseline_ms [-300, 0] vs [-50, 0]" in notes[0]


def test_no_note_when_the_panels_test_different_units_or_levels(tmp_path):
    _, notes = loaded(spec(tmp_path, response_keys="baseline_ms = [-100, 0]\nlevels = [60, 70, 80]",
                           latency_keys="levels = [0, 10, 20]"))
    assert notes == []
    _, notes = loaded(spec(tmp_path, response_keys="baseline_ms = [-100, 0]"))
    assert len(notes) == 1                       # the defaults differ from the response panel's own


def test_a_bad_analysis_value_is_reported_once_at_its_own_key(tmp_path):
    with pytest.raises(SpecError) as err:
        load_spec(spec(tmp_path, "[analysis]\nbaseline_ms = [0, -50]\n"))
    lines = str(err.value).splitlines()
    assert len(lines) == 1 and "analysis.baseline_ms" in lines[0] and ":7:" in lines[0]


def test_correction_none_leaves_p_as_it_is_and_holm_never_lowers_it(tmp_path):
    # reference: with no correction the corrected p is the raw p; Holm 1979 only raises p-values
    tables = {}
    for correction in ("none", "holm"):
        path = spec(tmp_path, f'[analysis]\ncorrection = "{correction}"\nresponse_ms = [0, 60]\nbaseline_ms = [-60, 0]\n')
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", FigspecWarning)
            tables[correction] = pipeline.compute(pipeline.check(path))
    plain = tables["none"].panels["response"]["points"]
    np.testing.assert_array_equal(plain["p_corrected"].to_numpy(), plain["p"].to_numpy())
    assert set(plain["correction"]) == {"uncorrected"}
    holm = tables["holm"].panels["response"]["points"]
    assert (holm["p_corrected"].dropna() >= holm["p"].dropna()).all() and set(holm["correction"]) == {"Holm"}


def test_legends_state_the_windows_of_every_test_and_latency(tmp_path):
    from figspec.steps.save import legend

    path = spec(tmp_path, '[analysis]\nresponse_ms = [0, 60]\nbaseline_ms = [-60, 0]\n')
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FigspecWarning)
        resolved = pipeline.check(path)
        text = legend(resolved, pipeline.compute(resolved))
    latency = next(line for line in text.splitlines() if "first-spike latency" in line)
    assert "latency in 0–60 ms" in latency and "baseline rate in -60–0 ms" in latency
    response = next(line for line in text.splitlines() if "evoked vs baseline" in line)
    assert "0–60 ms after onset" in response and "(-60–0 ms)" in response
