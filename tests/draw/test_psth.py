import pytest

from figspec.draw.psth import nice_top


@pytest.mark.parametrize("value, top", [(0.0, 1.0), (0.7, 1.0), (1.3, 2.0), (2.2, 2.5),
                                        (137.0, 200.0), (200.0, 200.0), (480.0, 500.0)])
def test_nice_top_rounds_up(value, top):
    assert nice_top(value) == top
