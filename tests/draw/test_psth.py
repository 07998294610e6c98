import pytest

from figspec.draw.psth import nice_top, tidy_top


@pytest.mark.parametrize("value, top", [(0.0, 1.0), (0.7, 1.0), (1.3, 2.0), (2.2, 2.5),
                                        (137.0, 200.0), (200.0, 200.0), (480.0, 500.0)])
def test_nice_top_rounds_up(value, top):
    assert nice_top(value) == top


@pytest.mark.parametrize("value, top", [(0.0, 1.0), (101.7, 120.0), (120.0, 120.0), (45.0, 50.0), (7.3, 8.0),
                                        (33.0, 35.0), (0.95, 1.0), (155.0, 160.0), (251.0, 300.0)])
def test_tidy_top_sits_just_above_the_data(value, top):
    assert tidy_top(value) == top
    assert top < 1.25 * value or value < 1.0          # never leaves more than a quarter of a row empty
