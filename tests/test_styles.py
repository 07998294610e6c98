"""Every demo spec in every built-in style: drawn with no layout finding (the layout check of
figspec.output.layout_check, as ``render --strict`` applies it), or refused with a message
saying why the style cannot hold it. A style for another medium scales the whole figure."""

from __future__ import annotations

import warnings

import pytest

from figspec import pipeline
from figspec.errors import FigspecWarning, UserError
from figspec.spec.style import builtin_styles
from figspec.steps.journal import layout_findings
from helpers import SPECS

DEMOS = sorted(SPECS.glob("*.toml"))
STYLES = [None] + builtin_styles()


@pytest.mark.parametrize("style", STYLES, ids=[s or "own" for s in STYLES])
@pytest.mark.parametrize("spec", DEMOS, ids=[p.stem for p in DEMOS])
def test_each_demo_in_each_style_is_clean_or_refused_with_a_reason(spec, style):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FigspecWarning)
        try:
            resolved = pipeline.check(spec, style)
        except UserError as err:
            assert style is not None
            assert any("cannot be drawn in the style" in p.message and "prints at most" in p.message
                       for p in err.problems), err
            return
        fig = pipeline.draw(resolved, pipeline.compute(resolved))
        assert [f.format() for f in layout_findings(resolved, fig)] == []


def test_a_style_for_slides_scales_the_whole_page_with_its_text():
    spec = SPECS / "level_summary.toml"
    own, slides = pipeline.check(spec), pipeline.check(spec, "projected")
    assert slides.scale == pytest.approx(slides.style.font.body_pt / own.style.font.body_pt) == pytest.approx(2.0)
    assert slides.spec.model.figure.width_mm == pytest.approx(own.spec.model.figure.width_mm * 2)
    assert slides.spec.model.figure.height_mm == pytest.approx(own.spec.model.figure.height_mm * 2)
    assert slides.style.axes.line_pt == pytest.approx(own.style.axes.line_pt * 2)
    assert slides.style.rc()["xtick.major.pad"] == pytest.approx(own.style.rc()["xtick.major.pad"] * 2)
