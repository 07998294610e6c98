"""Shared scales across groups of panels, computed from the panels' tables before anything is
drawn, and tick positions or steps per axis."""

from __future__ import annotations

from typing import TYPE_CHECKING

from figspec.spec.layout import SharedGroup

if TYPE_CHECKING:
    from matplotlib.axes import Axes

Limits = dict[str, tuple[float, float]]            # axis ("x", "y") -> (low, high)
Scale = tuple[float, float, float | None]          # (low, high, tick step or None)


def rounded_limits(low: float, high: float) -> tuple[float, float, float]:
    """Limits covering [low, high], ticks on a 1-2-2.5-5 grid of about three steps, keeping 0 as
    the bottom and a tidy top just above the data when nothing is negative. Returns (low, high, step)."""
    from matplotlib.ticker import MaxNLocator

    from figspec.draw.psth import tidy_top

    ticks = MaxNLocator(nbins=3, steps=[1, 2, 2.5, 5, 10]).tick_values(min(low, 0.0) if low >= 0 else low, high)
    lo, hi = float(ticks[0]), float(ticks[-1])
    if low >= 0:                 # the top just above the data on a tidy grid, ticks at the round step
        lo, hi = max(lo, 0.0), max(tidy_top(high), float(ticks[1] - ticks[0]))
    return lo, hi, float(ticks[1] - ticks[0])


def shared_scales(groups: list[SharedGroup], data_limits: dict[str, Limits]) -> dict[str, dict[str, Scale]]:
    """Per panel name and axis, the scale its ``[[shared]]`` group imposes: the group's fixed
    ``limits``, or the union of its members' data limits (rounded on y). A member whose kind
    has no shareable extent on an axis (a raster's trial rows) keeps its own."""
    out: dict[str, dict[str, Scale]] = {}
    for group in groups:
        for axis in ("x", "y") if group.axis == "both" else (group.axis,):
            members = [name for name in group.panels if axis in data_limits[name] or group.limits]
            if not members:
                continue
            if group.limits is not None:
                lo, hi, step = group.limits[0], group.limits[1], None
            else:
                spans = [data_limits[name][axis] for name in members if axis in data_limits[name]]
                lo, hi, step = min(s[0] for s in spans), max(s[1] for s in spans), None
                if axis == "y":
                    lo, hi, step = rounded_limits(lo, hi)
            for name in members:
                out.setdefault(name, {})[axis] = (lo, hi, group.step or step)
    return out


def apply_scales(axes: list["Axes"], scales: dict[str, Scale]) -> None:
    """Set each axis' shared limits (keeping an inverted axis inverted) and tick step."""
    from matplotlib.ticker import MultipleLocator

    for axis, (lo, hi, step) in scales.items():
        for ax in axes:
            get, put = (ax.get_xlim, ax.set_xlim) if axis == "x" else (ax.get_ylim, ax.set_ylim)
            current = get()
            put(*((hi, lo) if current[0] > current[1] else (lo, hi)))
            if step:
                _check_step(step, lo, hi, f"{axis} step of its shared group", ("shared",))
                (ax.xaxis if axis == "x" else ax.yaxis).set_major_locator(MultipleLocator(step))


def _check_step(step: float, lo: float, hi: float, what: str, loc: tuple = ()) -> None:
    """A tick step that would give more ticks than figspec draws on one axis is an error."""
    from figspec.errors import DataError, Problem
    from figspec.spec.fields import MAX_TICKS

    count = abs(hi - lo) / step
    if count > MAX_TICKS:
        raise DataError(Problem(f"the {what} ({step:g}) gives {count:.0f} ticks over the axis' range "
                                f"[{min(lo, hi):g}, {max(lo, hi):g}]; at most {MAX_TICKS} per axis", loc))


def apply_ticks(axes: list["Axes"], panel, loc: tuple = ()) -> None:
    """Tick positions (``x_ticks``, ``y_ticks``) or steps (``x_step``, ``y_step``) of a panel."""
    from matplotlib.ticker import FixedLocator, MultipleLocator

    for axis in ("x", "y"):
        ticks, step = getattr(panel, f"{axis}_ticks"), getattr(panel, f"{axis}_step")
        if ticks is None and step is None:
            continue
        for ax in axes:
            target = ax.xaxis if axis == "x" else ax.yaxis
            if step is not None:
                _check_step(step, *(ax.get_xlim() if axis == "x" else ax.get_ylim()), f"{axis}_step", loc + (f"{axis}_step",))
            target.set_major_locator(FixedLocator(ticks) if ticks is not None else MultipleLocator(step))
