"""Tables of the summary panels (level on x): points per unit and level, fitted curves, and
fit parameters with derived quantities. Fits that fail say so in the tables and a warning."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from scipy.stats import norm

from figspec.compute.fits import FitResult, derived_naka_rushton, fit, naka_rushton, pieron
from figspec.compute.latency import latency_points
from figspec.compute.response import response_points
from figspec.data.recording import Recording
from figspec.errors import FigspecWarning
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel, LevelResponsePanel

CURVE_POINTS = 200
PARAM_COLUMNS = ["unit", "model", "quantity", "value", "ci_low", "ci_high", "unit_of_value", "note"]


def _units(panel) -> list[str]:
    return list(panel.units) if panel.units else [panel.unit]


def _fit_tables(points: pd.DataFrame, y: str, sigma: pd.Series | None, model: str, levels: LevelSpec,
                panel, value_unit: str) -> tuple[pd.DataFrame, list[list]]:
    curves, params = [], []
    scale = levels.scale or "linear"
    level_unit = levels.unit
    units_of = {"R0": value_unit, "Rmax": value_unit, "L50": level_unit, "x50": level_unit, "n": "",
                "t0": "ms", "k": "ms", "beta": ""}
    for unit, rows in points.groupby("unit", sort=False):
        s = None if sigma is None else sigma.loc[rows.index].to_numpy()
        result: FitResult = fit(model, rows["level"].to_numpy(), rows[y].to_numpy(), s, scale, panel.confidence)
        note = result.message if not result.ok else ("weighted" if result.weighted else "unweighted")
        for name, est, lo, hi in zip(result.names, result.estimate, result.ci_low, result.ci_high):
            params.append([unit, model, name, est, lo, hi, units_of[name], note])
        params.append([unit, model, "status", np.nan, np.nan, np.nan, "", result.status])
        for key, value in result.goodness.items():
            params.append([unit, model, key, value, np.nan, np.nan, "", ""])
        if model == "naka_rushton":
            for key, value in derived_naka_rushton(result, scale).items():
                what = "ratio x90/x10" if key == "dynamic_range" and scale == "linear" else level_unit
                params.append([unit, model, key, value, np.nan, np.nan, what,
                               "fit reaches 10 % of its driven range" if key == "level_10" else ""])
        if result.ok:
            grid = np.linspace(rows["level"].min(), rows["level"].max(), CURVE_POINTS)
            f = (naka_rushton if model == "naka_rushton" else pieron)(grid, scale)[0]
            curves.append(pd.DataFrame({"unit": unit, "level": grid, y: f(grid, *result.estimate)}))
        else:
            warnings.warn(f"unit {unit}: {model} fit {result.status}: {result.message} (drawn without a curve)",
                          FigspecWarning, stacklevel=3)
    curve = pd.concat(curves, ignore_index=True) if curves else pd.DataFrame(columns=["unit", "level", y])
    return curve, params


def level_response_tables(rec: Recording, panel: LevelResponsePanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`response_points`), ``fit`` (unit, level, response on a fine grid,
    only for fits that worked) and ``params`` (long table: fit parameters with CIs, status,
    goodness of fit, derived levels, and the threshold by test: the lowest level whose
    Holm-corrected test is significant)."""
    points = response_points(rec, panel, _units(panel))
    value_unit = str(points["response_unit"].iloc[0])
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "response"])
    if panel.fit != "none":
        sigma = None
        if panel.error == "sem":
            sigma = points["error_high"] - points["response"]
        curve, params = _fit_tables(points, "response", sigma, panel.fit, levels, panel, value_unit)
    if panel.test != "none":
        for unit, rows in points.groupby("unit", sort=False):
            sig = rows.loc[rows["significant"], "level"]
            params.append([unit, "test", "threshold_by_test", float(sig.min()) if len(sig) else np.nan,
                           np.nan, np.nan, levels.unit,
                           "lowest level significant after Holm" if len(sig) else "no level significant"])
    return {"points": points, "fit": curve, "params": pd.DataFrame(params, columns=PARAM_COLUMNS)}


def latency_tables(rec: Recording, panel: LatencyPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`latency_points`), ``fit`` (unit, level, latency_ms on a fine grid)
    and ``params`` (Pieron parameters with CIs, status and goodness of fit)."""
    points = latency_points(rec, panel, _units(panel))
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "latency_ms"])
    if panel.fit != "none":
        # the CI's half-width over the normal quantile stands in for the SD of each median
        sigma = (points["ci_high_ms"] - points["ci_low_ms"]) / 2 / norm.ppf(0.5 + panel.confidence / 2)
        curve, params = _fit_tables(points, "latency_ms", sigma, "pieron", levels, panel, "ms")
    return {"points": points, "fit": curve, "params": pd.DataFrame(params, columns=PARAM_COLUMNS)}
