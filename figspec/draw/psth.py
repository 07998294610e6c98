"""Rate histogram axes: one step artist per axes, y scale locked across repeats by default;
or every level (unit) overlaid in one axes, coloured along a sequential map (palette)."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.draw.colours import category_gid, unit_colours, visible_range
from figspec.draw.context import DrawContext, Labels, group_key
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PsthPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.axes import Axes

TIME_LABEL = "Time from stimulus onset (ms)"
RATE_LABELS = {"spikes/s": "Rate (spikes/s)", "spikes/trial": "Spikes/trial per bin",
               "spikes": "Spikes per bin", "SD from baseline": "Rate (z-score)",
               "x unit's peak": "Rate / unit's peak rate", "x unit's baseline": "Rate / unit's baseline rate"}


def nice_top(value: float) -> float:
    """A round upper limit at or above ``value`` (1, 2, 2.5, 5 x 10^k)."""
    if not np.isfinite(value) or value <= 0:
        return 1.0
    exponent = np.floor(np.log10(value))
    for step in (1.0, 2.0, 2.5, 5.0, 10.0):
        top = step * 10.0 ** exponent
        if top >= value * (1 - 1e-9):
            return float(top)
    return float(10.0 ** (exponent + 1))


TIDY = (1.0, 1.2, 1.4, 1.6, 1.8, 2.0, 2.5, 3.0, 3.5, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0)


def tidy_top(value: float) -> float:
    """The axis top just above ``value`` on a tidy grid (multiples of 0.2 up to 2, of 0.5 up to 4, of 1
    up to 10, x 10^k): at most a quarter above the data, so no row is half empty (a peak of 101.7
    gets 120, not 200)."""
    if not np.isfinite(value) or value <= 0:
        return 1.0
    exponent = np.floor(np.log10(value))
    return float(next(t * 10.0 ** exponent for t in TIDY if t * 10.0 ** exponent >= value * (1 - 1e-9)))


def _bands(table: pd.DataFrame, panel: PsthPanel) -> tuple[pd.Series, pd.Series]:
    """Lower and upper extent drawn for each bin (mean -/+ SEM for a population)."""
    sem = table["rate_sem"].fillna(0) if "rate_sem" in table else 0.0
    upper, lower = table["rate"] + sem, table["rate"] - sem
    if panel.measure != "z_score":
        lower = lower.clip(lower=0.0)  # a rate is never negative: the band is cut at 0 (not the data)
    return lower, upper


def draw(target, table: pd.DataFrame, panel: PsthPanel, ctx: DrawContext) -> None:
    """Draw the rate table: into ``{group: axes}`` (one filled step outline per axes, with a
    SEM band for a population), or into one axes when the panel is overlaid.

    With ``lock_y`` (default) every repeat gets the same y-limits, from ``y_max`` or from the
    largest value of any repeat rounded up, so a weak response looks weak next to a strong one.
    """
    lower, upper = _bands(table, panel)
    shared = limits(panel, table)["y"]
    if panel.arrange == "overlay":
        _overlay(target, table, panel, ctx, shared)
        return
    style = ctx.style
    if "condition" in table.columns:
        _conditions(target, table, panel, ctx, shared, lower, upper)
        return
    for value, rows in table.groupby(panel.repeat, sort=False):
        ax = target[group_key(panel.repeat, value)]
        edges = np.r_[rows["bin_start_ms"].to_numpy(), rows["bin_stop_ms"].to_numpy()[-1]]
        if "rate_sem" in rows:
            ax.stairs(upper[rows.index].to_numpy(), edges, baseline=lower[rows.index].to_numpy(),
                      fill=True, color=style.rate.colour, alpha=0.3, linewidth=0, gid="rate_sem")
            ax.stairs(rows["rate"].to_numpy(), edges, color=style.rate.colour,
                      linewidth=style.summary.line_pt, gid="rate")
        else:
            ax.stairs(rows["rate"].to_numpy(), edges, fill=True, color=style.rate.colour,
                      linewidth=style.rate.edge_pt, gid="rate")
        bottom, top = shared if panel.lock_y else _limits(lower[rows.index], upper[rows.index], panel)
        ax.set_ylim(bottom, top)
        ax.set_yticks([bottom, 0.0, top] if bottom < 0 else [bottom, top])
        ax.yaxis.set_major_formatter("{x:g}")
        ax.set_xlim(*panel.window_ms)


def _conditions(target: dict, table: pd.DataFrame, panel: PsthPanel, ctx: DrawContext, shared, lower, upper) -> None:
    """Each axes (level) shows every condition as a step line in the condition's colour and line
    style (a SEM band for a population), on one locked y scale; the key sits in the top axes."""
    from figspec.draw.colours import LINE_DASHES

    names = list(dict.fromkeys(table["condition"]))
    looks = dict(zip(names, panel.conditions.looks(len(names), ctx.style.palette)))
    for value, rows in table.groupby(panel.repeat, sort=False):
        ax = target[group_key(panel.repeat, value)]
        for name, part in rows.groupby("condition", sort=False):
            colour, line = looks[name]
            edges = np.r_[part["bin_start_ms"].to_numpy(), part["bin_stop_ms"].to_numpy()[-1]]
            if "rate_sem" in part:
                ax.stairs(upper[part.index].to_numpy(), edges, baseline=lower[part.index].to_numpy(), fill=True,
                          color=colour, alpha=0.2, linewidth=0, gid=f"rate_sem:{name}")
            ax.stairs(part["rate"].to_numpy(), edges, color=colour, linestyle=LINE_DASHES[line],
                      linewidth=ctx.style.summary.line_pt, label=str(name), gid=category_gid(name))
        bottom, top = shared if panel.lock_y else _limits(lower[rows.index], upper[rows.index], panel)
        ax.set_ylim(bottom, top)
        ax.set_yticks([bottom, 0.0, top] if bottom < 0 else [bottom, top])
        ax.yaxis.set_major_formatter("{x:g}")
        ax.set_xlim(*panel.window_ms)
    first = next(iter(target.values()))
    first.legend(loc="upper right", handlelength=1.6, borderaxespad=0.1, fontsize=ctx.style.font.tick_pt)


def _overlay(ax: "Axes", table: pd.DataFrame, panel: PsthPanel, ctx: DrawContext, limits) -> None:
    """One step line per level (sequential map, with a colour bar) or per unit (palette, key)."""
    import matplotlib as mpl

    groups = list(dict.fromkeys(table[panel.repeat]))
    if panel.repeat == "level":
        values = np.asarray(groups, dtype=float)
        cmap = mpl.colormaps[ctx.style.palette.levels]
        norm = mpl.colors.Normalize(values.min(), values.max() if values.max() > values.min() else values.min() + 1)
        lo, hi = visible_range(cmap)                                     # never near-white on white
        colours = {g: cmap(lo + (hi - lo) * norm(g)) for g in groups}
    else:
        colours = unit_colours(groups, ctx.style)
    for value, rows in table.groupby(panel.repeat, sort=False):
        edges = np.r_[rows["bin_start_ms"].to_numpy(), rows["bin_stop_ms"].to_numpy()[-1]]
        label = ctx.levels.label(value) if panel.repeat == "level" else ctx.unit_label(value)
        gid = f"rate:{value}" if panel.repeat == "level" else category_gid(value)
        ax.stairs(rows["rate"].to_numpy(), edges, color=colours[value], linewidth=ctx.style.summary.line_pt,
                  label=label, gid=gid)
    ax.set_ylim(*limits)
    ax.set_xlim(*panel.window_ms)
    if panel.repeat == "level":
        boundaries = np.r_[values[0] - 0.5 * _spacing(values), (values[1:] + values[:-1]) / 2,
                           values[-1] + 0.5 * _spacing(values)]
        listed = mpl.colors.ListedColormap([colours[g] for g in groups])
        bar = ax.figure.colorbar(mpl.cm.ScalarMappable(mpl.colors.BoundaryNorm(boundaries, listed.N), listed),
                                 ax=ax, ticks=values[:: max(1, len(values) // 5)], fraction=0.08, pad=0.02,
                                 aspect=25)
        bar.set_label(ctx.levels.axis_label)
        bar.ax.yaxis.set_major_formatter("{x:g}")
        bar.outline.set_linewidth(ctx.style.axes.line_pt)
    else:
        ax.legend(loc="upper right", handlelength=1.2)


def _spacing(values: np.ndarray) -> float:
    return float(np.min(np.diff(values))) if values.size > 1 else 1.0


def _limits(lower: pd.Series, upper: pd.Series, panel: PsthPanel) -> tuple[float, float]:
    """y-limits from 0 (or below, for z-scores) to a tidy top just above every value."""
    low = float(np.nanmin(lower)) if len(lower) else 0.0
    bottom = -tidy_top(-low) if panel.measure == "z_score" and low < 0 else 0.0
    return bottom, panel.y_max or tidy_top(float(np.nanmax(upper)) if len(upper) else 1.0)


def limits(panel: PsthPanel, table: pd.DataFrame) -> dict[str, tuple[float, float]]:
    """The panel's data limits: its window on x, and on y the range every repeat shares."""
    return {"x": tuple(panel.window_ms), "y": _limits(*_bands(table, panel), panel)}


def labels(panel: PsthPanel, table: pd.DataFrame, levels: LevelSpec) -> Labels:
    """Default title, and a y label naming the measure and its unit."""
    unit = str(table["rate_unit"].iloc[0])
    return Labels("Firing rate", TIME_LABEL, RATE_LABELS[unit], unit)
