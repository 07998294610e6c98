"""Bounded weighted least-squares fits of level functions: Naka-Rushton (Hill) and Pieron.

Naka & Rushton 1966, J Physiol 185:536-555 (the Hill 1910 form); Pieron 1914 (Luce 1986,
Response Times). Levels in dB are fitted on the linear quantity (see :mod:`decibels`); for dB
levels the Naka-Rushton midpoint is fitted as a level L50, which is the same model:
x^n / (x^n + x50^n) = 1 / (1 + 10^(n (L50 - L) / d)), d = 20 (pressure) or 10 (power).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from figspec.compute.decibels import DB_DIVISOR, to_linear

CONDITION_LIMIT = 1e12


@dataclass(frozen=True)
class FitResult:
    """A fitted model: parameter estimates with CIs, goodness of fit and a status."""

    model: str
    names: tuple[str, ...]
    estimate: np.ndarray
    ci_low: np.ndarray
    ci_high: np.ndarray
    status: str                      # "ok", "ill-conditioned", "failed", "too few levels"
    message: str = ""
    goodness: dict[str, float] = field(default_factory=dict)
    weighted: bool = True

    @property
    def ok(self) -> bool:
        return self.status == "ok"


def naka_rushton(level: np.ndarray, scale: str):
    """The model as a function of level for curve_fit, its parameter names and units."""
    if scale in DB_DIVISOR:
        d = DB_DIVISOR[scale]

        def f(lv, r0, rmax, l50, n):
            return r0 + rmax / (1.0 + 10.0 ** (n * (l50 - lv) / d))

        return f, ("R0", "Rmax", "L50", "n")

    def g(x, r0, rmax, x50, n):
        xn = np.power(np.maximum(x, 0.0), n)
        return r0 + rmax * xn / (xn + x50 ** n)

    return g, ("R0", "Rmax", "x50", "n")


def pieron(level: np.ndarray, scale: str):
    """t = t0 + k x^(-beta) with x the linear quantity of the level."""

    def f(lv, t0, k, beta):
        return t0 + k * np.power(to_linear(lv, scale), -beta)

    return f, ("t0", "k", "beta")


def fit(model: str, level: np.ndarray, y: np.ndarray, sigma: np.ndarray | None, scale: str,
        confidence: float = 0.95) -> FitResult:
    """Fit ``model`` ("naka_rushton" or "pieron") to points (level, y) with SDs ``sigma``.

    Weighted (absolute sigma) when every sigma is finite and > 0, else unweighted. CIs are
    estimate +/- z SE from the covariance (weighted; normal quantile) or +/- t SE (unweighted,
    Student t with n - p degrees of freedom).
    """
    from scipy.optimize import OptimizeWarning, curve_fit
    from scipy.stats import chi2, norm
    from scipy.stats import t as student_t

    keep = np.isfinite(level) & np.isfinite(y)
    level, y = np.asarray(level, float)[keep], np.asarray(y, float)[keep]
    sigma = None if sigma is None else np.asarray(sigma, float)[keep]
    f, names, p0, bounds = _setup(model, level, y, scale)
    n_par = len(names)
    empty = np.full(n_par, np.nan)
    if level.size < n_par:
        return FitResult(model, names, empty, empty, empty, "too few levels",
                         f"{level.size} levels with data for {n_par} parameters")
    weighted = sigma is not None and bool(np.all(np.isfinite(sigma) & (sigma > 0)))
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", OptimizeWarning)
            p, cov = curve_fit(f, level, y, p0=p0, sigma=sigma if weighted else None,
                               absolute_sigma=weighted, bounds=bounds, maxfev=20000)
    except (RuntimeError, ValueError) as err:
        return FitResult(model, names, empty, empty, empty, "failed", str(err).split("\n")[0])
    singular = any(issubclass(w.category, OptimizeWarning) for w in caught)
    dof = level.size - n_par
    residual = y - f(level, *p)
    goodness = {"r_squared": float(1 - np.sum(residual ** 2) / np.sum((y - y.mean()) ** 2)) if y.size > 1 else np.nan,
                "dof": float(dof)}
    if weighted:
        goodness["chi_squared"] = float(np.sum((residual / sigma) ** 2))
        goodness["p_chi_squared"] = float(chi2.sf(goodness["chi_squared"], dof)) if dof > 0 else np.nan
    se = np.sqrt(np.diag(cov)) if np.all(np.isfinite(cov)) else np.full(n_par, np.inf)
    if singular or dof <= 0 or not np.all(np.isfinite(se)) or np.linalg.cond(cov) > CONDITION_LIMIT:
        return FitResult(model, names, p, empty, empty, "ill-conditioned",
                         "parameters are not determined by the data (no degrees of freedom or a singular "
                         "covariance)", goodness, weighted)
    q = norm.ppf(0.5 + confidence / 2) if weighted else student_t.ppf(0.5 + confidence / 2, dof)
    return FitResult(model, names, p, p - q * se, p + q * se, "ok", "", goodness, weighted)


def _setup(model: str, level: np.ndarray, y: np.ndarray, scale: str):
    lo, hi = (float(level.min()), float(level.max())) if level.size else (0.0, 1.0)
    if model == "naka_rushton":
        f, names = naka_rushton(level, scale)
        span = float(y.max() - y.min()) if y.size else 1.0
        mid = float(np.median(level)) if level.size else 0.0
        if scale not in DB_DIVISOR:
            lo = max(lo, 1e-12)
            mid = max(mid, lo)
        p0 = [float(y.min()) if y.size else 0.0, max(span, 1e-9), min(max(mid, lo), hi), 1.0]
        bounds = ([-np.inf, 0.0, lo, 0.1], [np.inf, np.inf, max(hi, lo + 1e-9), 5.0])
        return f, names, p0, bounds
    f, names = pieron(level, scale)
    t_min = float(y.min()) if y.size else 1.0
    p0 = [0.8 * t_min, max(float(y.max() - y.min()), 1e-3), 0.1]
    bounds = ([0.0, 0.0, 1e-3], [max(t_min, 1e-9), np.inf, 5.0])
    return f, names, p0, bounds


def derived_naka_rushton(result: FitResult, scale: str) -> dict[str, float]:
    """Level where the fit reaches 10 % and 90 % of its driven range, and the dynamic range
    between them: x90 / x10 = 81^(1/n), i.e. (d / n) log10(81) in dB (20 log10 81 = 38.17 dB
    for pressure, 19.08 dB for power)."""
    if not result.ok:
        return {}
    r0, rmax, mid, n = result.estimate
    if scale in DB_DIVISOR:
        d = DB_DIVISOR[scale]
        step = d / n * np.log10(9.0)
        return {"level_10": mid - step, "level_90": mid + step, "dynamic_range": 2 * step}
    return {"level_10": mid * 9.0 ** (-1 / n), "level_90": mid * 9.0 ** (1 / n), "dynamic_range": 81.0 ** (1 / n)}
