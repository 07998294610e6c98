"""Each journal check rule fails on a figure made to break it and passes on the demo figures."""

import pytest

from figspec import pipeline
from figspec.output.journal_check import journal_check
from figspec.spec.journals import load_profile
from figspec.spec.style import BUILTIN_STYLES

from helpers import SMALL_SPEC, SPECS, write_spec

DEMOS = sorted(SPECS.glob("*.toml"))


def test_demo_figures_pass_the_nature_profile(demo_render):
    _, ran = demo_render                    # the demo specs for print name figure.journal = "nature"
    printed = [spec for spec in DEMOS if 'journal = "nature"' in spec.read_text()]
    assert len(printed) >= len(DEMOS) - 1
    assert [f"{spec.name}: journal check Nature: 0 findings" in ran.stdout for spec in printed] == [True] * len(printed)
    assert "journal check" not in ran.stderr


def findings(tmp_path, text, profile="nature"):
    result = pipeline.journal_check(pipeline.check(write_spec(tmp_path, text)), profile)
    return {f.rule: f for f in result.findings}


# PDF only: every rule reads the drawn figure or the PDF, and one format renders fastest
GOOD = SMALL_SPEC.replace("width_mm = 100", "width_mm = 89").replace("height_mm = 120", 'height_mm = 120\nformats = ["pdf"]')


def test_a_good_minimal_figure_passes(tmp_path):
    assert findings(tmp_path, GOOD) == {}


def test_width_not_a_column(tmp_path):
    assert "is not a column width" in findings(tmp_path, GOOD.replace("width_mm = 89", "width_mm = 100"))["width"].message


def test_too_tall(tmp_path):
    assert "taller than 170" in findings(tmp_path, GOOD.replace("height_mm = 120", "height_mm = 200"))["height"].message


def test_small_text_names_panel_and_text(tmp_path):
    found = findings(tmp_path, GOOD + "\n[style.font]\ntick_pt = 4\n")["text size"]
    assert found.panel in {"spikes", "rate"} and "4 pt is below 5 pt" in found.message


def test_thin_raster_ticks(tmp_path):
    found = findings(tmp_path, GOOD + "\n[style.raster]\ntick_width_pt = 0.1\n")["line width"]
    assert (found.panel, found.element) == ("spikes", "raster")


def test_colours_confused_under_deuteranopia(tmp_path):
    text = GOOD.replace("width_mm = 89", "width_mm = 183").replace("[stimulus]", '[levels]\nunit = "dB SPL"\nscale = "pressure_db"\n\n[stimulus]') + (
        '\n[[panels]]\nname = "curve"\nkind = "level_response"\nunits = ["u1", "u2"]\n'
        '\n[style.palette]\nunits = ["#d62728", "#2ca02c"]\n')
    found = findings(tmp_path, text)["colour vision"]
    assert found.panel == "curve" and found.element == "u1 and u2" and "deuteranopia" in found.message


def test_type3_and_unembedded_fonts(tmp_path):
    profile = load_profile("nature")
    fake = {"pdf": b"%PDF-1.4 /Type /FontDescriptor /Subtype /Type3"}
    from matplotlib.figure import Figure

    rules = {f.rule + ": " + f.message for f in journal_check(Figure(figsize=(89 / 25.4, 2)), fake, profile, {})}
    assert any("Type 3" in r for r in rules) and any("not embedded" in r for r in rules)


def test_file_size_limit(tmp_path):
    (tmp_path / "tiny.toml").write_text(
        (BUILTIN_STYLES / "journals" / "nature.toml").read_text().replace("max_file_mb = 10", "max_file_mb = 0.001"))
    found = findings(tmp_path, GOOD, str(tmp_path / "tiny.toml"))["file size"]
    assert "MB is over 0.001 MB" in found.message


def test_strict_journal_check_exits_2(tmp_path, cli):
    path = write_spec(tmp_path, SMALL_SPEC.replace("height_mm = 120", 'height_mm = 120\nformats = ["pdf"]'))
    assert cli("check", path, "--profile", "nature").returncode == 0
    strict = cli("check", path, "--profile", "nature", "--strict")
    assert strict.returncode == 2 and "journal check Nature: width: figure, page:" in strict.stderr


def test_check_flags_a_format_the_journal_wants_and_the_spec_does_not_write(tmp_path):
    # the check draws a PDF to read it, but a render of this spec writes only a PNG: the journal's
    # PDF is missing and the check must say so, as the render's own check does
    nature = (BUILTIN_STYLES / "journals" / "nature.toml").read_text()
    (tmp_path / "wants_pdf.toml").write_text(nature + '\nformats = ["pdf"]\n')
    png_only = GOOD.replace('formats = ["pdf"]', 'formats = ["png"]')
    assert "not written: pdf" in findings(tmp_path, png_only, "wants_pdf.toml")["formats"].message
    assert "formats" not in findings(tmp_path, GOOD, "wants_pdf.toml")
