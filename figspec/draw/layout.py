"""The figure canvas: exact physical size, one column per panel, a layout engine that keeps
text on it. A level-repeated panel fills its column with one axes per level; a summary panel
is one axes spanning the column."""

from __future__ import annotations

from typing import TYPE_CHECKING, Sequence

import numpy as np

from figspec.spec.models import FigureSpec

if TYPE_CHECKING:
    from matplotlib.figure import Figure

MM_PER_INCH = 25.4


def new_layout(figure: FigureSpec, layouts: Sequence[str], n_rows: int) -> tuple["Figure", list]:
    """A figure of exactly ``width_mm`` x ``height_mm`` with one column per entry of
    ``layouts``: ``"rows"`` gives a column of ``n_rows`` axes (an array), ``"single"`` one axes.

    The figure is created without pyplot (no global state); matplotlib's constrained layout
    keeps labels on the canvas and apart.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(figure.width_mm / MM_PER_INCH, figure.height_mm / MM_PER_INCH),
                 layout="constrained")
    fig.get_layout_engine().set(w_pad=1.5 / 72, h_pad=1.5 / 72, wspace=0.04, hspace=0.03)
    outer = fig.add_gridspec(1, len(layouts))
    cells: list = []
    for c, layout in enumerate(layouts):
        if layout == "rows":
            inner = outer[0, c].subgridspec(max(n_rows, 1), 1, hspace=0.0)
            cells.append(np.array([fig.add_subplot(inner[r, 0]) for r in range(max(n_rows, 1))]))
        else:
            cells.append(fig.add_subplot(outer[0, c]))
    if figure.title:
        fig.suptitle(figure.title)
    return fig, cells
