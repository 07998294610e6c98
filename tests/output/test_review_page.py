"""The review and index pages as HTML: parsed with the standard library's html.parser (HTML
Living Standard syntax), every embedded image decoded with Pillow, and every link pointing at a
file beside the page."""

from __future__ import annotations

import base64
import io
from html.parser import HTMLParser
from pathlib import Path

import pandas as pd
from PIL import Image

from figspec.output.compare import table_diff
from figspec.output.review_page import FigureReview, index_page, IndexEntry, legend_html, review_page


class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.images, self.links, self.text = [], [], [], []

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        self.tags.append(tag)
        if tag == "img":
            self.images.append(attrs)
        if tag == "a":
            self.links.append(attrs["href"])

    def handle_data(self, data):
        self.text.append(data)


def _png(colour) -> bytes:
    buffer = io.BytesIO()
    Image.new("RGB", (40, 30), colour).save(buffer, format="PNG")
    return buffer.getvalue()


def _parse(text: str) -> _Collect:
    parser = _Collect()
    parser.feed(text)
    return parser


def test_a_review_page_embeds_decodable_images_and_labels_each_side():
    old = pd.DataFrame({"unit": ["u1", "u1"], "level": [0.0, 20.0], "rate": [4.0, 10.0]})
    new = pd.DataFrame({"unit": ["u1", "u1", "u1"], "level": [0.0, 20.0, 40.0], "rate": [4.0, 12.5, 30.0]})
    review = FigureReview("fig2", "fig2.toml at main", "fig2.toml", _png("white"), _png("black"), _png("grey"),
                          False, "RMS 255 > tolerance 1", ["changed panels[1].bin_ms: 5 -> 10"],
                          [table_diff("rate", old, new)], ["data/spikes.csv"])
    page = _parse(review_page("title <&>", "summary", [review]))
    assert page.tags[0] == "html" and "script" not in page.tags      # a review page runs no script
    assert len(page.images) == 3
    for image in page.images:
        assert image["src"].startswith("data:image/png;base64,")
        assert Image.open(io.BytesIO(base64.b64decode(image["src"].split(",", 1)[1]))).size == (40, 30)
    text = " ".join(page.text)
    assert "Old: fig2.toml at main" in text and "New: fig2.toml" in text
    assert "changed panels[1].bin_ms: 5 -> 10" in text
    assert "1 rows added" in text and "level" in text and "2.5" in text and "data/spikes.csv" in text
    assert "title <&>" in text                                       # escaped, not markup


def test_table_diff_matches_rows_on_their_keys_whatever_the_order():
    old = pd.DataFrame({"unit": ["u1", "u2"], "level": [10.0, 10.0], "rate": [1.0, 2.0]})
    new = old.iloc[::-1].reset_index(drop=True).assign(rate=[2.0, 1.5])
    d = table_diff("t", old, new)
    assert d.status == "changed" and not len(d.added) and not len(d.removed)
    assert [(c.column, c.changed, c.largest, c.at) for c in d.columns] == [("rate", 1, 0.5, "unit u1, level 10")]
    assert table_diff("t", old, old.iloc[::-1]).status == "same"


def test_the_index_page_links_files_beside_it_and_shows_the_legend(tmp_path):
    entry = IndexEntry("fig2", "fig2.png", ["fig2.png", "fig2.pdf"], ["fig2_data/rate.csv"],
                       "**Unit u1.**\n- *rate*: Firing rate in 5-ms bins", "specs/fig2.toml")
    page = _parse(index_page("Figures", [entry]))
    assert page.images == [{"src": "./fig2.png", "alt": "fig2"}]      # relative, percent-encoded (RFC 3986)
    assert {"./fig2.png", "./fig2.pdf", "./fig2_data/rate.csv", "#fig2"} <= set(page.links)
    assert "script" not in page.tags
    assert "script" in _parse(index_page("Figures", [entry], live=True)).tags


def test_legend_markup_is_escaped_before_it_is_formatted():
    assert legend_html("**A <b>.**\n- *x*: 2 * 3 = 6") == \
        "<p><strong>A &lt;b&gt;.</strong></p>\n<ul class=\"legend\"><li><em>x</em>: 2 * 3 = 6</li></ul>"


def test_render_writes_an_index_of_the_folder(demo_render):
    out, _ = demo_render
    page = _parse((out / "index.html").read_text())
    shown = {i["src"] for i in page.images}
    assert {"./level_grid.png", "./unit_composite.png"} <= shown
    for link in page.links:
        if not link.startswith("#"):
            assert (out / link).is_file(), link
