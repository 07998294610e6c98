"""Fits of level functions: estimates against noise-free data from the published forms, the
status rules, and intervals that respect the bounds."""

import numpy as np
import pytest

from figspec.compute.decibels import to_linear
from figspec.compute.fit_tables import UnitPoints, fit_unit
from figspec.compute.fits import derived_naka_rushton, least_squares

LEVELS = np.arange(0.0, 81.0, 10.0)


def hill(x, r0, rmax, x50, n):
    # Naka & Rushton 1966 / Hill 1910 on the linear quantity x
    return r0 + rmax * x ** n / (x ** n + x50 ** n)


@pytest.mark.parametrize("scale, divisor", [("pressure_db", 20), ("power_db", 10)])
def test_noise_free_naka_rushton_in_db_recovers_the_parameters(scale, divisor):
    x = 10 ** (LEVELS / divisor)
    y = hill(x, 4.0, 90.0, 10 ** (42.0 / divisor), 1.3)
    estimate = least_squares("naka_rushton", LEVELS, y, np.full(LEVELS.size, 1.0), scale)
    assert estimate == pytest.approx([4.0, 90.0, 42.0, 1.3], rel=1e-6)


def test_noise_free_naka_rushton_on_a_linear_scale():
    contrast = np.array([2.0, 4, 8, 16, 32, 64, 100])
    y = hill(contrast, 1.0, 30.0, 20.0, 2.0)
    assert least_squares("naka_rushton", contrast, y, None, "linear") == pytest.approx([1.0, 30.0, 20.0, 2.0], rel=1e-6)


def test_dynamic_range_identity():
    # derived from the Hill form: x90 / x10 = 81^(1/n), i.e. 20 log10(81) / n = 38.17 / n dB for a
    # pressure-like quantity. Checked against the curve solved numerically.
    derived = derived_naka_rushton(np.array([0.0, 50.0, 35.0, 2.0]), "pressure_db")
    assert derived["dynamic_range"] == pytest.approx(38.17 / 2.0, abs=0.01)
    fine = np.linspace(-40, 120, 160_001)
    curve = hill(10 ** (fine / 20), 0.0, 50.0, 10 ** (35 / 20), 2.0)
    l10, l90 = fine[np.searchsorted(curve, 5.0)], fine[np.searchsorted(curve, 45.0)]
    assert (derived["level_10"], derived["level_90"]) == pytest.approx((l10, l90), abs=2e-3)


def test_noise_free_pieron_recovers_the_parameters():
    # Pieron's law t = t0 + k x^(-beta) (Pieron 1914; Luce 1986)
    t = 6.0 + 20.0 * to_linear(LEVELS, "pressure_db") ** -0.35
    assert least_squares("pieron", LEVELS, t, None, "pressure_db") == pytest.approx([6.0, 20.0, 0.35], rel=1e-5)


def poisson_points(rng, truth, levels=LEVELS, n=20, window_s=0.05):
    mu = hill(to_linear(levels, "pressure_db"), *truth) * window_s
    values = [rng.poisson(m, n) / window_s for m in mu]
    return UnitPoints(levels, values, np.array([v.mean() for v in values]), np.mean, np.full(levels.size, 1 / n / window_s))


def test_a_fit_on_well_sampled_data_is_ok_with_intervals_inside_the_bounds(rng):
    data = poisson_points(rng, (5.0, 100.0, 10 ** (40 / 20), 1.5))
    result, refits = fit_unit("naka_rushton", data, "pressure_db", 0.95, 100, 0, "u")
    assert result.status == "ok" and len(refits) == 100
    assert 0 <= result.ci_low[1] and LEVELS.min() <= result.ci_low[2] <= result.ci_high[2] <= LEVELS.max()


def test_a_fit_whose_midpoint_lies_beyond_the_tested_levels_is_never_ok(rng):
    # the response still rises at the top level: x50 is not constrained by these data
    data = poisson_points(rng, (5.0, 200.0, 10 ** (95 / 20), 1.5))
    result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 100, 0, "u")
    assert result.status == "poorly constrained"
    assert any("L50" in r for r in result.reasons)


def test_a_level_where_no_trial_spiked_keeps_the_fit_weighted(rng):
    data = poisson_points(rng, (0.0, 100.0, 10 ** (40 / 20), 3.0))
    assert data.values[0].max() == 0                         # SEM 0 at the lowest level
    result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 60, 0, "u")
    assert result.weighted and result.drawn


def test_too_few_levels_fail_and_are_not_drawn():
    data = UnitPoints(LEVELS[:4], None, hill(10 ** (LEVELS[:4] / 20), 0, 50, 10 ** (35 / 20), 2))
    result, _ = fit_unit("naka_rushton", data, "pressure_db", 0.95, 60, 0, "u")
    assert result.status == "failed" and not result.drawn
