from pathlib import Path

import pytest

from figspec import pipeline
from figspec.errors import SpecError
from figspec.spec.style import builtin_styles
from figspec.spec.style_files import resolve_style

from helpers import MINIMAL_SPEC, write_spec


def test_builtin_styles_resolve_and_inherit():
    assert {"default", "narrow_print", "projected", "large_print"} <= set(builtin_styles())
    default = resolve_style("default", None).style
    narrow = resolve_style("narrow_print", None).style
    assert narrow.figure.width_mm == 89 and narrow.font.body_pt == 6.5
    assert narrow.palette == default.palette and narrow.stimulus == default.stimulus   # inherited
    large = resolve_style("large_print", None)
    assert [s.path.stem for s in large.sources] == ["default", "projected", "large_print"]
    assert large.style.font.body_pt == 24 and large.style.rate.colour == "#333333"   # from projected


def test_inline_overrides_win_and_are_validated(tmp_path):
    text = MINIMAL_SPEC + '\n[style.font]\nbody_pt = 9\n\n[style.raster]\ncolour = "#aa0000"\n'
    resolved = pipeline.resolve(pipeline.load(write_spec(tmp_path, text)))
    assert resolved.style.font.body_pt == 9 and resolved.style.raster.colour == "#aa0000"
    assert resolved.style.font.tick_pt == 6                                           # untouched keys stay
    assert resolved.spec.model.figure.width_mm == 100                                 # the spec's own width


def test_unknown_inline_key_names_the_spec_file_and_line(tmp_path):
    text = MINIMAL_SPEC + "\n[style.font]\nbody_size = 9\n"
    path = write_spec(tmp_path, text)
    with pytest.raises(SpecError) as info:
        pipeline.resolve(pipeline.load(path))
    [problem] = info.value.problems
    assert problem.format() == f"{path}:{text.splitlines().index('body_size = 9') + 1}: " \
                               "style.font.body_size: unknown key; did you mean 'body_pt'?"


def test_unknown_key_in_a_style_file_names_that_file_and_line(tmp_path):
    styles = tmp_path / "styles"
    styles.mkdir()
    (styles / "lab.toml").write_text('extends = "default"\n\n[raster]\ncolour = "#111111"\nwidth_pt = 1\n')
    with pytest.raises(SpecError) as info:
        resolve_style("lab", tmp_path)
    [problem] = info.value.problems
    assert problem.file == str(styles / "lab.toml") and problem.line == 5
    assert problem.loc == ("raster", "width_pt") and "tick_width_pt" in problem.message


def test_a_bad_value_is_blamed_on_the_file_that_set_it(tmp_path):
    (tmp_path / "lab.toml").write_text('extends = "default"\n[font]\nbody_pt = -1\n')
    with pytest.raises(SpecError) as info:
        resolve_style("lab.toml", tmp_path)
    assert info.value.problems[0].file == str(tmp_path / "lab.toml") and info.value.problems[0].line == 3


def test_styles_extending_in_a_circle(tmp_path):
    (tmp_path / "a.toml").write_text('extends = "b"\n')
    (tmp_path / "b.toml").write_text('extends = "a"\n')
    with pytest.raises(SpecError, match="in a circle"):
        resolve_style("a.toml", tmp_path)


def test_a_missing_font_warns(tmp_path):
    from figspec.draw.context import styled
    from figspec.errors import FigspecWarning

    text = MINIMAL_SPEC + '\n[style.font]\nfamily = "No Such Font Sans"\n'
    resolved = pipeline.resolve(pipeline.load(write_spec(tmp_path, text)))
    with styled(resolved.style), pytest.warns(FigspecWarning, match="fonts-liberation2"):
        pipeline.draw(resolved, pipeline.compute(resolved))


def test_the_house_style_one_folder_up_is_found_from_a_relative_spec_path(monkeypatch):
    from figspec.spec.style import style_path

    from helpers import SPECS

    monkeypatch.chdir(SPECS / "data")
    assert style_path("house", Path("..")).resolve() == (SPECS.parent / "styles" / "house.toml").resolve()
