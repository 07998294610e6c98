import numpy as np
import pytest

from figspec.output.colour_vision import MACHADO_2009, delta_e, lab, simulate, to_linear, to_srgb


@pytest.mark.parametrize("deficiency", ["protanopia", "deuteranopia"])
def test_primaries_map_to_the_matrix_columns(deficiency):
    # Machado, Oliveira & Fernandes 2009, severity 1.0 (values from memory, checked against several
    # independent copies): a linear primary is sent to the matrix's column, then clipped
    m = MACHADO_2009[deficiency]
    for i in range(3):
        primary = np.eye(3)[i]
        assert simulate(primary, deficiency) == pytest.approx(to_srgb(np.clip(m[:, i], 0, 1)), abs=1e-12)


def test_hand_checked_red_under_protanopia():
    # linear (1, 0, 0) -> (0.152286, 0.114503, -0.003882) -> clipped -> sRGB encoding
    # 0.152286 -> 1.055 * 0.152286^(1/2.4) - 0.055 = 0.4266; 0.114503 -> 0.3727 (IEC 61966-2-1)
    assert simulate(np.array([1.0, 0, 0]), "protanopia") == pytest.approx([0.4266, 0.3727, 0.0], abs=1e-3)


@pytest.mark.parametrize("deficiency", ["protanopia", "deuteranopia"])
def test_greys_stay_grey(deficiency):
    # each matrix row sums to 1 (to 1e-6), so white and greys are unchanged
    for g in (0.0, 0.3, 1.0):
        assert simulate(np.full(3, g), deficiency) == pytest.approx(np.full(3, g), abs=1e-5)


def test_srgb_round_trip_and_lab_white():
    x = np.linspace(0, 1, 11)
    assert to_srgb(to_linear(x)) == pytest.approx(x)
    assert lab(np.ones(3)) == pytest.approx([100.0, 0.0, 0.0], abs=0.02)        # CIE L*a*b* of D65 white
    assert delta_e(np.zeros(3), np.ones(3)) == pytest.approx(100.0, abs=0.02)


def test_red_green_confusion_shows_under_deuteranopia():
    red, green = np.array([0.839, 0.153, 0.157]), np.array([0.173, 0.627, 0.173])
    assert delta_e(red, green) > 100
    assert delta_e(simulate(red, "deuteranopia"), simulate(green, "deuteranopia")) < 10
