import re

import pytest

from figspec import pipeline
from figspec.output.files import write_all

from helpers import DEMO_SPEC


@pytest.fixture(scope="module")
def rendered(demo_render):
    out = demo_render[0]
    return out, sorted(p for p in out.rglob("*") if p.is_file() and p.name.startswith("level_grid")
                       or p.parent.name == "level_grid_data")


def test_all_formats_and_source_data_are_written(rendered):
    out, written = rendered
    names = {p.relative_to(out).as_posix() for p in written}
    assert names == {"level_grid.svg", "level_grid.pdf", "level_grid.png", "level_grid_data/spikes.csv",
                     "level_grid_data/rate.csv", "level_grid_data/stimulus.csv", "level_grid_data/statistics.csv",
                     "level_grid_data/legend.md", "level_grid_data/manifest.json"}


def test_pdf_text_is_embedded_truetype(rendered):
    # PDF 1.7 (ISO 32000-1) 9.6.3, 9.7.4 and 9.9: a TrueType font is /Subtype /TrueType, or
    # /CIDFontType2 under a Type0 font (what matplotlib 3.10+ writes; pdffonts says "CID
    # TrueType"); its embedded program is a /FontFile2 stream. Type 3 fonts are not editable text.
    out, _ = rendered
    pdf = (out / "level_grid.pdf").read_bytes()
    assert re.search(rb"/Subtype\s*/(TrueType|CIDFontType2)", pdf)
    assert b"/FontFile2" in pdf
    assert not re.search(rb"/Subtype\s*/Type3", pdf)


def test_pdf_media_box_is_the_declared_size(rendered):
    # PDF user space unit is 1/72 inch (ISO 32000-1, 8.3.2.3)
    out, _ = rendered
    pdf = (out / "level_grid.pdf").read_bytes()
    box = [float(v) for v in re.search(rb"/MediaBox\s*\[\s*([\d.\s]+)\]", pdf).group(1).split()]
    assert (box[2] - box[0]) / 72 * 25.4 == pytest.approx(183.0, abs=0.1)      # the style's width
    assert (box[3] - box[1]) / 72 * 25.4 == pytest.approx(150.0, abs=0.1)


def test_svg_text_is_real_text_and_has_the_declared_size(rendered):
    out, _ = rendered
    svg = (out / "level_grid.svg").read_text()
    assert "<text" in svg and "80 dB SPL" in svg
    assert re.search(r'width="518\.74\d*pt"', svg)  # 183 mm = 518.740 pt


def test_a_set_that_fails_to_stage_leaves_every_old_file_and_no_temporary(tmp_path):
    old = tmp_path / "a.txt"
    old.write_bytes(b"old")
    (tmp_path / "blocker").write_bytes(b"a file where a folder is needed")
    with pytest.raises(OSError):
        write_all({old: b"new", tmp_path / "blocker" / "b.txt": b"new"})
    assert old.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt", "blocker"]
