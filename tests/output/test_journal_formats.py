"""The files journals and vector editors take: TIFF (RGB, LZW, at the spec's dpi) and EPS for every
demo spec on request, PNG without an alpha channel, SVG ids unique, and one layout for every
format (checked on the figure: laying it out again for another format moves nothing).

References: TIFF 6.0 (Adobe 1992: tag 259 compression 5 = LZW, photometric RGB); the PNG
specification (W3C, colour type 2 = truecolour without alpha); XML 1.0 (an id is unique in a
document, the SVG 1.1 id attribute being of XML type ID)."""

from __future__ import annotations

import io
import re

import pytest
from PIL import Image

from figspec import pipeline
from figspec.output.files import figure_files

from helpers import ROOT, SPECS


def test_every_demo_spec_writes_tiff_and_eps_on_request(tmp_path, cli):
    result = cli("render", SPECS, "-o", tmp_path / "out", "--format", "tiff,eps", "--force", cwd=ROOT)
    assert result.returncode in (0, 2), result.stderr
    rendered = [p.stem for p in (tmp_path / "out").glob("*.tiff")]
    needs_extra = {"nwb_session"}                 # reads NWB: needs the nwb extra, absent from a plain install
    expected = {p.stem for p in SPECS.glob("*.toml")}
    assert expected - needs_extra <= set(rendered)
    for stem in rendered:
        with Image.open(tmp_path / "out" / f"{stem}.tiff") as tiff:
            mode, info = tiff.mode, dict(tiff.info)
        assert mode == "RGB" and info["compression"] == "tiff_lzw"
        import tomllib

        asked = tomllib.loads((SPECS / f"{stem}.toml").read_text())["figure"].get("png_dpi", 300)
        assert round(info["dpi"][0]) == asked
        eps = (tmp_path / "out" / f"{stem}.eps").read_bytes()
        assert eps.startswith(b"%!PS-Adobe-3.0 EPSF-3.0") and b"%%BoundingBox:" in eps
        assert b"%%CreationDate" not in eps                # no date: the bytes are stable


@pytest.fixture(scope="module")
def drawn():
    resolved = pipeline.check(SPECS / "level_grid.toml")
    return resolved, pipeline.draw(resolved, pipeline.compute(resolved))


def test_png_has_no_alpha_channel(drawn):
    resolved, fig = drawn
    png = figure_files(fig, resolved.style, ["png"], 100, "figspec")["png"]
    assert png[25] == 2                                    # IHDR colour type 2: RGB, no alpha
    assert Image.open(io.BytesIO(png)).mode == "RGB"


def test_svg_ids_are_unique(drawn):
    resolved, fig = drawn
    svg = figure_files(fig, resolved.style, ["svg"], 100, "figspec")["svg"].decode()
    ids = re.findall(r' id="([^"]*)"', svg)
    assert len(ids) == len(set(ids)) and {"stimulus", "stimulus-2"} <= set(ids)
    assert "url(#clip1)" in svg                            # references still reach their clip paths


def test_one_layout_for_every_format(drawn):
    resolved, fig = drawn
    figure_files(fig, resolved.style, ["png"], 300, "figspec")
    placed = [ax.get_position().bounds for ax in fig.axes]
    figure_files(fig, resolved.style, ["pdf", "svg", "eps"], 300, "figspec")
    assert [ax.get_position().bounds for ax in fig.axes] == placed


def test_source_data_say_units_and_write_counts_as_whole_numbers(demo_render):
    """Every table with a level names its unit; every count column (n_*, count) is written as whole
    numbers in every file (30, never 30.0), so one quantity has one type across files."""
    import csv

    out, _ = demo_render
    for path in sorted(out.glob("*_data/*.csv")):
        with open(path, newline="") as handle:
            rows = list(csv.reader(handle))
        header, body = rows[0], rows[1:]
        if "level" in header and path.name != "statistics.csv":
            assert "level_unit" in header, path
        for i, column in enumerate(header):
            if column.startswith("n_") or column in ("n", "count"):
                assert all(r[i] == "" or r[i].lstrip("-").isdigit() for r in body), (path, column)


def test_the_manifest_records_what_changes_bytes(demo_render):
    import json

    out, _ = demo_render
    manifest = json.loads((out / "level_grid_data" / "manifest.json").read_text())
    versions = manifest["build"]["versions"]
    assert {"python", "numpy", "matplotlib", "freetype", "font", "pillow"} <= set(versions)
    assert [i["path"] for i in manifest["inputs"] if i["role"] == "spec"] == ["level_grid.toml"]


def test_the_journal_check_flags_low_resolution_images_and_missing_formats():
    from figspec.output.journal_check import _images, format_findings
    from figspec.spec.journals import load_profile

    nature = load_profile("nature")
    resolved = pipeline.check(SPECS / "pressure_levels.toml")          # a raster drawn as a density image
    fig = pipeline.draw(resolved, pipeline.compute(resolved))
    with __import__("figspec.draw.context", fromlist=["styled"]).styled(resolved.style):
        fig.draw_without_rendering()
        assert _images(fig, nature) == []                              # drawn at 300 pixels per inch or more
        strict = nature.model_copy(update={"min_image_ppi": 5000.0})
        assert [f.rule for f in _images(fig, strict)] and all(f.rule == "image resolution" for f in _images(fig, strict))
    wants = nature.model_copy(update={"formats": ["tiff", "eps"], "min_png_dpi": 600.0})
    rules = [f.rule for f in format_findings(["png", "pdf"], 300, wants)]
    assert rules == ["formats", "resolution"]


def test_no_word_of_a_pdf_crosses_the_page_edge_as_poppler_reads_it(tmp_path, cli):
    """pdftotext -bbox (poppler) gives each word's box from the font's full line height; in the
    large_print style every word of the figure lies inside the page."""
    import shutil
    import subprocess

    if shutil.which("pdftotext") is None:
        pytest.skip("poppler-utils (pdftotext) is not installed")
    result = cli("render", SPECS / "level_summary.toml", "-o", tmp_path, "--style", "large_print", "--format", "pdf")
    assert result.returncode == 0, result.stderr
    html = subprocess.run(["pdftotext", "-bbox", str(tmp_path / "level_summary.pdf"), "-"], capture_output=True,
                          text=True, check=True).stdout
    width, height = (float(v) for v in re.search(r'<page width="([\d.]+)" height="([\d.]+)"', html).groups())
    words = [tuple(map(float, m)) for m in re.findall(
        r'<word xMin="([\d.-]+)" yMin="([\d.-]+)" xMax="([\d.-]+)" yMax="([\d.-]+)"', html)]
    assert words and all(x0 >= 0 and y0 >= 0 and x1 <= width and y1 <= height for x0, y0, x1, y1 in words)
