"""Shared scales across groups of axes, and tick positions or steps per axis."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.spec.layout import SharedGroup

if TYPE_CHECKING:
    from matplotlib.axes import Axes


def rounded_limits(low: float, high: float) -> tuple[float, float, float]:
    """Round limits covering [low, high] on a 1-2-2.5-5 grid of about three steps, keeping 0 as
    the bottom when nothing is negative. Returns (low, high, step)."""
    from matplotlib.ticker import MaxNLocator

    ticks = MaxNLocator(nbins=3, steps=[1, 2, 2.5, 5, 10]).tick_values(min(low, 0.0) if low >= 0 else low, high)
    lo, hi = float(ticks[0]), float(ticks[-1])
    if low >= 0:
        lo = max(lo, 0.0)
    return lo, hi, float(ticks[1] - ticks[0])


def apply_shared(axes: list["Axes"], group: SharedGroup) -> None:
    """Give every axes of the group the same limits on the group's axis (or axes): the fixed
    ``limits``, or the union of the members' current limits, rounded. A ``step`` sets ticks."""
    from matplotlib.ticker import MultipleLocator

    for axis in ("x", "y") if group.axis == "both" else (group.axis,):
        get = "get_xlim" if axis == "x" else "get_ylim"
        spans = np.array([sorted(getattr(ax, get)()) for ax in axes])
        flipped = [getattr(ax, get)()[0] > getattr(ax, get)()[1] for ax in axes]
        if group.limits is not None:
            lo, hi, step = group.limits[0], group.limits[1], None
        else:
            lo, hi, step = spans[:, 0].min(), spans[:, 1].max(), None
            if axis == "y":
                lo, hi, step = rounded_limits(lo, hi)
        for ax, flip in zip(axes, flipped):
            limits = (hi, lo) if flip else (lo, hi)
            (ax.set_xlim if axis == "x" else ax.set_ylim)(*limits)
            target = ax.xaxis if axis == "x" else ax.yaxis
            if group.step or step:
                target.set_major_locator(MultipleLocator(group.step or step))


def apply_ticks(axes: list["Axes"], panel) -> None:
    """Tick positions (``x_ticks``, ``y_ticks``) or steps (``x_step``, ``y_step``) of a panel."""
    from matplotlib.ticker import FixedLocator, MultipleLocator

    for axis in ("x", "y"):
        ticks, step = getattr(panel, f"{axis}_ticks", None), getattr(panel, f"{axis}_step", None)
        if ticks is None and step is None:
            continue
        for ax in axes:
            target = ax.xaxis if axis == "x" else ax.yaxis
            target.set_major_locator(FixedLocator(ticks) if ticks is not None else MultipleLocator(step))
