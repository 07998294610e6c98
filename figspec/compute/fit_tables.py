"""Tables of a fitted level function, shared by the kinds with level on x: the curve on a fine
grid (for fits that are drawn), and a long table of parameters with intervals, the weighting,
the status with its reasons, goodness of fit and derived levels.

Intervals come from a bootstrap over trials: each level's trials are resampled with
replacement (seeded per panel, unit and level), the points recomputed and the model refitted
from the estimate; the interval is the percentile interval of the refits, so it stays within
the parameter bounds. Fits that fail say so in the tables and a warning."""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Callable

import numpy as np

from figspec.compute.batch_fit import refit_all
from figspec.compute.decibels import DB_DIVISOR, to_linear
from figspec.compute.describe import shown_unit
from figspec.compute.fits import MODELS, FitResult, derived_naka_rushton, goodness_of_fit, judge, least_squares, setup
from figspec.compute.resampling import generator
from figspec.errors import FigspecWarning
from figspec.optional import deferred
from figspec.spec.models import LevelSpec

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

CURVE_POINTS = 200
PARAM_COLUMNS = ["unit", "model", "quantity", "value", "ci_low", "ci_high", "unit_of_value", "note"]
MODEL_NAMES = {"naka_rushton": "Naka–Rushton", "pieron": "Piéron"}


@dataclass(frozen=True)
class UnitPoints:
    """What one unit's fit is made from: each level's per-trial values (None where trials cannot
    be resampled), the statistic that makes a point of them, and each level's SE floor (None:
    the fit is unweighted)."""

    levels: np.ndarray
    values: list[np.ndarray] | None
    points: np.ndarray
    statistic: Callable | None = None
    floor: np.ndarray | None = None
    sigma: np.ndarray | None = None          # each point's SE when given directly (a summary across units)
    why_no_interval: str = "one value per level, so there are no trials to resample"


def empty_params() -> pd.DataFrame:
    return pd.DataFrame(columns=PARAM_COLUMNS)


def _sigma(values: list[np.ndarray], floor: np.ndarray) -> np.ndarray:
    """Each level's SEM (ddof = 1), never below its floor."""
    sem = np.array([np.std(v, ddof=1) / np.sqrt(v.size) if v.size > 1 else 0.0 for v in values])
    return np.maximum(sem, floor)


def bootstrap(model: str, data: UnitPoints, estimate: np.ndarray, scale: str, resamples: int, seed: int,
              unit: str) -> tuple[np.ndarray, float]:
    """(refitted parameters, one row per successful refit; the share of refits that failed)."""
    weighted = data.floor is not None
    boot_y = np.empty((resamples, data.levels.size))
    boot_s = np.empty((resamples, data.levels.size)) if weighted else None
    for i, (lv, v) in enumerate(zip(data.levels, data.values)):
        idx = generator(seed, unit, lv).integers(0, v.size, size=(resamples, v.size))
        sample = v[idx]
        boot_y[:, i] = data.statistic(sample, axis=1)
        if weighted:
            sem = sample.std(axis=1, ddof=1) / np.sqrt(v.size) if v.size > 1 else np.zeros(resamples)
            boot_s[:, i] = np.maximum(sem, data.floor[i])
    f, _, _, bounds = setup(model, data.levels, data.points, scale)
    fits = refit_all(f, model, scale, data.levels, boot_y, boot_s, estimate, bounds)
    good = fits[np.all(np.isfinite(fits), axis=1)]
    return good, 1.0 - len(good) / resamples


def bias_corrected_interval(refits: np.ndarray, estimate: np.ndarray, confidence: float) -> tuple[np.ndarray, np.ndarray]:
    """Bias-corrected percentile bootstrap interval of each parameter (Efron 1981, Canadian J
    Statist 9:139; Efron & Tibshirani 1993, ch. 14): with z0 = Phi^-1(share of refits below the
    estimate), the bounds are the refits' quantiles at Phi(2 z0 -/+ z_(1-alpha/2)). It stays
    within the bounds, like every quantile of bounded refits."""
    from scipy.stats import norm

    below = (np.sum(refits < estimate, axis=0) + 0.5 * np.sum(refits == estimate, axis=0)) / len(refits)
    z0 = norm.ppf(np.clip(below, 1 / (2 * len(refits)), 1 - 1 / (2 * len(refits))))
    z = norm.ppf(0.5 + confidence / 2)
    low_q, high_q = norm.cdf(2 * z0 - z), norm.cdf(2 * z0 + z)
    low = np.array([np.quantile(refits[:, i], low_q[i]) for i in range(refits.shape[1])])
    high = np.array([np.quantile(refits[:, i], high_q[i]) for i in range(refits.shape[1])])
    return low, high


