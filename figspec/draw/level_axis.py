"""The level axis of the kinds with level on x: scale, data limits and default labels."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.spec.models import LevelSpec

if TYPE_CHECKING:
    from matplotlib.axes import Axes

MARGIN = 0.05          # fraction of the level span left free at each end (matplotlib's default)


def set_level_scale(ax: "Axes", panel) -> None:
    if panel.level_axis == "log":
        from matplotlib.ticker import FuncFormatter, NullFormatter

        ax.set_xscale("log")
        ax.xaxis.set_major_formatter(FuncFormatter(lambda value, _: f"{value:g}"))   # 10, 100: not 10¹, 10²
        ax.xaxis.set_minor_formatter(NullFormatter())


def level_limits(levels: np.ndarray, axis: str) -> tuple[float, float]:
    """x-limits holding every level, with a margin on the axis' own scale."""
    lo, hi = float(np.nanmin(levels)), float(np.nanmax(levels))
    if axis == "log":
        a, b = np.log10(lo), np.log10(hi)
        pad = MARGIN * (b - a) if b > a else 0.1
        return float(10 ** (a - pad)), float(10 ** (b + pad))
    pad = MARGIN * (hi - lo) if hi > lo else 0.5
    return lo - pad, hi + pad


def versus_title(what: str, levels: LevelSpec) -> str:
    """A default title such as "Latency vs sound level" from the spec's level quantity."""
    quantity = levels.quantity
    shown = quantity if quantity[:2].isupper() else quantity[:1].lower() + quantity[1:]
    return f"{what} vs {shown}"


def draw_fit(ax: "Axes", fitted, y: str, colour, unit: str) -> None:
    """A fitted curve: solid when the fit is ok, dashed when it is poorly constrained (failed
    fits have no rows)."""
    for status, rows in fitted.groupby("status", sort=False):
        ax.plot(rows["level"], rows[y], "-" if status == "ok" else "--", color=colour, gid=f"fit:{unit}:{status}")


def unit_offsets(levels: np.ndarray, n_units: int, axis: str) -> np.ndarray:
    """A small shift along the level axis for each of ``n_units`` (2 % of the smallest level
    step, centred), so units' markers and error bars at one level do not hide each other; on a
    log axis, a factor."""
    levels = np.unique(np.asarray(levels, dtype=float))
    if n_units < 2 or levels.size < 2:
        return np.zeros(n_units)
    if axis == "log":
        step = float(np.min(np.diff(np.log10(levels[levels > 0])))) if (levels > 0).sum() > 1 else 0.1
    else:
        step = float(np.min(np.diff(levels)))
    return (np.arange(n_units) - (n_units - 1) / 2) * 0.04 * step
