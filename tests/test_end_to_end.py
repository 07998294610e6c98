"""End-to-end image baselines of the demo level grid and the composite figure.

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


@pytest.mark.parametrize("spec", [DEMO_SPEC, DEMO_SPEC.parent / "unit_composite.toml"], ids=["level_grid", "composite"])
def test_demo_figure_matches_baseline(spec):
    RESULTS.mkdir(parents=True, exist_ok=True)
    pipeline.render(spec, RESULTS, ["png"])
    actual = RESULTS / f"{spec.stem}.png"
    expected = BASELINES / f"{spec.stem}.png"
    if os.environ.get("FIGSPEC_UPDATE_BASELINES"):
        BASELINES.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(actual, expected)
        pytest.skip("baseline refreshed")
    shutil.copyfile(expected, RESULTS / f"{spec.stem}-expected.png")
    failure = compare_images(str(expected), str(actual), tol=TOLERANCE)  # writes *-failed-diff.png
    assert failure is None, failure