def percentile_interval(refits: np.ndarray, estimate: np.ndarray, confidence: float) -> tuple[np.ndarray, np.ndarray]:
    """Percentile bootstrap interval of each parameter (Efron & Tibshirani 1993, ch. 13)."""
    tail = (1 - confidence) / 2
    return np.quantile(refits, tail, axis=0), np.quantile(refits, 1 - tail, axis=0)


# One interval rule per model, chosen by coverage in 200 simulations each (docs/methods.md):
# Naka-Rushton 92.5-95 % with bias correction (88.5 % for R0 without); Pieron 92-97 % by plain
# percentiles (bias correction drops t0 to 76 %, its refits pile up at the bound t0 <= min latency).
INTERVALS = {"naka_rushton": bias_corrected_interval, "pieron": percentile_interval}
INTERVAL_NAMES = {"naka_rushton": "bias-corrected bootstrap", "pieron": "percentile bootstrap"}


def fit_unit(model: str, data: UnitPoints, scale: str, confidence: float, resamples: int, seed: int,
             unit: str) -> tuple[FitResult, np.ndarray]:
    """The fit of one unit and its bootstrap refits."""
    f, names, _, bounds = setup(model, data.levels, data.points, scale) if data.levels.size else (None, (), None, ())
    n_par = 4 if model == "naka_rushton" else 3
    empty = np.full(n_par, np.nan)
    names = names or (("R0", "Rmax", "L50", "n") if model == "naka_rushton" else ("t0", "k", "beta"))
    if data.levels.size <= n_par:
        reason = f"{data.levels.size} levels for {n_par} parameters: at least {n_par + 1} are needed"
        return FitResult(model, names, empty, empty, empty, "failed", (reason,)), np.empty((0, n_par))
    sigma = data.sigma if data.sigma is not None else (_sigma(data.values, data.floor) if data.floor is not None
                                                        else None)
    estimate = least_squares(model, data.levels, data.points, sigma, scale)
    if estimate is None:
        return FitResult(model, names, empty, empty, empty, "failed", ("the optimiser found no fit",)), \
            np.empty((0, n_par))
    goodness = goodness_of_fit(f, estimate, data.levels, data.points, sigma)
    if data.values is None:
        refits, failed = np.empty((0, n_par)), 0.0
        extra = (f"no interval: {data.why_no_interval}",)
    else:
        refits, failed = bootstrap(model, data, estimate, scale, resamples, seed, unit)
        extra = ()
    low, high = INTERVALS[model](refits, estimate, confidence) if len(refits) else (empty, empty)
    low, high, collapsed = drop_collapsed(names, estimate, low, high)
    reasons = judge(model, names, estimate, low, high, bounds, data.levels, goodness, failed) + collapsed
    status = "poorly constrained" if reasons else "ok"
    return FitResult(model, names, estimate, low, high, status, reasons + extra, goodness, sigma is not None,
                     bounds), refits


