"""Compose a figure: a grid of panels (each a subfigure), repeats, stimulus marks, labels,
shared scales, ticks, letters, scale bars and the stimulus key.

The pipeline hands over one :class:`PanelPlan` per panel: its table(s) and its kind's draw
function. Nothing here computes a number that is not drawn from those tables.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Callable

import numpy as np

from figspec.draw.context import DrawContext, Labels, typeset_math
from figspec.draw.scales import Limits, apply_scales, apply_ticks, shared_scales
from figspec.draw.shading import level_appearance, mark_stimulus, stimulus_key
from figspec.optional import deferred
from figspec.spec.fields import math_pieces
from figspec.spec.models import FigureFile

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.figure import Figure

MM_PER_INCH = 25.4


@dataclass(frozen=True)
class PanelPlan:
    """What one panel needs to be drawn.

    ``labels`` are the kind's defaults with the spec's own title and labels applied;
    ``limits`` its data limits per axis (from its tables, for shared scales). ``groups`` are
    the repeat values in display order (levels or units) and ``group_labels`` their row or
    column labels; both are empty for a panel drawn in one axes.
    """

    panel: Any
    tables: Any
    stimulus: pd.DataFrame | None
    draw: Callable
    labels: Labels
    limits: Limits
    groups: list
    group_labels: list[str]


EDGE_EM = 0.25         # the page margin: a quarter of an em of the largest text (a font's line box reaches a
EDGE_PT = 1.5          # fifth of an em past its glyphs) plus the 0.5 mm the layout check keeps (see compose)


def compose(spec: FigureFile, plans: list[PanelPlan], ctx: DrawContext) -> "Figure":
    """Build the figure for ``plans`` (call inside :func:`figspec.draw.context.styled`)."""
    from matplotlib.figure import Figure

    size = (spec.figure.width_mm / MM_PER_INCH, spec.figure.height_mm / MM_PER_INCH)
    fig = Figure(figsize=size, layout="constrained")
    fig.get_layout_engine().set(w_pad=1.5 / 72, h_pad=1.5 / 72, wspace=0.03, hspace=0.03)
    layout = spec.layout
    rows, cols = (layout.rows, layout.columns) if layout else (1, len(plans))
    grid = fig.add_gridspec(rows, cols, width_ratios=layout.widths if layout else None,
                            height_ratios=layout.heights if layout else None)
    cells = [p.panel.cell if layout else (1, i + 1) for i, p in enumerate(plans)]
    axes_of: dict[str, list] = {}
    scales = shared_scales(spec.shared, {p.panel.name: p.limits for p in plans})
    appearance = _appearance(spec, plans, ctx)
    labelled_rows: set[tuple] = set()
    for i in sorted(range(len(plans)), key=lambda k: (cells[k][0], cells[k][1])):
        plan = plans[i]
        (r, c), (h, w) = cells[i], plan.panel.span
        sub = fig.add_subfigure(grid[r - 1:r - 1 + h, c - 1:c - 1 + w])
        sub.set_gid(plan.panel.name)                 # findings and tests name the panel by it
        axes_of[plan.panel.name] = _draw_panel(sub, plan, spec, ctx, appearance, labelled_rows, (r, h))
    for plan in plans:
        apply_scales(axes_of[plan.panel.name], scales.get(plan.panel.name, {}))
    for i, plan in enumerate(plans):                 # plans follow [[panels]]: i is the spec's index
        apply_ticks(axes_of[plan.panel.name], plan.panel, ("panels", i))
    if layout and layout.letters:
        _letters(fig, ctx)
    _page_margin(fig, spec, ctx)
    if appearance and spec.stimulus.key:
        ranges = any(p.stimulus is not None and ((p.stimulus["stop_max_ms"] > p.stimulus["stop_min_ms"]).any()
                                                 or (p.stimulus["start_max_ms"] > p.stimulus["start_ms"]).any())
                     for p in plans)
        shaded = [sub for sub in fig.subfigs if any(a.get_gid() == "stimulus" for ax in sub.axes for a in ax.patches)]
        # under the one panel that shows the stimulus, else under the union of those that do
        sham = sorted({float(v) for p in plans if p.stimulus is not None
                       for v in p.stimulus.loc[~p.stimulus["presented"], "level"]})
        stimulus_key(shaded[0] if len(shaded) == 1 else fig, appearance, spec.stimulus.label, spec.levels.label,
                     ranges, shaded if len(shaded) > 1 else None, sham)
    typeset_math(fig, math_pieces(spec))
    return fig


def _page_margin(fig, spec: FigureFile, ctx: DrawContext) -> None:
    """Keep every text's line box inside the page. Text boxes measure the glyphs, but a PDF reader
    (and a journal's check) measures a font's full line height, up to a fifth of an em beyond them,
    so the layout engine works inside a margin of a quarter em of the largest text plus the
    0.5 mm the layout check asks; the figure's title sits at the margin's top, with its lines'
    height kept free below it."""
    font = ctx.style.font
    edge_pt = EDGE_PT + EDGE_EM * max(font.figure_title_pt, font.title_pt, ctx.style.letters.size_pt, font.body_pt)
    width_pt, height_pt = fig.get_size_inches() * 72
    top = 1 - edge_pt / height_pt
    if spec.figure.title:
        fig.suptitle(spec.figure.title, y=top, va="top")
        _fit_width(fig, fig._suptitle, spec.figure.width_mm - 2 * TITLE_MARGIN_MM)
        lines = fig._suptitle.get_text().count("\n") + 1
        size = float(fig._suptitle.get_fontsize())
        top -= (lines * 1.2 * size + 1.5) / height_pt          # matplotlib's line spacing is 1.2 em
    inner = max(0.0, edge_pt - 1.5)                            # the layout engine pads 1.5 pt itself
    mx, my = inner / width_pt, inner / height_pt
    _check_room(((top - my) * height_pt, "height_mm", spec.figure.height_mm),
                ((1 - 2 * mx) * width_pt, "width_mm", spec.figure.width_mm))
    fig.get_layout_engine().set(rect=(mx, my, 1 - 2 * mx, top - my))


MIN_PANELS_MM = 10.0   # below this the panels have no room for a tick label and an axis label each way


def _check_room(*sides: tuple[float, str, float]) -> None:
    """A figure whose page margin and title leave less than MIN_PANELS_MM for the panels, across
    or down, is refused (the layout engine has no solution there)."""
    from figspec.errors import DataError, Problem

    for room_pt, key, size_mm in sides:
        room_mm = room_pt * 25.4 / 72
        if room_mm < MIN_PANELS_MM:
            raise DataError(Problem(
                f"leaves {max(room_mm, 0):.1f} mm for the panels inside the page margin"
                f"{' and under the title' if key == 'height_mm' else ''}; at least {MIN_PANELS_MM:g} mm is needed, "
                f"so figure.{key} should be at least {math.ceil(size_mm - room_mm + MIN_PANELS_MM):d}",
                ("figure", key), got=f"{size_mm:g}"))


def _appearance(spec: FigureFile, plans: list[PanelPlan], ctx: DrawContext) -> dict:
    levels = [float(v) for p in plans if p.stimulus is not None for v in p.stimulus.loc[p.stimulus["presented"], "level"]]
    return level_appearance(np.asarray(levels), spec.stimulus, ctx.style) if levels else {}


def _draw_panel(sub, plan: PanelPlan, spec: FigureFile, ctx: DrawContext, appearance: dict,
                labelled_rows: set, row_band: tuple) -> list:
    panel = plan.panel
    if getattr(panel, "small_multiples", False):
        return _small_multiples(sub, plan, ctx)
    arrange = getattr(panel, "arrange", None) if plan.stimulus is not None else None
    if arrange in ("rows", "columns"):
        n = len(plan.groups)
        grid = sub.subplots(n, 1, squeeze=False)[:, 0] if arrange == "rows" else sub.subplots(1, n, squeeze=False)[0]
        target = dict(zip(plan.groups, grid))
        axes = list(grid)
    else:
        ax = sub.subplots()
        target, axes = ax, [ax]
    if plan.stimulus is not None:
        _mark(plan, target, spec, ctx, appearance)
    plan.draw(target, plan.tables, panel, ctx)
    labels = plan.labels
    if arrange == "rows":
        axes[0].set_title(labels.title)
        axes[-1].set_xlabel(labels.x)
        for ax in axes[:-1]:
            ax.tick_params(labelbottom=False)
        y_label = None if panel.scale_bars else labels.y
        key = (row_band, tuple(plan.groups))
        if key not in labelled_rows:          # only the leftmost repeated panel of a row band
            labelled_rows.add(key)
            for ax, text in zip(axes, plan.group_labels):
                ax.set_ylabel(text, rotation=0, ha="right", va="center", labelpad=4)
        if y_label:
            sub.supylabel(y_label, fontsize=ctx.style.font.body_pt)
    elif arrange == "columns":
        sub.suptitle(labels.title, fontsize=ctx.style.font.title_pt)
        for ax, text in zip(axes, plan.group_labels):
            ax.set_title(text.replace("\n", ", "), fontsize=ctx.style.font.body_pt)
        sub.supxlabel(labels.x, fontsize=ctx.style.font.body_pt)
        if labels.y:
            axes[0].set_ylabel(labels.y)
        for ax in axes[1:]:
            ax.tick_params(labelleft=False)
    else:
        axes[0].set_title(labels.title)
        if labels.x:
            axes[0].set_xlabel(labels.x)
        if labels.y:
            axes[0].set_ylabel(labels.y)
    if plan.stimulus is not None and panel.scale_bars:
        from figspec.draw.scalebars import draw_scale_bars

        draw_scale_bars(axes, plan, ctx)
    return axes


def _small_multiples(sub, plan: PanelPlan, ctx: DrawContext) -> list:
    """One small axes per unit in a grid, each drawn by the kind from that unit's rows, every axes
    on the panel's own (all-unit) limits so the units compare at a glance; the key only in the
    first axes, tick labels only on the outer edge, the labels once for the grid."""
    panel, tables = plan.panel, plan.tables
    units = list(dict.fromkeys(next(t for t in tables.values() if "unit" in t.columns and len(t))["unit"]))
    columns = panel.multiples_columns or int(np.ceil(np.sqrt(len(units))))
    rows = int(np.ceil(len(units) / columns))
    grid = sub.subplots(rows, columns, squeeze=False)
    axes = []
    for k, ax in enumerate(grid.flat):
        if k >= len(units):
            ax.remove()
            continue
        unit = units[k]
        mine = {name: (t[t["unit"] == unit].reset_index(drop=True) if "unit" in t.columns else t)
                for name, t in tables.items()}
        plan.draw(ax, mine, panel, ctx)
        if k and ax.get_legend() is not None:
            ax.get_legend().remove()
        ax.set_xlim(*plan.limits["x"])
        lo, hi = plan.limits["y"]
        pad = 0.05 * (hi - lo) if hi > lo else 1.0
        ax.set_ylim(lo if lo == 0 else lo - pad, hi + pad)
        ax.set_title(ctx.unit_label(unit), fontsize=ctx.style.font.tick_pt, pad=2)
        if k // columns != rows - 1 and k + columns < len(units):
            ax.tick_params(labelbottom=False)
        if k % columns:
            ax.tick_params(labelleft=False)
        axes.append(ax)
    sub.suptitle(plan.labels.title, fontsize=ctx.style.font.title_pt)
    if plan.labels.x:
        sub.supxlabel(plan.labels.x, fontsize=ctx.style.font.body_pt)
    if plan.labels.y:
        sub.supylabel(plan.labels.y, fontsize=ctx.style.font.body_pt)
    return axes


def _mark(plan: PanelPlan, target, spec: FigureFile, ctx: DrawContext, appearance: dict) -> None:
    """Stimulus marks: per repeat axes by its level, or once in an overlaid panel."""
    stim, mark = plan.stimulus, spec.stimulus.mark
    if isinstance(target, dict):
        repeat = plan.panel.repeat
        for _, window in stim[stim["presented"]].iterrows():      # no mark where no stimulus was presented
            key = float(window["level"]) if repeat == "level" else str(window["unit"])
            if key in target:
                colour, alpha = appearance[float(window["level"])]
                mark_stimulus(target[key], window, colour, alpha, ctx.style, mark)
        return
    # one window for every level overlaid: in the faintest level's shade, so the lines over it
    # (one per level, in their own colours) stay legible; the key gives each level's shade
    stim = stim[stim["presented"]]
    if stim.empty:
        return
    lowest = stim.loc[stim["level"].idxmin()]
    window = pd.Series({"start_ms": stim["start_ms"].min(), "start_max_ms": stim["start_max_ms"].max(),
                        "stop_min_ms": stim["stop_min_ms"].min(), "stop_max_ms": stim["stop_max_ms"].max()})
    colour, alpha = appearance[float(lowest["level"])]
    mark_stimulus(target, window, colour, alpha, ctx.style, mark)


LETTER_INSET_MM = 1.0
TITLE_MARGIN_MM = 1.5


def _fit_width(fig, text, width_mm: float) -> None:
    """Break a text at spaces, as evenly as needed, until every line is narrower than
    ``width_mm`` (a long figure title on a narrow page)."""
    from matplotlib.backends.backend_agg import RendererAgg

    renderer = RendererAgg(int(fig.bbox.width), int(fig.bbox.height), fig.dpi)
    limit = width_mm / MM_PER_INCH * fig.dpi
    words = text.get_text().split(" ")
    for lines in range(1, min(len(words), 4) + 1):
        per = -(-len(words) // lines)
        candidate = "\n".join(" ".join(words[i:i + per]) for i in range(0, len(words), per))
        text.set_text(candidate)
        if text.get_window_extent(renderer).width <= limit:
            return


def _letters(fig, ctx: DrawContext) -> None:
    """Panel letters in reading order (by cell: row, then column), as each subfigure's
    left-aligned super-title, so the layout engine keeps them clear of everything else."""
    style = ctx.style.letters
    for n, sub in enumerate(fig.subfigs):        # subfigures were added in reading order
        letter = "abcdefghijklmnopqrstuvwxyz"[n]
        letter = letter.upper() if style.case == "upper" else letter
        title = sub.get_suptitle()               # a panel arranged in columns keeps its title here
        inset = LETTER_INSET_MM / MM_PER_INCH * fig.dpi / max(sub.bbox.width, 1.0)   # clear of the page edge
        x, ha = (inset, "left") if style.position == "left" else (0.5, "center")
        sub.suptitle(f"{letter}   {title}" if title else letter, x=x, ha=ha,
                     fontsize=style.size_pt, fontweight=style.weight)
