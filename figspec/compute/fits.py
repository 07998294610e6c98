"""Bounded least-squares fits of level functions: Naka-Rushton (Hill) and Pieron, with
intervals from a bootstrap over trials and a status that says when a fit means little.

Naka & Rushton 1966, J Physiol 185:536-555 (the Hill 1910 form); Pieron 1914 (Luce 1986,
Response Times). Levels in dB are fitted on the linear quantity (see :mod:`decibels`); for dB
levels the Naka-Rushton midpoint is fitted as a level L50, which is the same model:
x^n / (x^n + x50^n) = 1 / (1 + 10^(n (L50 - L) / d)), d = 20 (pressure) or 10 (power).

Status (documented in docs/methods.md): ``failed`` (no fit: too few levels, or the optimiser
gave up) is not drawn; ``poorly constrained`` (drawn dashed) when a parameter sits at a bound,
the midpoint's interval reaches the edge of the tested levels, an exponent's interval reaches a
bound it cannot cross, R^2 < ``MIN_R_SQUARED``, or more than ``MAX_FAILED_REFITS`` of the
bootstrap refits fail; ``ok`` otherwise.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from figspec.compute.decibels import DB_DIVISOR, to_linear

MIN_R_SQUARED = 0.5          # below this, the curve describes the points poorly (our rule, stated)
MAX_FAILED_REFITS = 0.10     # fraction of bootstrap refits allowed to fail before a fit is not ok
AT_BOUND = 1e-6              # relative distance to a bound that counts as "at the bound"


@dataclass(frozen=True)
class FitResult:
    """A fitted model: estimates, interval bounds, goodness of fit, status and its reasons."""

    model: str
    names: tuple[str, ...]
    estimate: np.ndarray
    ci_low: np.ndarray
    ci_high: np.ndarray
    status: str                      # "ok", "poorly constrained", "failed"
    reasons: tuple[str, ...] = ()
    goodness: dict[str, float] = field(default_factory=dict)
    weighted: bool = True
    bounds: tuple = ()

    @property
    def ok(self) -> bool:
        return self.status == "ok"

    @property
    def drawn(self) -> bool:
        return self.status != "failed"

    @property
    def message(self) -> str:
        return "; ".join(self.reasons)


def naka_rushton(level: np.ndarray, scale: str):
    """The model as a function of level for curve_fit, and its parameter names."""
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
    """t = t0 + k x^(-beta) with x the linear quantity of the level (> 0)."""

    def f(lv, t0, k, beta):
        return t0 + k * np.power(to_linear(lv, scale), -beta)

    return f, ("t0", "k", "beta")


MODELS = {"naka_rushton": naka_rushton, "pieron": pieron}


def setup(model: str, level: np.ndarray, y: np.ndarray, scale: str):
    """(function, names, start values, bounds) of ``model`` for these points. Bounds: Rmax >= 0,
    the midpoint within the tested levels, n in [0.1, 5]; t0 in [0, shortest latency], k >= 0,
    beta in [0.001, 5] (common practice)."""
    lo, hi = float(level.min()), float(level.max())
    if model == "naka_rushton":
        f, names = naka_rushton(level, scale)
        span = float(y.max() - y.min())
        mid = float(np.median(level))
        if scale not in DB_DIVISOR:
            lo = max(lo, 1e-12)
            mid = max(mid, lo)
        p0 = [float(y.min()), max(span, 1e-9), min(max(mid, lo), hi), 1.0]
        return f, names, p0, ([-np.inf, 0.0, lo, 0.1], [np.inf, np.inf, max(hi, lo + 1e-9), 5.0])
    f, names = pieron(level, scale)
    t_min = float(y.min())
    p0 = [0.8 * t_min, max(float(y.max() - y.min()), 1e-3), 0.1]
    return f, names, p0, ([0.0, 0.0, 1e-3], [max(t_min, 1e-9), np.inf, 5.0])


def least_squares(model: str, level: np.ndarray, y: np.ndarray, sigma: np.ndarray | None, scale: str,
                  p0=None) -> np.ndarray | None:
    """The bounded least-squares estimate (residuals divided by sigma when it is given), by
    ``scipy.optimize.least_squares`` (trust region reflective), or None when it fails."""
    from scipy.optimize import least_squares as solve

    f, _, start, bounds = setup(model, level, y, scale)
    start = np.clip(p0 if p0 is not None else start, np.add(bounds[0], 1e-12), np.subtract(bounds[1], 1e-12))
    weight = 1.0 if sigma is None else 1.0 / np.asarray(sigma, dtype=float)
    with np.errstate(all="ignore"), warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        try:
            result = solve(lambda q: (f(level, *q) - y) * weight, start, bounds=bounds, method="trf", max_nfev=2000)
        except (ValueError, np.linalg.LinAlgError):
            return None
    return result.x if result.status > 0 and np.all(np.isfinite(result.x)) else None


def judge(model: str, names, estimate, ci_low, ci_high, bounds, level, goodness, failed_share) -> tuple[str, ...]:
    """The reasons a fit is poorly constrained (empty: it is ok)."""
    reasons = []
    lower, upper = np.asarray(bounds[0], float), np.asarray(bounds[1], float)
    scale = np.where(np.isfinite(upper - lower), upper - lower, np.maximum(np.abs(estimate), 1.0))
    for i, name in enumerate(names):
        if np.isfinite(lower[i]) and estimate[i] - lower[i] <= AT_BOUND * scale[i]:
            reasons.append(f"{name} at the lower bound of its range ({lower[i]:.4g})")
        elif np.isfinite(upper[i]) and upper[i] - estimate[i] <= AT_BOUND * scale[i]:
            reasons.append(f"{name} at the upper bound of its range ({upper[i]:.4g})")
    mid = 2 if model == "naka_rushton" else None
    if mid is not None and np.isfinite(ci_low[mid]) and (ci_low[mid] <= lower[mid] + AT_BOUND * scale[mid]
                                                         or ci_high[mid] >= upper[mid] - AT_BOUND * scale[mid]):
        reasons.append(f"the interval of {names[mid]} reaches the edge of the tested levels "
                       f"({float(level.min()):g}-{float(level.max()):g})")
    exponent = 3 if model == "naka_rushton" else 2
    if np.isfinite(ci_low[exponent]) and (ci_low[exponent] <= lower[exponent] + AT_BOUND * scale[exponent]
                                          or ci_high[exponent] >= upper[exponent] - AT_BOUND * scale[exponent]):
        reasons.append(f"the interval of {names[exponent]} reaches a bound it cannot cross "
                       f"({lower[exponent]:g} or {upper[exponent]:g})")
    if goodness.get("r_squared", 1.0) < MIN_R_SQUARED:
        reasons.append(f"R^2 = {goodness['r_squared']:.2f} is below {MIN_R_SQUARED:g}")
    if failed_share > MAX_FAILED_REFITS:
        reasons.append(f"{failed_share:.0%} of the bootstrap refits failed")
    return tuple(reasons)


def goodness_of_fit(f, p, level, y, sigma) -> dict[str, float]:
    from scipy.stats import chi2

    residual = y - f(level, *p)
    dof = level.size - len(p)
    ss = float(np.sum((y - y.mean()) ** 2))
    out = {"r_squared": float(1 - np.sum(residual ** 2) / ss) if ss > 0 else np.nan, "dof": float(dof)}
    if sigma is not None:
        out["chi_squared"] = float(np.sum((residual / sigma) ** 2))
        out["p_chi_squared"] = float(chi2.sf(out["chi_squared"], dof)) if dof > 0 else np.nan
    return out


def derived_naka_rushton(estimate: np.ndarray, scale: str) -> dict[str, float]:
    """Level where the fit reaches 10 % and 90 % of its driven range, and the dynamic range
    between them: x90 / x10 = 81^(1/n), i.e. (d / n) log10(81) in dB (20 log10 81 = 38.17 dB
    for pressure, 19.08 dB for power)."""
    r0, rmax, mid, n = estimate
    if scale in DB_DIVISOR:
        step = DB_DIVISOR[scale] / n * np.log10(9.0)
        return {"level_10": mid - step, "level_90": mid + step, "dynamic_range": 2 * step}
    return {"level_10": mid * 9.0 ** (-1 / n), "level_90": mid * 9.0 ** (1 / n), "dynamic_range": 81.0 ** (1 / n)}
