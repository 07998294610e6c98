import pytest

from figspec.errors import SpecError
from figspec.spec.loader import load_spec

from helpers import MINIMAL_SPEC, write_spec


def problems_of(path):
    with pytest.raises(SpecError) as info:
        load_spec(path)
    return info.value.problems


def test_minimal_spec_loads(minimal_spec):
    spec = load_spec(minimal_spec)
    assert [p.name for p in spec.model.panels] == ["spikes", "rate"]


def test_misspelled_key_names_file_line_path_and_suggestion(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_width = 10"))
    [problem] = problems_of(path)
    line = MINIMAL_SPEC.splitlines().index("bin_ms = 10") + 1
    assert problem.format() == f"{path}:{line}: panels[1].bin_width: unknown key; did you mean 'bin_ms'?"


def test_unknown_kind_suggests_the_nearest(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace('kind = "psth"', 'kind = "psht"'))
    [problem] = problems_of(path)
    assert problem.loc == ("panels", 1, "kind")
    assert "did you mean 'psth'" in problem.message and problem.got == '"psht"'


def test_bad_value_reports_what_was_found(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_ms = -5"))
    [problem] = problems_of(path)
    line = MINIMAL_SPEC.splitlines().index("bin_ms = 10") + 1
    assert problem.format() == (f"{path}:{line}: panels[1].bin_ms: should be greater than 0, "
                                "or should be 'auto' (got -5)")


def test_several_problems_are_all_reported(tmp_path):
    text = MINIMAL_SPEC.replace("bin_ms = 10", "bin_ms = 0").replace("width_mm = 100", "widht_mm = 100")
    problems = problems_of(write_spec(tmp_path, text))
    assert {p.loc for p in problems} == {("panels", 1, "bin_ms"), ("figure", "widht_mm")}


def test_toml_syntax_error_has_a_line(tmp_path):
    [problem] = problems_of(write_spec(tmp_path, '[figure]\ntitle = "open\n'))
    assert problem.line == 2 and "not valid TOML" in problem.message


def test_missing_required_table(tmp_path):
    text = MINIMAL_SPEC.replace("[stimulus]\nper_trial = true\n", "")
    [problem] = problems_of(write_spec(tmp_path, text))
    assert problem.loc == ("stimulus",) and problem.message == "missing required key"


def test_missing_file(tmp_path):
    [problem] = problems_of(tmp_path / "absent.toml")
    assert problem.message == "file not found"


def test_a_byte_order_mark_is_not_a_toml_error(tmp_path):
    from figspec.spec.loader import load_spec

    from helpers import MINIMAL_SPEC, write_spec

    path = write_spec(tmp_path, MINIMAL_SPEC)
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    assert load_spec(path).model.figure.title == "t"


@pytest.mark.parametrize("name, fragment", [("statistics", "names one of figspec's own files"),
                                            ("curve_points", "the source data of panel 'curve' include curve_points.csv")])
def test_panel_names_that_would_overwrite_another_file_are_refused(tmp_path, name, fragment):
    from figspec.errors import SpecError
    from figspec.spec.loader import load_spec

    from helpers import MINIMAL_SPEC, write_spec

    text = MINIMAL_SPEC.replace('name = "spikes"', f'name = "{name}"') + (
        '\n[[panels]]\nname = "curve"\nkind = "level_response"\nunit = "u2"\n')
    with pytest.raises(SpecError) as info:
        load_spec(write_spec(tmp_path, text))
    assert any(fragment in p.message and p.loc == ("panels", 0, "name") for p in info.value.problems)
