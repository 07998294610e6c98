"""Row labels (level and trial count), column titles and axis labels of a level grid."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from matplotlib.axes import Axes

TIME_LABEL = "Time from stimulus onset (ms)"


def label_grid(axes: np.ndarray, row_labels: list[str], column_titles: list[str],
               x_labels: list[str]) -> None:
    """Label a level grid: rows on the left of the first column, one title per column on the
    top row, x tick labels and the x label only on the bottom row."""
    n_rows, n_cols = axes.shape
    for r in range(n_rows):
        ax: Axes = axes[r, 0]
        ax.set_ylabel(row_labels[r], rotation=0, ha="right", va="center", labelpad=4)
    for c in range(n_cols):
        axes[0, c].set_title(column_titles[c])
        axes[-1, c].set_xlabel(x_labels[c] or TIME_LABEL)
        for r in range(n_rows - 1):
            axes[r, c].tick_params(labelbottom=False)
