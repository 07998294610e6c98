"""Many refits of one model at once, for bootstrap intervals: a Levenberg-Marquardt iteration
(Levenberg 1944; Marquardt 1963) vectorised over the bootstrap samples, with analytic Jacobians
and each step projected into the parameter bounds, started at the estimate of the original data.

The estimate itself is found by scipy.optimize.least_squares; this solver only refines many
nearby problems cheaply. A sample whose iteration ends non-finite or not converged counts as a
failed refit."""

from __future__ import annotations

import numpy as np

from figspec.compute.decibels import DB_DIVISOR, to_linear

LN10 = np.log(10.0)


def jacobian(model: str, scale: str, level: np.ndarray, p: np.ndarray) -> np.ndarray:
    """d model / d parameters, shape (samples, levels, parameters), for parameters ``p``
    (samples, parameters) at ``level`` (levels,)."""
    lv = level[None, :]
    if model == "naka_rushton":
        r0, rmax, mid, n = (p[:, i:i + 1] for i in range(4))
        if scale in DB_DIVISOR:
            d = DB_DIVISOR[scale]
            u = 10.0 ** (n * (mid - lv) / d)
            g = 1.0 / (1.0 + u)
            slope = g * (1.0 - g)                 # = g^2 u, finite where u overflows
            return np.stack([np.ones_like(u), g, -rmax * slope * LN10 * n / d, -rmax * slope * LN10 * (mid - lv) / d],
                            axis=-1)
        # x^n / (x^n + x50^n) = expit(-n log(x50 / x)); at x = 0 it is 0 and so are both derivatives
        # (x^n log x -> 0), which the form u = (x50 / x)^n turns into inf * 0 = NaN
        positive = lv > 0
        log_ratio = np.log(mid) - np.log(np.where(positive, lv, 1.0))
        g = np.where(positive, 0.5 * (1.0 - np.tanh(0.5 * n * log_ratio)), 0.0)      # expit(-n log(x50 / x))
        slope = g * (1.0 - g)
        d_n = -rmax * slope * np.where(positive, log_ratio, 0.0)
        return np.stack([np.ones_like(g), g, -rmax * slope * n / mid, d_n], axis=-1)
    t0, k, beta = (p[:, i:i + 1] for i in range(3))
    x = to_linear(lv, scale)
    power = x ** (-beta)
    return np.stack([np.ones_like(power), power, -k * power * np.log(x)], axis=-1)


def _step(jac: np.ndarray, r: np.ndarray, damping: np.ndarray, frozen: np.ndarray | None = None) -> np.ndarray:
    """The damped Gauss-Newton step of every sample (frozen parameters get a unit diagonal)."""
    jtj = np.einsum("smi,smj->sij", jac, jac)
    jtr = np.einsum("smi,sm->si", jac, r)
    diag = np.maximum(np.einsum("sii->si", jtj), 1e-12)
    if frozen is not None:
        diag = np.where(frozen, 1.0, diag)
    system = jtj + (damping[:, None] * diag)[:, :, None] * np.eye(jac.shape[2])
    if frozen is not None:
        system = system + frozen[:, :, None] * np.eye(jac.shape[2])
    try:
        return np.linalg.solve(system, -jtr[..., None])[..., 0]
    except np.linalg.LinAlgError:                  # a singular sample: least-norm steps for all
        return (np.linalg.pinv(system) @ -jtr[..., None])[..., 0]


def refit_all(f, model: str, scale: str, level: np.ndarray, y: np.ndarray, sigma: np.ndarray | None,
              start: np.ndarray, bounds, iterations: int = 200, tolerance: float = 1e-8) -> np.ndarray:
    """Least-squares parameters of ``f`` for every row of ``y`` (samples, levels), weighted by
    1/``sigma`` (same shape) when given; NaN rows where a refit failed."""
    samples = y.shape[0]
    lower, upper = np.asarray(bounds[0], float), np.asarray(bounds[1], float)
    w = 1.0 if sigma is None else 1.0 / sigma
    p = np.tile(np.clip(start, lower, upper), (samples, 1))
    damping = np.full(samples, 1e-3)
    done = np.zeros(samples, dtype=bool)
    converged = np.zeros(samples, dtype=bool)

    def cost(q):
        with np.errstate(all="ignore"):
            r = (f(level[None, :], *(q[:, i:i + 1] for i in range(q.shape[1]))) - y) * w
        return r, np.sum(r * r, axis=1)

    r, c = cost(p)
    with np.errstate(all="ignore"):
        for _ in range(iterations):
            jac = jacobian(model, scale, level, p) * (w[..., None] if sigma is not None else 1.0)
            step = _step(jac, r, damping)
            # a parameter at a bound that the step pushes outward stays there; the others are solved without it
            active = ((p <= lower) & (step < 0)) | ((p >= upper) & (step > 0))
            if active.any():
                step = np.where(active, 0.0, _step(jac * ~active[:, None, :], r, damping, active))
            trial = np.clip(p + step, lower, upper)
            r_new, c_new = cost(trial)
            better = np.isfinite(c_new) & (c_new <= c) & ~done
            still = np.max(np.abs(trial - p) / (np.abs(p) + 1e-8), axis=1) <= tolerance   # the bounds stop it
            small = (better & (np.abs(c - c_new) <= tolerance * np.maximum(c, 1e-300))) | (still & ~done)
            p = np.where(better[:, None], trial, p)
            r, c = np.where(better[:, None], r_new, r), np.where(better, c_new, c)
            damping = np.where(better, np.maximum(damping / 3.0, 1e-12), np.minimum(damping * 4.0, 1e12))
            converged |= small
            done |= small | (damping >= 1e12)
            if done.all():
                break
        jac = jacobian(model, scale, level, p) * (w[..., None] if sigma is not None else 1.0)
    # a sample whose damping ran out without converging failed unless it stopped at a stationary
    # point (a NaN Jacobian never is): counted, never taken as a refit that returned the start
    stalled = done & ~converged & ~stationary(jac, r, p, lower, upper)
    failed = ~np.isfinite(c) | ~np.all(np.isfinite(p), axis=1) | ~done | stalled | ~np.all(np.isfinite(jac), axis=(1, 2))
    p[failed] = np.nan
    return p


def stationary(jac: np.ndarray, r: np.ndarray, p: np.ndarray, lower: np.ndarray, upper: np.ndarray,
               cosine: float = 1e-3) -> np.ndarray:
    """Whether each sample sits at a (bounded) stationary point of its cost: every component of
    the gradient J^T r that does not push against an active bound has a cosine between its
    Jacobian column and the residuals below ``cosine`` (MINPACK's gtol criterion; More, Garbow
    & Hillstrom 1980, User Guide for MINPACK-1, ANL-80-74)."""
    with np.errstate(all="ignore"):
        grad = np.einsum("smi,sm->si", jac, r)
        norm = np.sqrt(np.einsum("smi,smi->si", jac, jac)) * np.sqrt(np.sum(r * r, axis=1))[:, None]
        blocked = ((p <= lower) & (grad > 0)) | ((p >= upper) & (grad < 0))   # descent would leave the bounds
        free = np.where(blocked, 0.0, np.abs(grad))
        ok = (free <= cosine * norm) | (norm == 0)
    return np.all(ok & np.isfinite(grad), axis=1)
