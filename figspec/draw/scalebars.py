"""Scale bars instead of axes: a time bar under the last repeat, a rate bar beside it."""

from __future__ import annotations

from figspec.draw.psth import nice_top


def bar_length(span: float) -> float:
    """A round bar length of about a quarter of ``span``."""
    top = nice_top(span / 4)
    return top if top <= span / 2 else top / 2


def reserve_label_space(ax, renderer) -> None:
    """Keep the room the axes' x tick labels and label took (so rows line up with a neighbouring
    panel that has axes) with an empty, textless mark at their lowest point: no invisible text
    that a PDF reader could select or a screen reader read."""
    from matplotlib.patches import Rectangle
    from matplotlib.transforms import offset_copy

    fig = ax.get_figure(root=True)
    labels = ax.xaxis.get_tightbbox(renderer)              # tick labels and label as they would be drawn
    if labels is None:
        return
    depth = (ax.get_window_extent(renderer).y0 - labels.y0) * 72.0 / fig.dpi
    if depth <= 0:
        return
    where = offset_copy(ax.transAxes, fig=fig, y=-depth, units="points")
    ax.add_patch(Rectangle((0.5, 0.0), 1e-3, 1e-3, transform=where, fill=False, linewidth=0, clip_on=False,
                           gid="label_space"))


def draw_scale_bars(axes: list, plan, ctx) -> None:
    """Hide the axes' spines and ticks and draw a time bar (``time_bar_ms``) and, when the
    panel's y values have a unit (a rate), a y bar (``rate_bar``) at the lower right of the
    last axes, labelled with length and unit. Bars are in data units, so they measure exactly
    what they say."""
    from matplotlib.backends.backend_agg import RendererAgg

    panel = plan.panel
    width = ctx.style.scale_bar.line_pt
    fig = axes[0].get_figure(root=True)
    renderer = RendererAgg(int(fig.bbox.width), int(fig.bbox.height), fig.dpi)   # to measure the labels' room
    for ax in axes:
        for spine in ax.spines.values():
            spine.set_visible(False)
        reserve_label_space(ax, renderer)
        ax.tick_params(left=False, bottom=False, labelleft=False, labelbottom=False)
        ax.set_xlabel("")
        if plan.labels.y_unit:                  # where y has a unit, its zero stays visible
            ax.axhline(0.0, color="0.6",
                       linewidth=ctx.style.axes.line_pt / 2, zorder=0.5, gid="baseline")
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
        # the gap by layout (an offset in points), not by a leading space, which SVG drops
        from matplotlib.transforms import offset_copy

        gap = offset_copy(ax.transData, fig=ax.figure, x=0.3 * ctx.style.font.tick_pt, y=0.0, units="points")
        ax.text(right, y0 + rate_bar / 2, f"{rate_bar:g} {unit}", ha="left", va="center", transform=gap,
                gid="rate_bar_label", fontsize=ctx.style.font.tick_pt)
