"""End-to-end image baselines of the demo level grid and the composite figure, through the
helper labs use for their own figures (figspec.testing).

Refresh after an intended change: ``FIGSPEC_UPDATE_BASELINES=1 python -m pytest tests/test_end_to_end.py``
then look at the new PNGs in tests/reference_figures/ before committing them.
"""

from pathlib import Path

import pytest

from figspec.testing import assert_figure_matches

from helpers import ROOT, SPECS

BASELINES = Path(__file__).parent / "reference_figures"
RESULTS = ROOT / "figure_checks" / "end_to_end"

# RMS over RGB channels on a 0-255 scale (figspec.output.compare.rms). The same versions
# render the same bytes (RMS 0); measured here, changing bin_ms 5 -> 4 moves the level grid by
# RMS 11.9 and a changed panel title moves the composite by 8.7, so each tolerance lets
# sub-pixel anti-aliasing drift through but not a changed label or bin.
TOLERANCES = {"level_grid": 1.0, "unit_composite": 1.5}


@pytest.mark.parametrize("name", sorted(TOLERANCES))
def test_demo_figure_matches_baseline(name):
    assert_figure_matches(SPECS / f"{name}.toml", BASELINES, TOLERANCES[name], RESULTS)
