"""Colours drawn on white stay visible: sequential maps for levels stop before near-white."""

from __future__ import annotations

import matplotlib as mpl
import numpy as np
import pytest

from figspec.draw.colours import MAX_LIGHTNESS, lightness, visible_range
from figspec.spec.fields import SEQUENTIAL_MAPS


def test_lightness_matches_the_cielab_definition():
    # CIE 1976: white L* = 100, black 0, sRGB mid grey (0.5) about 53.4 (IEC 61966-2-1 transfer)
    assert lightness([1, 1, 1]) == pytest.approx(100, abs=1e-6)
    assert lightness([0, 0, 0]) == pytest.approx(0, abs=1e-6)
    assert lightness([0.5, 0.5, 0.5]) == pytest.approx(53.39, abs=0.05)


@pytest.mark.parametrize("name", SEQUENTIAL_MAPS)
def test_every_offered_map_exists_and_keeps_a_visible_stretch(name):
    cmap = mpl.colormaps[name]                      # each name figspec offers is one of matplotlib's
    lo, hi = visible_range(cmap)
    assert hi - lo >= 0.4
    assert (lightness(cmap(np.linspace(lo, hi, 50))[:, :3]) <= MAX_LIGHTNESS + 1e-9).all()
