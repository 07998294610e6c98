from figspec.spec.keylines import index_key_lines, line_for

TEXT = """\
# comment with key = value
[figure]
title = "a = b # not a comment"
width_mm = 100

[sources.demo]
spikes = "x.csv"
spike_columns = { unit = "u" }

[[panels]]
name = "a"
levels = [
  10,
  20,
]
kind = "raster"

[[panels]]
name = "b"
"dotted.key" = 1
sub.key = 2
"""


def test_tables_keys_and_arrays_of_tables_map_to_their_lines():
    lines = index_key_lines(TEXT)
    assert lines[("figure",)] == 2
    assert lines[("figure", "title")] == 3
    assert lines[("figure", "width_mm")] == 4
    assert lines[("sources", "demo", "spike_columns")] == 8
    assert lines[("panels", 0)] == 10
    assert lines[("panels", 0, "levels")] == 12
    assert lines[("panels", 0, "kind")] == 16  # multi-line array skipped, not misread as keys
    assert lines[("panels", 1, "name")] == 19
    assert lines[("panels", 1, "dotted.key")] == 20
    assert lines[("panels", 1, "sub", "key")] == 21


def test_unknown_key_falls_back_to_its_table():
    lines = index_key_lines(TEXT)
    assert line_for(lines, ("panels", 1, "bin_ms")) == 18
    assert line_for(lines, ("sources", "demo", "spike_columns", "time")) == 8
    assert line_for(lines, ("nowhere",)) is None


def test_elements_of_a_multi_line_array_have_their_own_lines():
    text = 'a = [\n  -50,\n  "150",\n]\nb = [1, 2]\nc = [\n [1, 2],\n [3, 4] ]\nd = { x = [1,\n 2] }\ne = 3\n'
    lines = index_key_lines(text)
    assert lines[("a", 0)] == 2 and lines[("a", 1)] == 3 and lines[("c", 1)] == 8
    assert lines[("b", 1)] == 5 and ("d", 0) not in lines and lines[("e",)] == 11
