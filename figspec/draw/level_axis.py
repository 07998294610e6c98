"""The level axis of the kinds with level on x: scale, data limits and default labels."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.spec.models import LevelSpec

if TYPE_CHECKING:
    from matplotlib.axes import Axes

MARGIN = 0.05          # fraction of the level span left free at each end (matplotlib's default)


ZERO_GAP_DECADES = 0.5   # how far left of the smallest positive level a level of 0 sits on a log axis


class LogWithZero:
    """A log level axis that also shows a level of 0 (contrast 0 %, silence): positive levels on
    log10, and 0 at its own position ``ZERO_GAP_DECADES`` left of the smallest positive level,
    the stretch between them linear and marked as a break. Monotonic, so matplotlib's function
    scale takes it; the data (and fits, on the linear quantity) are untouched."""

    def __init__(self, levels: np.ndarray):
        levels = np.asarray(levels, dtype=float)
        self.smallest = float(levels[levels > 0].min())
        self.top = float(np.log10(self.smallest))
        self.zero = self.top - ZERO_GAP_DECADES

    def forward(self, x):
        x = np.asarray(x, dtype=float)
        logged = np.log10(np.maximum(x, self.smallest))
        return np.where(x >= self.smallest, logged, self.zero + x / self.smallest * ZERO_GAP_DECADES)

    def inverse(self, y):
        y = np.asarray(y, dtype=float)
        return np.where(y >= self.top, 10.0 ** np.minimum(y, 300), (y - self.zero) / ZERO_GAP_DECADES * self.smallest)


def has_zero(levels) -> bool:
    levels = np.asarray(levels, dtype=float)
    return bool((levels <= 0).any() and (levels > 0).any())


def set_level_scale(ax: "Axes", panel, levels=None) -> None:
    """The panel's level axis: linear, log (plain tick labels: 10, 100, not 10¹, 10²), or log
    with a level of 0 drawn left of the log range after an axis break."""
    if panel.level_axis != "log":
        return
    from matplotlib.ticker import FixedLocator, FuncFormatter, LogLocator, NullFormatter, NullLocator

    plain = FuncFormatter(lambda value, _: f"{value:g}")
    if levels is None or not has_zero(levels):
        ax.set_xscale("log")
        ax.xaxis.set_major_formatter(plain)
        ax.xaxis.set_minor_formatter(NullFormatter())
        return
    scale = LogWithZero(levels)
    ax.set_xscale("function", functions=(scale.forward, scale.inverse))
    top = float(np.max(levels))
    ticks = [0.0] + [float(t) for t in LogLocator(subs=(1.0, 2.0, 5.0)).tick_values(scale.smallest, top)
                     if scale.smallest * 0.999 <= t <= top * 1.001]
    if len(ticks) > 6:
        ticks = [0.0] + [t for t in ticks[1:] if np.isclose(np.log10(t) % 1, 0)] or ticks
    ax.xaxis.set_major_locator(FixedLocator(ticks))
    ax.xaxis.set_major_formatter(plain)
    ax.xaxis.set_minor_locator(NullLocator())
    mid = (scale.zero + scale.top) / 2                  # the break, in the scale's own (decade) units
    at = ax.get_xaxis_transform()                       # x in data, y in axes fraction
    gap = [float(scale.inverse(mid - 0.05)), float(scale.inverse(mid + 0.05))]
    ax.plot(gap, [0, 0], color="white", linewidth=3 * ax.spines["bottom"].get_linewidth(), transform=at,
            clip_on=False, zorder=3, solid_capstyle="butt", gid="axis_break")
    for shift in (-0.05, 0.05):                         # two short slanted strokes either side of the gap
        xs = [float(scale.inverse(mid + shift - 0.02)), float(scale.inverse(mid + shift + 0.02))]
        ax.plot(xs, [-0.02, 0.02], color="black", linewidth=ax.spines["bottom"].get_linewidth(), transform=at,
                clip_on=False, zorder=4, gid="axis_break")


def level_limits(levels: np.ndarray, axis: str) -> tuple[float, float]:
    """x-limits holding every level, with a margin on the axis' own scale."""
    lo, hi = float(np.nanmin(levels)), float(np.nanmax(levels))
    if axis == "log" and has_zero(levels):
        scale = LogWithZero(levels)
        a, b = scale.zero, float(np.log10(hi))
        pad = MARGIN * (b - a)
        return float(scale.inverse(a - pad)), float(scale.inverse(b + pad))
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
