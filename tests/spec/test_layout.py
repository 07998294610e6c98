import pytest

from figspec.errors import SpecError
from figspec.spec.loader import load_spec

from helpers import MINIMAL_SPEC, write_spec

GRID = MINIMAL_SPEC.replace("[stimulus]", "[layout]\nrows = 2\ncolumns = 2\n\n[stimulus]")


def placed(text, first, second):
    text = text.replace('name = "spikes"', f'name = "spikes"\n{first}')
    return text.replace('name = "rate"', f'name = "rate"\n{second}')


def problems(tmp_path, text):
    with pytest.raises(SpecError) as info:
        load_spec(write_spec(tmp_path, text))
    return {p.loc: p for p in info.value.problems}


def test_a_good_grid_loads(tmp_path):
    spec = load_spec(write_spec(tmp_path, placed(GRID, "cell = [1, 1]\nspan = [2, 1]", "cell = [1, 2]")))
    assert spec.model.panels[0].span == (2, 1)


def test_panel_outside_the_grid(tmp_path):
    found = problems(tmp_path, placed(GRID, "cell = [1, 1]", "cell = [3, 1]"))
    assert "outside the 2 x 2 grid" in found[("panels", 1, "cell")].message


def test_two_panels_in_one_cell(tmp_path):
    found = problems(tmp_path, placed(GRID, "cell = [1, 1]\nspan = [2, 1]", "cell = [2, 1]"))
    problem = found[("panels", 1, "cell")]
    assert "already taken by panels[0] ('spikes')" in problem.message and problem.line is not None


def test_span_that_does_not_fit(tmp_path):
    found = problems(tmp_path, placed(GRID, "cell = [1, 2]\nspan = [1, 2]", "cell = [1, 1]"))
    assert "does not fit" in found[("panels", 0, "span")].message


def test_shared_group_naming_an_unknown_panel(tmp_path):
    text = MINIMAL_SPEC + '\n[[shared]]\npanels = ["rate", "rates"]\naxis = "y"\n'
    found = problems(tmp_path, text)
    assert "no panel named 'rates'" in found[("shared", 0, "panels", 1)].message


def test_cells_need_a_layout_and_a_layout_needs_cells(tmp_path):
    assert ("panels", 0, "cell") in problems(tmp_path, placed(MINIMAL_SPEC, "cell = [1, 1]", ""))
    assert ("panels", 1) in problems(tmp_path, placed(GRID, "cell = [1, 1]", ""))


def test_widths_must_match_columns(tmp_path):
    text = GRID.replace("columns = 2", "columns = 2\nwidths = [1, 2, 3]")
    assert "widths needs one number per column" in problems(tmp_path, text)[("layout",)].message
