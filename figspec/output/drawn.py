"""Look at a drawn figure as a reader would: the texts and lines actually drawn, and which
panel each belongs to. Used by the journal check and by the geometry tests."""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from matplotlib.figure import Figure


def panel_of(artist) -> str:
    """The panel an artist belongs to: the name its subfigure carries, else "figure"."""
    fig = artist.get_figure(root=False) if hasattr(artist, "get_figure") else None
    gid = fig.get_gid() if fig is not None else None
    return gid or "figure"


def _transparent(artist) -> bool:
    from matplotlib.colors import to_rgba

    return to_rgba(artist.get_color())[3] == 0 or artist.get_alpha() == 0


def drawn_texts(fig: "Figure") -> list:
    """Every text that is drawn: tick labels only of ticks in view; nothing empty, hidden, or
    fully transparent (kept only to hold layout space)."""
    from matplotlib.text import Text

    tick_labels: set[int] = set()
    in_view = []
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            for tick in axis.get_major_ticks() + axis.get_minor_ticks():
                tick_labels |= {id(tick.label1), id(tick.label2)}
            if ax.axison:
                low, high = sorted(axis.get_view_interval())
                span = (high - low) * 1e-9
                in_view += [t for t, loc in zip(axis.get_majorticklabels(), axis.get_majorticklocs())
                            if low - span <= loc <= high + span]
    others = [t for t in fig.findobj(Text) if id(t) not in tick_labels]
    return [t for t in others + in_view if t.get_visible() and t.get_text().strip() and not _transparent(t)]


def drawn_lines(fig: "Figure") -> list[tuple[object, str, float]]:
    """(artist, what, width in pt) of every stroked line: plot lines, line collections
    (raster ticks, error bars), outlines of patches, spines and ticks."""
    from matplotlib.collections import LineCollection
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    out = []
    for artist in fig.findobj(lambda a: a.get_visible()):
        if isinstance(artist, Line2D) and len(artist.get_xdata()):
            if artist.get_linestyle() not in ("None", "none", " ", "") and artist.get_linewidth() > 0:
                out.append((artist, artist.get_gid() or "line", artist.get_linewidth()))
        elif isinstance(artist, LineCollection) and len(artist.get_segments()):
            out += [(artist, artist.get_gid() or "line collection", float(w)) for w in set(artist.get_linewidths()) if w > 0]
        elif isinstance(artist, Patch) and artist.get_linewidth() > 0 and artist.get_edgecolor()[3] > 0 \
                and artist.get_fill() is False:
            out.append((artist, artist.get_gid() or "outline", artist.get_linewidth()))
    for ax in fig.axes:
        out += [(spine, f"{name} spine", spine.get_linewidth()) for name, spine in ax.spines.items()
                if spine.get_visible() and spine.get_linewidth() > 0]
        for axis, name in ((ax.xaxis, "x"), (ax.yaxis, "y")):
            ticks = [t for t in axis.get_major_ticks() if t.tick1line.get_visible()]
            if ax.axison and ticks and ticks[0].tick1line.get_markersize() > 0:
                out.append((ax, f"{name} ticks", ticks[0].tick1line.get_markeredgewidth()))
    return out
