import numpy as np
import pytest

from figspec.compute.fits import derived_naka_rushton, fit
from figspec.compute.decibels import to_linear

LEVELS = np.arange(0.0, 81.0, 10.0)


def hill(x, r0, rmax, x50, n):
    # Naka & Rushton 1966 / Hill 1910 on the linear quantity x
    return r0 + rmax * x ** n / (x ** n + x50 ** n)


@pytest.mark.parametrize("scale, divisor", [("pressure_db", 20), ("power_db", 10)])
def test_noise_free_naka_rushton_in_db_recovers_the_parameters(scale, divisor):
    x = 10 ** (LEVELS / divisor)
    y = hill(x, 4.0, 90.0, 10 ** (42.0 / divisor), 1.3)
    result = fit("naka_rushton", LEVELS, y, np.full(LEVELS.size, 1.0), scale)
    assert result.status == "ok"
    assert result.estimate == pytest.approx([4.0, 90.0, 42.0, 1.3], rel=1e-6)


def test_noise_free_naka_rushton_on_a_linear_scale():
    contrast = np.array([2.0, 4, 8, 16, 32, 64, 100])
    y = hill(contrast, 1.0, 30.0, 20.0, 2.0)
    result = fit("naka_rushton", contrast, y, None, "linear")
    assert result.estimate == pytest.approx([1.0, 30.0, 20.0, 2.0], rel=1e-6)


def test_noisy_fit_covers_the_true_parameters(rng):
    # weighted fit with known SDs: the 95 % CIs should cover the truth in most of 40 repeats
    truth = np.array([5.0, 100.0, 40.0, 1.5])
    x = to_linear(LEVELS, "pressure_db")
    clean = hill(x, truth[0], truth[1], 10 ** (truth[2] / 20), truth[3])
    sd = np.full(LEVELS.size, 4.0)
    covered = np.zeros(4)
    for _ in range(40):
        result = fit("naka_rushton", LEVELS, clean + rng.normal(0, sd), sd, "pressure_db")
        assert result.status == "ok"
        covered += (result.ci_low <= truth) & (truth <= result.ci_high)
    assert np.all(covered / 40 >= 0.8)


def test_dynamic_range_identity():
    # derived from the Hill form: x90 / x10 = 81^(1/n), i.e. 20 log10(81) / n = 38.17 / n dB for a
    # pressure-like quantity (REFERENCES.md). Checked against the fitted curve solved numerically.
    y = hill(10 ** (LEVELS / 20), 0.0, 50.0, 10 ** (35 / 20), 2.0)
    result = fit("naka_rushton", LEVELS, y, np.full(LEVELS.size, 1.0), "pressure_db")
    derived = derived_naka_rushton(result, "pressure_db")
    assert derived["dynamic_range"] == pytest.approx(38.17 / 2.0, abs=0.01)
    fine = np.linspace(-40, 120, 160_001)
    curve = hill(10 ** (fine / 20), 0.0, 50.0, 10 ** (35 / 20), 2.0)
    l10, l90 = fine[np.searchsorted(curve, 5.0)], fine[np.searchsorted(curve, 45.0)]
    assert (derived["level_10"], derived["level_90"]) == pytest.approx((l10, l90), abs=2e-3)


def test_noise_free_pieron_recovers_the_parameters():
    # Pieron's law t = t0 + k x^(-beta) (Pieron 1914; Luce 1986)
    t = 6.0 + 20.0 * to_linear(LEVELS, "pressure_db") ** -0.35
    result = fit("pieron", LEVELS, t, np.full(LEVELS.size, 0.5), "pressure_db")
    assert result.status == "ok"
    assert result.estimate == pytest.approx([6.0, 20.0, 0.35], rel=1e-5)


def test_too_few_levels_and_no_degrees_of_freedom_are_reported():
    y = hill(10 ** (LEVELS / 20), 0, 50, 10 ** (35 / 20), 2)
    assert fit("naka_rushton", LEVELS[:3], y[:3], None, "pressure_db").status == "too few levels"
    assert fit("naka_rushton", LEVELS[:4], y[:4], None, "pressure_db").status == "ill-conditioned"
