"""A pytest helper so a lab's repository can test its own figures against baselines.

    from figspec.testing import assert_figure_matches

    def test_fig2():
        assert_figure_matches("../specs/fig2.toml", "baselines", tolerance=1.0)

Relative paths are taken from the folder of the test file that calls the helper when the file or
folder is there, else from the current folder (pytest's rootdir when pytest runs from it).

Set ``FIGSPEC_UPDATE_BASELINES=1`` (or ``true``, ``yes``, ``on``) to (re)write the baselines
instead, then look at them: the test is reported as skipped, at the test, naming the file
written. ``0``, ``false``, ``no``, ``off`` or an empty value compare as usual; any other value is
an error, so a typo never rewrites a baseline. A spec with a problem fails the test with its
one-line message.
"""

from __future__ import annotations

import inspect
import os
import shutil
from pathlib import Path

from figspec import pipeline
from figspec.errors import UserError
from figspec.optional import require
from figspec.output.compare import rms_difference
from figspec.output.files import write_all
from figspec.output.names import output_stem

TRUE, FALSE = {"1", "true", "yes", "on"}, {"", "0", "false", "no", "off"}
VARIABLE = "FIGSPEC_UPDATE_BASELINES"


def updating(value: str | None) -> bool:
    """Whether the environment value asks to rewrite baselines (an unknown value is an error)."""
    text = (value or "").strip().lower()
    if text in TRUE:
        return True
    if text in FALSE:
        return False
    raise ValueError(f"{VARIABLE}={value!r}: use 1 (or true, yes, on) to rewrite baselines, 0 (or false, no, off) "
                     "to compare")


def located(path: str | Path, caller: Path) -> Path:
    """``path`` as the helper reads it: as given when absolute; else from the test file's folder
    when it exists there, else from the current folder when it exists there, else (a folder to be
    made) from the test file's folder."""
    path = Path(path)
    if path.is_absolute():
        return path
    beside = caller.parent / path
    if beside.exists():
        return beside
    return path if path.exists() else beside


def assert_figure_matches(spec: str | Path, baseline_dir: str | Path, tolerance: float = 1.0,
                          results_dir: str | Path = "figure_checks", update: bool | None = None) -> None:
    """Render ``spec`` to PNG and compare it with ``baseline_dir/<stem>.png`` (RMS over the RGB
    channels on a 0-255 scale, :func:`figspec.output.compare.rms`). Writes ``<stem>.new.png``,
    ``<stem>.baseline.png`` and, on failure, ``<stem>.difference.png`` under ``results_dir``;
    fails the test when the figure differs by more than ``tolerance``, the baseline is missing
    or the spec has a problem."""
    __tracebackhide__ = True                 # failures are reported at the test's line
    pytest = require("pytest", "figspec.testing")
    caller = Path(inspect.stack()[1].filename)
    spec, baselines, results = located(spec, caller), located(baseline_dir, caller), located(results_dir, caller)
    try:
        rewrite = update if update is not None else updating(os.environ.get(VARIABLE))
    except ValueError as err:
        pytest.fail(str(err), pytrace=False)
    try:
        files, _ = pipeline.render_in_memory(pipeline.check(spec))
    except UserError as err:
        pytest.fail("\n".join(p.format() for p in err.problems), pytrace=False)
    actual, expected = results / f"{output_stem(spec)}.new.png", baselines / f"{output_stem(spec)}.png"
    write_all({actual: files["png"]})
    if rewrite:
        write_all({expected: files["png"]})
        raise pytest.skip.Exception(f"baseline {expected} written: look at it before committing",
                                    _use_item_location=True)
    if not expected.is_file():
        pytest.fail(f"no baseline {expected}: run with {VARIABLE}=1 to create it", pytrace=False)
    shutil.copyfile(expected, results / f"{output_stem(spec)}.baseline.png")
    result = rms_difference(expected, actual, tolerance, results / f"{output_stem(spec)}.difference.png")
    assert result.passed, f"{spec}: {result.message} (see {results})"
