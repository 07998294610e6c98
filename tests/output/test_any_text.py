"""Any Unicode text a spec may hold keeps every output valid: SVG parses as XML, the PDF opens,
the PNG decodes; characters the font lacks are a figspec warning, not a crash."""

from __future__ import annotations

import io
import xml.dom.minidom

import pytest

from figspec import pipeline
from figspec.errors import FigspecWarning
from figspec.spec.loader import load_spec
from helpers import SMALL_SPEC, write_spec

TITLES = ['Costs $5 and $6 & <b>bold</b> "quoted"', "Einheit µ — Ω ± ≥ ½", "שלום עולם (RTL) مرحبا",
          "e\u0301 combining, zero\u200bwidth, \u202eoverride", "\u6f22\u5b57 and 🦉", "tab\there\nline two"]


@pytest.mark.parametrize("title", TITLES)
def test_any_title_keeps_every_format_valid(tmp_path, title):
    from PIL import Image

    text = SMALL_SPEC.replace('title = "t"', f"title = {json_string(title)}")
    spec = write_spec(tmp_path, text)
    resolved = pipeline.check(spec)
    with _glyph_warnings():
        files, _ = pipeline.render_in_memory(resolved, ("svg", "pdf", "png"))
    xml.dom.minidom.parseString(files["svg"])                     # well-formed XML (W3C XML 1.0)
    assert files["pdf"].startswith(b"%PDF-") and files["pdf"].rstrip().endswith(b"%%EOF")
    Image.open(io.BytesIO(files["png"])).load()
    assert load_spec(spec).model.figure.title == title


def json_string(value: str) -> str:
    import json

    return json.dumps(value, ensure_ascii=False)      # a JSON string is a TOML basic string


class _glyph_warnings:
    """Allow (only) figspec's warning about characters the font lacks."""

    def __enter__(self):
        import warnings

        self._ctx = warnings.catch_warnings(record=True)
        self.caught = self._ctx.__enter__()
        warnings.simplefilter("always")
        return self

    def __exit__(self, *exc):
        self._ctx.__exit__(*exc)
        others = [w for w in self.caught if not (issubclass(w.category, FigspecWarning) and "no glyph" in str(w.message))]
        assert not others, [str(w.message) for w in others]
        return False


def test_math_is_typeset_only_where_asked(tmp_path):
    from matplotlib.text import Text

    text = SMALL_SPEC.replace('title = "t"', 'title = "Costs $5 and $6"').replace(
        "[stimulus]", '[levels]\nunit = { math = "$\\\\mu$W" }\n\n[stimulus]')
    resolved = pipeline.check(write_spec(tmp_path, text))
    fig = pipeline.draw(resolved, pipeline.compute(resolved))
    texts = {t.get_text(): t.get_parse_math() for t in fig.findobj(Text) if t.get_text()}
    assert texts["Costs $5 and $6"] is False
    math = {k: v for k, v in texts.items() if "\\mu" in k}
    assert math and all(math.values())
