"""End-to-end image baseline of the demo level grid.

Refresh after an intended change: ``FIGSPEC_UPDATE_BASELINES=1 python -m pytest tests/test_end_to_end.py``
then look at the new PNG before committing it.
"""

import os
import shutil
from pathlib import Path

import pytest
from matplotlib.testing.compare import compare_images

from figspec import pipeline

from helpers import DEMO_SPEC, ROOT

BASELINES = Path(__file__).parent / "baseline_images" / "test_end_to_end"
RESULTS = ROOT / "result_images" / "test_end_to_end"

# RMS over channels on a 0-255 scale (matplotlib.testing.compare). Same versions render the
# same bytes (RMS 0); 1.0 lets through sub-pixel anti-aliasing drift but not a changed label
# (RMS about 11) or a 1 % shift (about 19), measured on a small figure (REFERENCES.md).
TOLERANCE = 1.0


def test_demo_level_grid_matches_baseline():
    RESULTS.mkdir(parents=True, exist_ok=True)
    pipeline.render(DEMO_SPEC, RESULTS, ["png"])
    actual = RESULTS / "level_grid.png"
    expected = BASELINES / "level_grid.png"
    if os.environ.get("FIGSPEC_UPDATE_BASELINES"):
        BASELINES.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(actual, expected)
        pytest.skip("baseline refreshed")
    shutil.copyfile(expected, RESULTS / "level_grid-expected.png")
    failure = compare_images(str(expected), str(actual), tol=TOLERANCE)  # writes *-failed-diff.png
    assert failure is None, failure
