"""A pytest helper so a lab's repository can test its own figures against baselines.

    from figspec.testing import assert_figure_matches

    def test_fig2():
        assert_figure_matches("specs/fig2.toml", "tests/baselines", tolerance=1.0)

Set ``FIGSPEC_UPDATE_BASELINES=1`` to (re)write the baselines instead, then look at them.
"""

from __future__ import annotations

import os
import shutil
import unittest
from pathlib import Path

from figspec import pipeline
from figspec.output.names import output_stem
from figspec.output.compare import rms_difference
from figspec.output.files import write_all


def assert_figure_matches(spec: str | Path, baseline_dir: str | Path, tolerance: float = 1.0,
                          results_dir: str | Path = "figure_checks", update: bool | None = None) -> None:
    """Render ``spec`` to PNG and compare it with ``baseline_dir/<stem>.png`` (RMS over the RGB
    channels on a 0-255 scale, :func:`figspec.output.compare.rms`). Writes ``<stem>.new.png``,
    ``<stem>.baseline.png`` and, on failure, ``<stem>.difference.png`` under ``results_dir``;
    raises AssertionError when the figure differs by more than ``tolerance`` or the baseline is
    missing."""
    spec = Path(spec)
    files, _ = pipeline.render_in_memory(pipeline.check(spec))
    results, baselines = Path(results_dir), Path(baseline_dir)
    actual, expected = results / f"{output_stem(spec)}.new.png", baselines / f"{output_stem(spec)}.png"
    write_all({actual: files["png"]})
    if update if update is not None else bool(os.environ.get("FIGSPEC_UPDATE_BASELINES")):
        write_all({expected: files["png"]})
        raise unittest.SkipTest(f"baseline {expected} written: look at it before committing")
    if not expected.is_file():
        raise AssertionError(f"no baseline {expected}: run with FIGSPEC_UPDATE_BASELINES=1 to create it")
    shutil.copyfile(expected, results / f"{output_stem(spec)}.baseline.png")
    result = rms_difference(expected, actual, tolerance, results / f"{output_stem(spec)}.difference.png")
    assert result.passed, f"{spec}: {result.message} (see {results})"
