"""The built-in categorical palette keeps every pair of unit colours apart for every reader,
and every colour visible on white."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from figspec.output.colour_vision import delta_e, lab, simulate
from figspec.spec.style import builtin_styles
from figspec.spec.style_files import resolve_style

MIN_DELTA_E = 15.0        # CIE 1976 units; common practice: about 10 is "clearly different" side by side
MIN_DELTA_E_CVD = 10.0    # the journal check's default threshold under simulated deficiencies
MAX_LIGHTNESS = 75.0      # CIELAB L*: lighter lines vanish on white paper (common practice)


def _rgb(hex_colour: str) -> np.ndarray:
    return np.array([int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5)])


@pytest.mark.parametrize("style", builtin_styles())
def test_unit_colours_stay_distinct_and_visible(style):
    colours = [_rgb(c) for c in resolve_style(style, None).style.palette.units]
    for a, b in itertools.combinations(colours, 2):
        assert float(delta_e(a, b)) >= MIN_DELTA_E
        for deficiency in ("deuteranopia", "protanopia"):        # Machado et al. 2009 simulation
            assert float(delta_e(simulate(a, deficiency), simulate(b, deficiency))) >= MIN_DELTA_E_CVD
    assert all(float(lab(c)[0]) <= MAX_LIGHTNESS for c in colours)


def test_colours_by_css_name_are_the_w3c_named_colours():
    import matplotlib.colors as mc
    from pydantic import TypeAdapter

    from figspec.spec.css_colours import CSS_COLOURS
    from figspec.spec.fields import Colour

    assert CSS_COLOURS == {name: value.lower() for name, value in mc.CSS4_COLORS.items()}
    colour = TypeAdapter(Colour)
    assert colour.validate_python("SteelBlue") == "#4682b4" == colour.validate_python("#4682B4")
    with pytest.raises(ValueError, match="did you mean 'steelblue'"):
        colour.validate_python("steelblu")
