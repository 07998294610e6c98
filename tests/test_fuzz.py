"""Fuzzing the spec loader and ``check`` with Hypothesis: whatever the spec holds, figspec
either accepts it or reports user errors (exit 2); no other exception escapes. A fixed number
of examples here; bench/fuzz_check.py runs the same strategies for minutes."""

from __future__ import annotations

import warnings
from pathlib import Path

import pytest

from hypothesis import HealthCheck, given, settings

from figspec.errors import FigspecWarning, UserError
from spec_fuzzing import specs


def check_text(text: str, folder) -> None:
    """``check`` of a spec given as text; a :class:`UserError` is the promised outcome."""
    from figspec import pipeline

    path = folder / "fuzzed.toml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FigspecWarning)
        try:
            pipeline.check(path)
        except UserError as err:
            assert err.problems and all(p.format() for p in err.problems)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                  HealthCheck.too_slow])
@given(text=specs)
def test_check_never_fails_with_an_internal_error(text, tmp_path):
    check_text(text, tmp_path)


FOUND = sorted((Path(__file__).resolve().parent / "bad_inputs" / "found").glob("*/fuzzed.toml"))


@pytest.mark.parametrize("spec", FOUND or [pytest.param(None, marks=pytest.mark.skip(
    reason="bench/fuzz_check.py has kept no finding (tests/bad_inputs/found/ holds none)"))])
def test_every_kept_fuzz_finding_ends_cleanly(spec, cli, tmp_path):
    result = cli("render", spec, "-o", tmp_path / "out")
    assert result.returncode in (0, 2) and "Traceback" not in result.stderr, result.stderr
