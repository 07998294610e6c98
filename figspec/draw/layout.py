"""The figure canvas: exact physical size, a grid of axes, a layout engine that keeps text on it."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from figspec.spec.models import FigureSpec

if TYPE_CHECKING:
    from matplotlib.figure import Figure

MM_PER_INCH = 25.4


def new_grid(figure: FigureSpec, n_rows: int, n_cols: int) -> tuple["Figure", np.ndarray]:
    """A figure of exactly ``width_mm`` x ``height_mm`` with an ``n_rows`` x ``n_cols`` grid.

    The figure is created without pyplot (no global state); matplotlib's constrained layout
    keeps labels on the canvas and apart. Returns the figure and a 2-D array of axes.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(figure.width_mm / MM_PER_INCH, figure.height_mm / MM_PER_INCH),
                 layout="constrained")
    fig.get_layout_engine().set(w_pad=1.5 / 72, h_pad=1.0 / 72, wspace=0.04, hspace=0.02)
    axes = fig.subplots(n_rows, n_cols, squeeze=False, sharex="col")
    if figure.title:
        fig.suptitle(figure.title)
    return fig, axes
