"""End-to-end image baselines of the demo level grid and the composite figure, through the
helper labs use for their own figures (figspec.testing).

Refresh after an intended change: ``FIGSPEC_UPDATE_BASELINES=1 python -m pytest tests/test_end_to_end.py``
then look at the new PNGs before committing them.
"""

from pathlib import Path

import pytest

from figspec.testing import assert_figure_matches

from helpers import ROOT, SPECS

BASELINES = Path(__file__).parent / "baseline_images" / "test_end_to_end"
RESULTS = ROOT / "result_images" / "test_end_to_end"

# RMS over channels on a 0-255 scale (matplotlib.testing.compare). Same versions render the
# same bytes (RMS 0); 1.0 lets through sub-pixel anti-aliasing drift but not a changed label
# (RMS about 11) or a 1 % shift (about 19), measured on a small figure (REFERENCES.md).
TOLERANCE = 1.0


@pytest.mark.parametrize("name", ["level_grid", "unit_composite"])
def test_demo_figure_matches_baseline(name):
    assert_figure_matches(SPECS / f"{name}.toml", BASELINES, TOLERANCE, RESULTS)
