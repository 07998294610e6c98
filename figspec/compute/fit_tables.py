"""Tables of a fitted level function, shared by the kinds with level on x: the curve on a fine
grid (only for fits that worked), and a long table of parameters with CIs, status, goodness of
fit and derived levels. Fits that fail say so in the tables and a warning."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from figspec.compute.fits import FitResult, derived_naka_rushton, fit, naka_rushton, pieron
from figspec.errors import FigspecWarning
from figspec.spec.models import LevelSpec

CURVE_POINTS = 200
PARAM_COLUMNS = ["unit", "model", "quantity", "value", "ci_low", "ci_high", "unit_of_value", "note"]
MODEL_NAMES = {"naka_rushton": "Naka–Rushton", "pieron": "Piéron"}


def empty_params() -> pd.DataFrame:
    return pd.DataFrame(columns=PARAM_COLUMNS)


def fit_tables(points: pd.DataFrame, y: str, sigma: pd.Series | None, model: str, levels: LevelSpec,
               confidence: float, value_unit: str) -> tuple[pd.DataFrame, list[list]]:
    """(curve table with columns unit, level, ``y``; parameter rows as ``PARAM_COLUMNS``) of
    ``model`` fitted to each unit's points."""
    curves, params = [], []
    scale = levels.scale or "linear"
    level_unit = levels.unit
    units_of = {"R0": value_unit, "Rmax": value_unit, "L50": level_unit, "x50": level_unit, "n": "",
                "t0": "ms", "k": "ms", "beta": ""}
    for unit, rows in points.groupby("unit", sort=False):
        s = None if sigma is None else sigma.loc[rows.index].to_numpy()
        result: FitResult = fit(model, rows["level"].to_numpy(), rows[y].to_numpy(), s, scale, confidence)
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


def fit_rows(panel, params: pd.DataFrame) -> list[list]:
    """Statistics rows of a parameter table (a fit's status is text: it goes in the note)."""
    return [["fit", panel.name, r.unit, None, f"{r.model}:{r.quantity}", r.value, r.ci_low, r.ci_high, r.note]
            for r in params.itertuples(index=False)]


def fit_sentence(model: str, params: pd.DataFrame, level_unit: str) -> str:
    """What the legend says of the fits: which were drawn, and how they were weighted."""
    status = params[params["quantity"] == "status"]
    drawn = status[status["note"] == "ok"]["unit"].tolist()
    if not drawn:
        return f" No {MODEL_NAMES[model]} fit is drawn (no fit succeeded; see the statistics table)."
    notes = set(params[(params["unit"].isin(drawn)) & params["note"].isin(["weighted", "unweighted"])]["note"])
    if notes == {"weighted"}:
        how = "weighted least squares"
    elif notes == {"unweighted"}:
        how = "unweighted least squares"
    else:
        how = "least squares (weighted for units whose every point had an error > 0)"
    missing = sorted(set(status["unit"]) - set(drawn))
    text = f" Curves: {MODEL_NAMES[model]} fits by {how} on the linear level ({level_unit})"
    return text + (f"; not drawn for {', '.join(missing)} (fit not ok)." if missing else ".")
