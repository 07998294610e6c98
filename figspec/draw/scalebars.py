"""Scale bars instead of axes: a time bar under the last repeat, a rate bar beside it."""

from __future__ import annotations

from figspec.draw.psth import nice_top


def bar_length(span: float) -> float:
    """A round bar length of about a quarter of ``span``."""
    top = nice_top(span / 4)
    return top if top <= span / 2 else top / 2


def draw_scale_bars(axes: list, plan, ctx) -> None:
    """Hide the axes' spines and ticks and draw a time bar (``time_bar_ms``) and, when the
    panel's y values have a unit (a rate), a y bar (``rate_bar``) at the lower right of the
    last axes, labelled with length and unit. Bars are in data units, so they measure exactly
    what they say."""
    panel = plan.panel
    width = ctx.style.scale_bar.line_pt
    for ax in axes:
        for spine in ax.spines.values():
            spine.set_visible(False)
        ax.tick_params(left=False, bottom=False, labelleft=False, labelcolor="none")
        if ax.get_xlabel():
            ax.xaxis.label.set_color("none")   # keeps its space, so rows line up with neighbours
    ax = axes[-1]
    x0, x1 = panel.window_ms
    time_bar = panel.time_bar_ms or bar_length(x1 - x0)
    y0, y1 = sorted(ax.get_ylim())
    below = y0 - 0.08 * (y1 - y0)
    ax.plot([x1 - time_bar, x1], [below, below], color="black", linewidth=width, clip_on=False,
            solid_capstyle="butt", gid="time_bar")
    ax.text(x1 - time_bar / 2, below, f"{time_bar:g} ms", ha="center", va="top", gid="time_bar_label",
            fontsize=ctx.style.font.tick_pt)
    unit = plan.labels.y_unit
    if unit:                                     # a y bar only where y has a unit (not trial rows)
        rate_bar = getattr(panel, "rate_bar", None) or bar_length(y1 - y0)
        right = x1 + 0.02 * (x1 - x0)
        ax.plot([right, right], [y0, y0 + rate_bar], color="black", linewidth=width, clip_on=False,
                solid_capstyle="butt", gid="rate_bar")
        ax.text(right, y0 + rate_bar / 2, f" {rate_bar:g} {unit}", ha="left", va="center",
                gid="rate_bar_label", fontsize=ctx.style.font.tick_pt)
