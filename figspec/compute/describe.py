"""What every panel kind reports besides its tables: rows of the figure's statistics table and
its legend sentence. Kinds build theirs from these pieces; the registry falls back to
:func:`trial_rows` and :func:`generic_legend` for a kind that defines none."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

import numpy as np

from figspec.optional import deferred

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

# units drawn side by side at one level: offset by one marker width each (the style's marker size)
OFFSET_SENTENCE = ("Units are drawn side by side at each level (one marker width apart, less where two levels are "
                   "close on the page) so coincident markers and error bars show; the source data keep the true "
                   "levels.")

STAT_COLUMNS = ["section", "panel", "unit", "level", "quantity", "value", "ci_low", "ci_high", "note"]


@dataclass(frozen=True)
class About:
    """What a legend sentence may mention beyond the panel and its tables.

    ``label`` is how the figure names the panel (its letter when letters are drawn, else its
    name); ``declared`` is the panel as the spec wrote it (before defaults were filled in, so
    a legend can say a width was chosen automatically); ``level_unit`` is the levels' unit.
    """

    label: str
    declared: Any
    level_unit: str
    level_scale: str | None = None
    unit_label: Callable[[str], str] = str


def trial_rows(panel, tables) -> list[list]:
    """One statistics row per unit and level: trials presented (``n_trials``), from every table
    of the panel that has that column."""
    frames = tables.values() if isinstance(tables, dict) else [tables]
    rows = []
    for table in frames:
        if "n_trials" in table and len(table):
            for (unit, level), n in table.groupby(["unit", "level"])["n_trials"].first().items():
                rows.append(["trials", panel.name, unit, level, "n_trials", int(n), None, None, ""])
            break
    return rows


def count_text(values) -> str:
    """``30`` or ``28–30``: the range of trial counts, as a legend states it."""
    n = np.unique(np.asarray(values, dtype=np.int64))          # vectorised: a raster table has a row per spike
    return str(n[0]) if len(n) == 1 else f"{n[0]}–{n[-1]}"


def unit_text(table: pd.DataFrame, about: "About | None" = None) -> str:
    """The units of a table as the figure names them: the display name, with the data's name in
    parentheses where they differ."""
    names = [str(u) for u in pd.unique(table["unit"])]
    return ", ".join(shown_unit(u, about) for u in names)


def shown_unit(unit: str, about: "About | None") -> str:
    label = about.unit_label(unit) if about is not None else unit
    return unit if label == unit else f"{label} ({unit})"


def window_text(window: tuple[float, float]) -> str:
    """A window as a legend states it: ``-60–0 ms``."""
    return f"{window[0]:g}–{window[1]:g} ms"


def window_columns(panel) -> dict[str, str]:
    """The response and baseline windows of a testing panel, as source-data columns."""
    return {name: f"{getattr(panel, name)[0]:g} to {getattr(panel, name)[1]:g}" for name in ("response_ms", "baseline_ms")}


def generic_legend(panel, tables, about: About) -> str:
    """A sentence naming the panel's kind, units and trials, for a kind without its own."""
    frames = tables.values() if isinstance(tables, dict) else [tables]
    table = next((t for t in frames if "unit" in t and "n_trials" in t and len(t)), None)
    if table is None:
        return f"- *{about.label}*: {panel.kind.replace('_', ' ')}."
    return (f"- *{about.label}*: {panel.kind.replace('_', ' ')}; units {unit_text(table, about)}; "
            f"n = {count_text(table['n_trials'])} trials per level.")
