"""The layout check: what a reader of the rendered figure would see as a defect. Texts that
overlap, a key (legend or colour bar) over drawn data, text clipped at or too close to the page
edge, and text below the smallest size a printed figure can hold. Each finding names the panel
and the element. It runs after every render (warnings) and fails the build with ``--strict``.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from figspec.output.drawn import drawn_texts, panel_of

if TYPE_CHECKING:
    from matplotlib.figure import Figure

MM_PER_INCH = 25.4
LINE_BOX_EM = 0.2      # a font's ascender and descender reach about this far beyond its glyphs (DejaVu, Liberation)
EDGE_MM = 0.5          # common practice: text keeps at least this far from the trimmed page edge
MIN_TEXT_PT = 5.0      # common practice: the smallest text journals print (Nature, Cell: 5-7 pt)
SLACK_PX = 0.5         # overlaps smaller than this (anti-aliasing) are not defects


@dataclass(frozen=True)
class LayoutFinding:
    rule: str
    panel: str
    element: str
    message: str

    def format(self) -> str:
        where = "figure" if self.panel == "figure" else f"panel {self.panel!r}"
        return f"layout check: {self.rule}: {where}, {self.element}: {self.message}"


def layout_check(fig: "Figure", edge_mm: float = EDGE_MM, min_text_pt: float = MIN_TEXT_PT) -> list[LayoutFinding]:
    """Every layout finding on ``fig``, drawn here on an Agg canvas at the figure's own dpi so
    that the layout engine has placed everything (call inside the figure's style context)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = fig.canvas if isinstance(fig.canvas, FigureCanvasAgg) else FigureCanvasAgg(fig)
    fig.draw_without_rendering()                 # layout and ticks settled, no pixels
    renderer = canvas.get_renderer()
    texts = [(t, t.get_window_extent(renderer)) for t in drawn_texts(fig)]
    return (_overlapping_texts(texts) + _edges(fig, texts, edge_mm) + _small(texts, min_text_pt)
            + _keys_over_data(fig, renderer))


def _name(text) -> str:
    content = text.get_text().replace("\n", " ")
    return repr(content if len(content) <= 40 else content[:37] + "...")


def _overlap(a, b) -> bool:
    return min(a.x1, b.x1) - max(a.x0, b.x0) > SLACK_PX and min(a.y1, b.y1) - max(a.y0, b.y0) > SLACK_PX


def _overlapping_texts(texts: list) -> list[LayoutFinding]:
    return [LayoutFinding("overlap", panel_of(a), f"text {_name(a)}", f"overlaps text {_name(b)}"
                          + ("" if panel_of(a) == panel_of(b) else f" of panel {panel_of(b)!r}"))
            for (a, box_a), (b, box_b) in itertools.combinations(texts, 2) if _overlap(box_a, box_b)]


def _edges(fig, texts: list, edge_mm: float) -> list[LayoutFinding]:
    page = fig.bbox
    margin = edge_mm / MM_PER_INCH * fig.dpi
    out = []
    for text, box in texts:
        # the font's line box, as a PDF reader measures a word: up to a fifth of an em past the glyphs
        # (across the line: above and below for level text, to the sides for text turned 90 degrees)
        pad = LINE_BOX_EM * float(text.get_fontsize()) / 72 * fig.dpi
        turned = abs(((text.get_rotation() + 45) % 180) - 45) > 45
        px, py = (pad, 0.0) if turned else (0.0, pad)
        gap = min(box.x0 - px - page.x0, box.y0 - py - page.y0, page.x1 - box.x1 - px, page.y1 - box.y1 - py)
        if gap < -SLACK_PX:
            out.append(LayoutFinding("clipped", panel_of(text), f"text {_name(text)}",
                                     f"reaches {-gap / fig.dpi * MM_PER_INCH:.2f} mm past the page edge"))
        elif gap < margin:
            out.append(LayoutFinding("edge", panel_of(text), f"text {_name(text)}",
                                     f"ends {max(gap, 0) / fig.dpi * MM_PER_INCH:.2f} mm from the page edge "
                                     f"(keep {edge_mm:g} mm)"))
    return out


def _small(texts: list, min_text_pt: float) -> list[LayoutFinding]:
    return [LayoutFinding("text size", panel_of(t), f"text {_name(t)}",
                          f"{float(t.get_fontsize()):g} pt is below {min_text_pt:g} pt")
            for t, _ in texts if float(t.get_fontsize()) < min_text_pt - 1e-9]


def _data_points(ax) -> np.ndarray:
    """Display coordinates of the data an axes draws: line vertices, marker positions, bar and
    patch corners (not the axes' own frame)."""
    from matplotlib.collections import Collection
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    points = []
    for artist in ax.get_children():
        if not artist.get_visible() or artist in ax.spines.values() or artist is ax.patch:
            continue
        if isinstance(artist, Line2D) and len(artist.get_xdata()):
            points.append(artist.get_transform().transform(np.column_stack([artist.get_xdata(), artist.get_ydata()])))
        elif isinstance(artist, Collection):
            offsets = artist.get_offsets()
            if len(offsets):
                points.append(artist.get_offset_transform().transform(offsets))
        elif isinstance(artist, Patch) and artist.get_gid() not in (None, "stimulus"):
            path = artist.get_path().transformed(artist.get_transform())
            points.append(path.vertices[::max(1, len(path.vertices) // 2000)])
    if not points:
        return np.empty((0, 2))
    out = np.concatenate([np.asarray(p, dtype=float).reshape(-1, 2) for p in points])
    return out[np.isfinite(out).all(axis=1)]


def _keys_over_data(fig, renderer) -> list[LayoutFinding]:
    """A legend drawn inside an axes that covers points of that axes' data."""
    out = []
    for ax in fig.axes:
        legend = ax.get_legend()
        if legend is None or not legend.get_visible():
            continue
        box = legend.get_window_extent(renderer)
        points = _data_points(ax)
        inside = ((points[:, 0] > box.x0) & (points[:, 0] < box.x1) & (points[:, 1] > box.y0)
                  & (points[:, 1] < box.y1)) if points.size else np.zeros(0, dtype=bool)
        if inside.any():
            out.append(LayoutFinding("key over data", panel_of(ax), "key",
                                     f"covers {int(inside.sum())} drawn data point(s): move it (legend loc) "
                                     "or make room"))
    return out
