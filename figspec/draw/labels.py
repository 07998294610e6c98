"""Row labels (level and trial count), column titles and axis labels."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from matplotlib.axes import Axes

TIME_LABEL = "Time from stimulus onset (ms)"


def label_rows(column: np.ndarray, row_labels: list[str]) -> None:
    """Row labels on the left of a column of level axes."""
    for ax, text in zip(column, row_labels):
        ax.set_ylabel(text, rotation=0, ha="right", va="center", labelpad=4)


def label_column(column: np.ndarray, title: str, x_label: str | None) -> None:
    """One title on the top axes; x tick labels and the x label only on the bottom one."""
    column[0].set_title(title)
    column[-1].set_xlabel(x_label or TIME_LABEL)
    for ax in column[:-1]:
        ax.tick_params(labelbottom=False)


def label_single(ax: "Axes", title: str) -> None:
    ax.set_title(title)
