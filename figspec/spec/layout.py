"""``[layout]`` and ``[[shared]]``: the grid panels sit in, and groups of axes that share scales.

Grid cells are counted from 1 (``cell = [1, 1]`` is the top-left cell), like rows and columns
of a table; key paths in messages still count ``[[panels]]`` from 0.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from figspec.errors import Problem, toml_text
from figspec.spec.fields import MAX_TICKS, Frozen

Count = Annotated[int, Field(ge=1, le=50)]
Ratio = Annotated[float, Field(gt=0, le=100)]


class LayoutSpec(Frozen):
    """The grid: ``rows`` x ``columns`` cells with relative ``widths`` and ``heights``."""

    rows: Count = 1
    columns: Count = 1
    widths: list[Ratio] | None = None
    heights: list[Ratio] | None = None
    letters: bool = False
    trial_counts: bool = True

    @model_validator(mode="after")
    def _ratios(self) -> "LayoutSpec":
        if self.widths is not None and len(self.widths) != self.columns:
            raise ValueError(f"widths needs one number per column ({self.columns}), got {len(self.widths)}")
        if self.heights is not None and len(self.heights) != self.rows:
            raise ValueError(f"heights needs one number per row ({self.rows}), got {len(self.heights)}")
        return self


def panel_box_mm(width_mm: float, height_mm: float, layout: "LayoutSpec | None", panels: list,
                 index: int) -> tuple[float, float]:
    """The width and height (mm) of the grid cells panel ``index`` spans: the page share the
    layout gives it (without a layout, panels sit side by side in one row)."""
    if layout is None:
        return width_mm / len(panels), height_mm
    widths = layout.widths or [1.0] * layout.columns
    heights = layout.heights or [1.0] * layout.rows
    panel = panels[index]
    (row, col), (h, w) = panel.cell or (1, 1), panel.span
    return (width_mm * sum(widths[col - 1:col - 1 + w]) / sum(widths),
            height_mm * sum(heights[row - 1:row - 1 + h]) / sum(heights))


def reading_order(layout: LayoutSpec | None, panels: list) -> list[int]:
    """Indices of ``panels`` in reading order: by grid cell (row, then column); without a
    layout, the order of the spec (one column each)."""
    if layout is None:
        return list(range(len(panels)))
    return sorted(range(len(panels)), key=lambda i: tuple(panels[i].cell or (0, 0)))


def panel_letters(layout: LayoutSpec | None, panels: list) -> dict[str, str]:
    """The letter drawn beside each panel (``a``, ``b`` ... in reading order), when the layout
    draws letters; empty otherwise."""
    if layout is None or not layout.letters:
        return {}
    return {panels[i].name: "abcdefghijklmnopqrstuvwxyz"[n] for n, i in enumerate(reading_order(layout, panels))}


class SharedGroup(Frozen):
    """``[[shared]]``: panels whose axes (every repeat of each) share x, y or both."""

    panels: list[str] = Field(min_length=1)
    axis: Literal["x", "y", "both"] = "y"
    limits: tuple[float, float] | None = None
    step: Annotated[float, Field(gt=0, le=1e9)] | None = None

    @model_validator(mode="after")
    def _limits(self) -> "SharedGroup":
        if self.limits is not None and not self.limits[0] < self.limits[1]:
            raise ValueError(f"limits must be [low, high] with low < high, got {list(self.limits)}")
        if self.limits is not None and self.step is not None and \
                (self.limits[1] - self.limits[0]) / self.step > MAX_TICKS:
            raise ValueError(f"step = {self.step:g} gives {(self.limits[1] - self.limits[0]) / self.step:.0f} ticks "
                             f"over limits {list(self.limits)}; at most {MAX_TICKS} per axis")
        if self.limits is not None and self.axis == "both":
            raise ValueError("fixed limits apply to one axis: give axis = 'x' or 'y'")
        return self


def grid_problems(layout: LayoutSpec | None, panels: list, shared: list[SharedGroup]) -> list[Problem]:
    """Placement checks: cells inside the grid, spans that fit, no two panels in one cell,
    shared groups naming known panels."""
    problems: list[Problem] = []
    names = [p.name for p in panels]
    for g, group in enumerate(shared):
        for j, name in enumerate(group.panels):
            if name not in names:
                problems.append(Problem(f"no panel named {name!r}; panels are {', '.join(names)}",
                                        ("shared", g, "panels", j), toml_text(name)))
    placed = [p.cell is not None for p in panels]
    if layout is None:
        for i, p in enumerate(panels):
            if p.cell is not None:
                problems.append(Problem("a cell needs a [layout] table giving rows and columns", ("panels", i, "cell")))
        return problems
    if not all(placed):
        for i, p in enumerate(panels):
            if p.cell is None:
                problems.append(Problem("with a [layout], every panel needs a cell = [row, column] "
                                        f"(grid of {layout.rows} x {layout.columns}, counted from 1)",
                                        ("panels", i)))
        return problems
    owner: dict[tuple[int, int], int] = {}
    for i, p in enumerate(panels):
        row, col = p.cell
        if not (1 <= row <= layout.rows and 1 <= col <= layout.columns):
            problems.append(Problem(f"outside the {layout.rows} x {layout.columns} grid (cells count from 1)",
                                    ("panels", i, "cell"), str(list(p.cell))))
            continue
        rows, cols = p.span
        if row + rows - 1 > layout.rows or col + cols - 1 > layout.columns:
            problems.append(Problem(f"a span of {rows} x {cols} from cell {list(p.cell)} does not fit the "
                                    f"{layout.rows} x {layout.columns} grid", ("panels", i, "span"), str(list(p.span))))
            continue
        for r in range(row, row + rows):
            for c in range(col, col + cols):
                if (r, c) in owner:
                    other = owner[(r, c)]
                    problems.append(Problem(f"cell [{r}, {c}] is already taken by panels[{other}] "
                                            f"({panels[other].name!r})", ("panels", i, "cell"), str(list(p.cell))))
                    break
                owner[(r, c)] = i
            else:
                continue
            break
    return problems