def drop_collapsed(names, estimate, low, high) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Intervals of zero width (every successful refit returned the estimate) are no intervals:
    NaN, with the reason, which makes the fit poorly constrained."""
    width = np.asarray(high, float) - np.asarray(low, float)
    flat = np.isfinite(width) & (width <= 1e-9 * np.maximum(np.abs(estimate), 1e-12))
    if not flat.any():
        return low, high, ()
    low, high = np.where(flat, np.nan, low), np.where(flat, np.nan, high)
    gone = ", ".join(n for n, f in zip(names, flat) if f)
    return low, high, (f"every refit returned the estimate of {gone}: no interval",)


def curve_grid(levels: np.ndarray, axis: str) -> np.ndarray:
    """Levels to draw a fitted curve at: evenly spaced on the axis it is drawn on (log-spaced
    on a log axis, so the curve is smooth there too; with a level of 0, a linear stretch from 0
    to the smallest positive level, as the axis draws that stretch)."""
    lo, hi = float(np.min(levels)), float(np.max(levels))
    if axis != "log" or hi <= 0:
        return np.linspace(lo, hi, CURVE_POINTS)
    smallest = float(np.min(levels[levels > 0]))
    logged = np.geomspace(smallest, hi, CURVE_POINTS)
    return np.concatenate([np.linspace(lo, smallest, 20, endpoint=False), logged]) if lo < smallest else logged


def fit_tables(by_unit: dict[str, UnitPoints], y: str, model: str, levels: LevelSpec, panel,
               value_unit: str, weighting: str) -> tuple[pd.DataFrame, list[list]]:
    """(curve table: unit, level, ``y``, status; parameter rows as ``PARAM_COLUMNS``)."""
    scale = levels.scale or "linear"
    units_of = {"R0": value_unit, "Rmax": value_unit, "L50": levels.unit, "x50": levels.unit, "n": "",
                "t0": "ms", "k": "ms", "beta": ""}
    curves, params = [], []
    for unit, data in by_unit.items():
        result, refits = fit_unit(model, data, scale, panel.confidence, panel.fit_resamples, panel.seed, unit)
        note = f"{result.status}" + (f": {result.message}" if result.message else "")
        params.append([unit, model, "status", np.nan, np.nan, np.nan, "", note])
        params.append([unit, model, "weighting", np.nan, np.nan, np.nan, "", weighting if result.weighted else "unweighted"])
        interval = (f"{panel.confidence:.0%} {INTERVAL_NAMES[model]} interval over trials "
                    f"({len(refits)} of {panel.fit_resamples} refits succeeded)")
        if data.values is not None and result.drawn:
            params.append([unit, model, "refits_succeeded", float(len(refits)), np.nan, np.nan, "",
                           f"of {panel.fit_resamples} bootstrap refits; "
                           f"{panel.fit_resamples - len(refits)} failed and are left out of the intervals"])
        for i, name in enumerate(result.names):
            note = interval if np.isfinite(result.ci_low[i]) else ("no interval" if len(refits) else "")
            params.append([unit, model, name, result.estimate[i], result.ci_low[i], result.ci_high[i], units_of[name],
                           note])
        params += [[unit, model, key, value, np.nan, np.nan, "", ""] for key, value in result.goodness.items()]
        if model == "naka_rushton" and result.drawn:
            params += _derived_rows(unit, result, refits, scale, levels.unit, panel.confidence)
        if result.drawn:
            grid = curve_grid(data.levels, getattr(panel, "level_axis", "linear"))
            f = MODELS[model](grid, scale)[0]
            curves.append(pd.DataFrame({"unit": unit, "level": grid, y: f(grid, *result.estimate),
                                        "status": result.status}))
        if not result.ok:
            warnings.warn(f"unit {unit}: {MODEL_NAMES[model]} fit {result.status}: {result.message}"
                          + (" (drawn dashed)" if result.drawn else " (drawn without a curve)"),
                          FigspecWarning, stacklevel=3)
    curve = pd.concat(curves, ignore_index=True) if curves else pd.DataFrame(columns=["unit", "level", y, "status"])
    return curve, params


def _derived_rows(unit, result: FitResult, refits, scale, level_unit, confidence) -> list[list]:
    derived = derived_naka_rushton(result.estimate, scale)
    boot = [derived_naka_rushton(p, scale) for p in refits]
    rows = []
    for key, value in derived.items():
        what = "ratio x90/x10" if key == "dynamic_range" and scale == "linear" else level_unit
        if not result.ok:
            rows.append([unit, "naka_rushton", key, np.nan, np.nan, np.nan, what,
                         f"unavailable: the fit is {result.status}"])
            continue
        tail = (1 - confidence) / 2
        low, high = np.quantile([b[key] for b in boot], [tail, 1 - tail]) if boot else (np.nan, np.nan)
        rows.append([unit, "naka_rushton", key, value, low, high, what,
                     "from the fit; interval from the bootstrap refits"])
    return rows


def fit_rows(panel, params: pd.DataFrame) -> list[list]:
    """Statistics rows of a parameter table (a fit's status is text: it goes in the note)."""
    return [["fit", panel.name, r.unit, None, f"{r.model}:{r.quantity}", r.value, r.ci_low, r.ci_high, r.note]
            for r in params.itertuples(index=False)]


def fit_sentence(model: str, params: pd.DataFrame, about, confidence: float) -> str:
    """What the legend says of the fits: how they were weighted, how intervals were found, and
    which were drawn solid, dashed or not at all."""
    status = params[params["quantity"] == "status"].set_index("unit")["note"].str.split(":").str[0]
    weighting = params[params["quantity"] == "weighting"].set_index("unit")["note"]
    name = MODEL_NAMES[model]
    if status.empty:
        return ""
    how = "; ".join(sorted(set(weighting)))
    text = (f" Curves: {name} fits {fitted_on(about.level_scale, about.level_unit)}, {how}; parameter intervals: "
            f"{confidence:.0%} {INTERVAL_NAMES[model]} over trials, from the refits that succeeded.")
    for label, units in (("poorly constrained, drawn dashed", status[status == "poorly constrained"].index),
                         ("failed, not drawn", status[status == "failed"].index)):
        if len(units):
            text += (f" {name} fit {label}: {', '.join(shown_unit(u, about) for u in units)} (reasons in the "
                     "statistics table).")
    return text


def fitted_on(scale: str | None, level_unit: str) -> str:
    """How the legend names what a fit's x was: the linear quantity behind levels in dB, or the level."""
    unit = f" in {level_unit}" if level_unit else ""
    if scale in DB_DIVISOR:
        return f"on the linear quantity 10^(L/{DB_DIVISOR[scale]:g}) of the level L{unit}"
    return f"on the level{unit}"


def linear_positive(levels: np.ndarray, scale: str) -> np.ndarray:
    """Levels whose linear quantity is > 0 (a Pieron fit cannot use the others)."""
    return to_linear(levels, scale) > 0
