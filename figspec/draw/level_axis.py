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


def draw_fit(ax: "Axes", fitted, y: str, colour, unit: str, line: str = "-") -> None:
    """A fitted curve in ``line`` (solid by default) when the fit is ok; when it is poorly
    constrained dashed, or, when the line is already dashed for a condition, at half width
    (failed fits have no rows)."""
    import matplotlib as mpl

    for status, rows in fitted.groupby("status", sort=False):
        poor = status != "ok"
        style = ("--" if line == "-" else line) if poor else line
        width = 0.5 * mpl.rcParams["lines.linewidth"] if poor and line != "-" else None
        ax.plot(rows["level"], rows[y], style, color=colour, gid=f"fit:{unit}:{status}", linewidth=width)


def same_series(curve, rows):
    """The fitted curve's rows of the series ``rows`` belong to (its unit, and its condition)."""
    fitted = curve[curve["unit"] == rows["unit"].iloc[0]]
    if "condition" in curve.columns:
        fitted = fitted[fitted["condition"] == rows["condition"].iloc[0]]
    return fitted


def series_key(ax: "Axes", points, lines: list[tuple]) -> tuple[list, list[str]]:
    """The key's handles and names: the axes' own, or, where conditions differ by line style too,
    one handle per series showing its colour, marker and line."""
    if "condition" not in points.columns:
        return ax.get_legend_handles_labels()
    from matplotlib.lines import Line2D

    return ([Line2D([], [], color=c, marker=m, linestyle=dash) for _, _, c, m, dash, _ in lines],
            [label for *_, label in lines])


STAR_PT = 3.0      # gap between a point's upper error bar and the mark of a difference between conditions


def mark_differences(ax: "Axes", tests, points, top: str, alpha: float) -> None:
    """An asterisk above each level where a test between conditions is significant after
    correction (one unit: per level; several units: the tests are in the table and legend only,
    since stars for every unit would crowd the axes)."""
    if points["unit"].nunique() != 1 or not len(tests):
        return
    from matplotlib.transforms import offset_copy

    sig = tests[tests["p_corrected"] < alpha]
    above = offset_copy(ax.transData, fig=ax.figure, x=0.0, y=STAR_PT, units="points")
    for level in sig["level"].unique():
        high = points.loc[points["level"] == level, top].to_numpy(dtype=float)
        high = high[np.isfinite(high)]
        if high.size:
            ax.text(float(level), float(high.max()), "*", ha="center", va="bottom", transform=above,
                    gid=f"difference:{level:g}", clip_on=False)


def unit_shifts_pt(ax: "Axes", panel, levels, n_units: int, marker_pt: float) -> list[float]:
    """Each of ``n_units``' shift along the level axis, in points, centred on the level: one
    marker width apart, so coincident markers and error bars of several units all show at print
    size (a shift in data units would vanish on a wide level range), but never spreading over
    more than 40 % of the closest gap between two levels on the page, so no unit's marker lands
    nearer another level than its own. Sets the axis' level limits to measure that gap."""
    if n_units < 2:
        return [0.0]
    levels = np.unique(np.asarray(levels, dtype=float))
    ax.set_xlim(*level_limits(levels, panel.level_axis))
    step = marker_pt
    if levels.size > 1:
        x = np.sort(ax.transData.transform(np.column_stack([levels, np.zeros(levels.size)]))[:, 0])
        gap_pt = float(np.min(np.diff(x))) * 72.0 / ax.figure.dpi
        step = min(step, 0.4 * gap_pt / (n_units - 1))
    return [float((i - (n_units - 1) / 2) * step) for i in range(n_units)]


def own_limits(ax: "Axes", limits: dict[str, tuple[float, float]]) -> None:
    """The panel's own data limits (its ``limits`` hook) as the axes' limits, y with a 5 % margin
    above (and below, when it is not 0): shared scales may replace them later."""
    ax.set_xlim(*limits["x"])
    lo, hi = limits["y"]
    pad = 0.05 * (hi - lo) if hi > lo else 1.0
    ax.set_ylim(lo if lo == 0 else lo - pad, hi + pad)


def shifted(ax: "Axes", transform, dx_pt: float):
    """``transform`` moved right by ``dx_pt`` points (matplotlib.transforms.offset_copy)."""
    if not dx_pt:
        return transform
    from matplotlib.transforms import offset_copy

    return offset_copy(transform, fig=ax.figure, x=dx_pt, y=0.0, units="points")
