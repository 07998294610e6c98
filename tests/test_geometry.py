"""Every demo figure, rendered: no two texts overlap, no text leaves the canvas, no two axes
overlap, and the PDF page is the declared size."""

import itertools
import re

import pytest

from figspec import pipeline
from figspec.draw.context import styled
from figspec.output.drawn import drawn_texts as visible_texts

from helpers import SPECS, draw_now, figspec_warnings

DEMOS = sorted(SPECS.glob("*.toml"))
SLACK_PX = 0.5


def drawn_texts(fig):
    """(text, extent) of every text drawn (figspec.output.inspect decides what is drawn)."""
    renderer = fig.canvas.get_renderer()
    return [(t, t.get_window_extent(renderer)) for t in visible_texts(fig)]


def overlap(a, b):
    return (min(a.x1, b.x1) - max(a.x0, b.x0) > SLACK_PX) and (min(a.y1, b.y1) - max(a.y0, b.y0) > SLACK_PX)


@pytest.fixture(scope="module", params=DEMOS, ids=[p.stem for p in DEMOS])
def figure(request):
    resolved = pipeline.resolve(pipeline.load(request.param))
    with figspec_warnings(), styled(resolved.style):
        fig = pipeline.draw(resolved, pipeline.compute(resolved))
        draw_now(fig)
        yield fig


def test_no_two_texts_overlap(figure):
    texts = drawn_texts(figure)
    assert len(texts) > 20
    clashes = [(a.get_text(), b.get_text()) for (a, ba), (b, bb) in itertools.combinations(texts, 2)
               if overlap(ba, bb)]
    assert clashes == []


def test_no_text_leaves_the_canvas(figure):
    canvas = figure.bbox
    outside = [t.get_text() for t, box in drawn_texts(figure)
               if box.x0 < -SLACK_PX or box.y0 < -SLACK_PX or box.x1 > canvas.x1 + SLACK_PX
               or box.y1 > canvas.y1 + SLACK_PX]
    assert outside == []


def test_no_two_axes_overlap(figure):
    boxes = [ax.get_window_extent() for ax in figure.axes if ax.get_visible() and ax.axison or ax.patches]
    assert not any(overlap(a, b) for a, b in itertools.combinations(boxes, 2))


@pytest.mark.parametrize("spec", DEMOS, ids=[p.stem for p in DEMOS])
def test_pdf_media_box_is_the_declared_size(spec, demo_render):
    # PDF user space unit is 1/72 inch (ISO 32000-1, 8.3.2.3)
    model = pipeline.check(spec).spec.model            # width filled in from the style when the spec has none
    pdf = demo_render[0] / f"{spec.stem}.pdf"
    box = [float(v) for v in re.search(rb"/MediaBox\s*\[\s*([\d.\s]+)\]", pdf.read_bytes()).group(1).split()]
    assert (box[2] - box[0]) / 72 * 25.4 == pytest.approx(model.figure.width_mm, abs=0.1)
    assert (box[3] - box[1]) / 72 * 25.4 == pytest.approx(model.figure.height_mm, abs=0.1)
