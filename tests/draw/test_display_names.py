"""Units and levels can carry display names: the figure shows them, the source data keep the
data's own names, and a name for a unit that does not exist is an error."""

from __future__ import annotations

import pytest

from figspec import pipeline
from figspec.errors import UserError
from helpers import SMALL_SPEC, figspec_warnings, write_spec

NAMED = SMALL_SPEC.replace("[stimulus]", '[levels]\nunit = "dB SPL"\nnames = { "40" = "quiet", "80.0" = "loud" }\n\n'
                           '[units]\nnames = { u2 = "Unit 12, layer 5" }\n\n[stimulus]') + (
    '\n[[panels]]\nname = "curve"\nkind = "level_response"\nunits = ["u1", "u2"]\n')


def test_display_names_label_rows_and_keys(tmp_path):
    with figspec_warnings():
        resolved = pipeline.check(write_spec(tmp_path, NAMED))
        tables = pipeline.compute(resolved)
        fig = pipeline.draw(resolved, tables)
    rows = [ax.get_ylabel().split("\n")[0] for ax in fig.subfigs[0].axes]
    assert rows == ["loud", "quiet"]                                     # high at the top
    curve = fig.subfigs[-1].axes[0]
    assert "Unit 12, layer 5" in [t.get_text() for t in curve.get_legend().get_texts()]
    assert set(tables.panels["curve"]["points"]["unit"]) == {"u1", "u2"}  # the data keep their own names


def test_a_name_for_a_unit_that_does_not_exist_is_an_error(tmp_path):
    spec = write_spec(tmp_path, NAMED.replace("u2 = ", "u9 = "))
    with pytest.raises(UserError, match=r"no unit of this name in any source") as err:
        pipeline.check(spec)
    assert err.value.problems[0].loc == ("units", "names", "u9")


def test_level_names_are_keyed_by_numbers(tmp_path):
    spec = write_spec(tmp_path, NAMED.replace('"40" = "quiet"', 'forty = "quiet"'))
    with pytest.raises(UserError, match="keyed by the level as a number"):
        pipeline.check(spec)
