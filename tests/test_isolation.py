"""Two specs with different styles rendered in one process do not affect each other."""

import matplotlib as mpl

from figspec import pipeline

from helpers import SMALL_SPEC, write_spec


def test_render_a_then_b_then_a_gives_identical_bytes(tmp_path):
    a = write_spec(tmp_path, SMALL_SPEC, "a.toml")
    b = write_spec(tmp_path, SMALL_SPEC.replace('[figure]', '[figure]\nstyle = "projected"'), "b.toml")
    before = dict(mpl.rcParams)
    first = pipeline.render(a, tmp_path / "1").files
    pipeline.render(b, tmp_path / "2")
    again = pipeline.render(a, tmp_path / "3").files
    for x, y in zip(sorted(first), sorted(again)):
        assert x.read_bytes() == y.read_bytes(), x.name
    assert dict(mpl.rcParams) == before                        # nothing leaked into the process
