"""A panel's trials split into conditions by a trial-table column (light on and off, before and
after a drug): one recording per condition, every one checked to have trials at every level the
panel shows, so a comparison never rests on a level one condition lacks."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from figspec.data.keep import _matches, shown
from figspec.data.recording import Recording
from figspec.errors import Problem
from figspec.spec.selection import ConditionSplit

MISSING = ("", "nan", "none", "null", "na")


@dataclass(frozen=True)
class Condition:
    """One condition: its value in the column, its display name and its trials."""

    value: object
    name: str
    recording: Recording


def _values(column: np.ndarray) -> list:
    """The column's distinct values, sorted (numbers as numbers), empty fields left out."""
    if column.dtype.kind in "biuf":
        values = np.unique(column[~np.isnan(column.astype(float))]) if column.dtype.kind == "f" else np.unique(column)
        return [v.item() for v in values]
    text = np.char.strip(column.astype(str))
    values = sorted({str(v) for v in np.unique(text) if str(v).lower() not in MISSING})
    if values and all(v.lower() in ("true", "false") for v in values):
        return [v.lower() == "true" for v in sorted(values, key=lambda v: v.lower() == "true")]
    try:
        return sorted(float(v) for v in values)            # numbers written as text: 40.0 is 40
    except ValueError:
        return values


def split_conditions(rec: Recording, split: ConditionSplit, levels: list[float] | None,
                     panel_name: str) -> tuple[list[Condition], list[Problem]]:
    """The panel's conditions in order, or the problems that stop the split: a column that holds
    one value, a value no trial has, a level shown where a condition has no trial."""
    loc = ("conditions",)
    column = rec.trials[f"where:{split.column}"]
    level = rec.trials["level"].astype(float)
    shown_levels = np.asarray(levels if levels is not None else rec.levels, dtype=float)
    at_levels = np.isin(level, shown_levels)
    values = list(split.values) if split.values is not None else _values(column[at_levels])
    if len(values) < 2:
        found = ", ".join(shown(v) for v in values) or "no value"
        return [], [Problem(f"splits trials into conditions but the column has one value ({found}) in the "
                            "trials the panel shows: a comparison needs two", loc + ("column",), split.column)]
    masks, problems = [], []
    for j, value in enumerate(values):
        hit = _matches(column, value)
        if not hit.any():
            where = loc + (("values", j) if split.values is not None else ("column",))
            problems.append(Problem(f"no trial has {split.column} = {shown(value)} (values found: "
                                    f"{', '.join(shown(v) for v in _values(column)[:12])})", where, shown(value)))
        masks.append(hit)
    if problems:
        return [], problems
    for j, (value, hit) in enumerate(zip(values, masks)):
        lacking = [lv for lv in shown_levels if not (hit & (level == lv)).any()]
        if lacking:
            problems.append(Problem(f"condition {split.column} = {shown(value)} has no trial at level(s) "
                                    f"{', '.join(f'{v:g}' for v in lacking)}: compare conditions at levels both "
                                    "have (set the panel's levels)", loc + ("column",), split.column))
    if problems:
        return [], problems
    anywhere = np.logical_or.reduce(masks)
    left = int((~anywhere).sum())
    removed = ((f"panel {panel_name}: trials in none of the conditions ({split.column})", left),) if left else ()
    names = split.names or [f"{split.column} = {shown(v).strip(chr(39))}" for v in values]
    return [Condition(v, str(n), rec.keep_trials(hit, removed)) for v, n, hit in zip(values, names, masks)], []
