import numpy as np
import pytest

from figspec.draw.shading import level_opacity


def test_opacity_is_linear_in_level_between_the_declared_ends():
    levels = np.array([0.0, 20.0, 80.0])
    assert level_opacity(levels, levels, (0.1, 0.5)) == pytest.approx([0.1, 0.2, 0.5])


def test_single_level_gets_the_highest_opacity():
    assert level_opacity(np.array([40.0]), np.array([40.0]), (0.1, 0.5)) == pytest.approx([0.5])
