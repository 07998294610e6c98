"""Trial selection on the trial table: leave out trials by key, keep trials whose columns meet
conditions (a value, a list of values, a numeric range). Each rule reports how many trials it
removed; an unknown key or a rule that keeps no trial is an error."""

from __future__ import annotations

import numpy as np

from figspec.data.table import numbers, text, whole_number
from figspec.errors import DataError, Loc, Problem
from figspec.spec.selection import Range, TrialSelection


def shown(value) -> str:
    """A value as the user wrote it (never a numpy repr)."""
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(shown(v) for v in value) + "]"
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (float, np.floating)):
        return f"{float(value):g}"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    return repr(str(value))


def _same_type(value, column: np.ndarray | None):
    """A key value in the type figspec gave the key column (integers or strings), or None."""
    if column is not None and column.dtype.kind in "iu":
        if isinstance(value, bool):
            return None
        if isinstance(value, int) or (isinstance(value, float) and value.is_integer()):
            return int(value)
        return whole_number(str(value))
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def _matches(values: np.ndarray, condition) -> np.ndarray:
    if isinstance(condition, Range):
        low = -np.inf if condition.min is None else condition.min
        high = np.inf if condition.max is None else condition.max
        as_numbers = numbers(values)
        return (as_numbers >= low) & (as_numbers <= high)
    options = condition if isinstance(condition, list) else [condition]
    hit = np.zeros(len(values), dtype=bool)
    for option in options:
        if isinstance(option, bool):
            hit |= (values == option) if values.dtype == bool else np.isin(
                np.char.lower(text(values)), ["true", "1"] if option else ["false", "0"])
        elif isinstance(option, (int, float)):
            hit |= numbers(values) == float(option)
        else:                     # text compares without surrounding spaces (" on" typed by hand is "on")
            hit |= np.char.strip(values.astype(str)) == option.strip()
    return hit


def select_trials(trials, keys: list[str], rules: TrialSelection,
                  loc: Loc) -> tuple[np.ndarray, tuple[tuple[str, int], ...]]:
    """(mask of kept trials, (rule, trials removed) for each rule) of ``rules`` on ``trials``
    (a :class:`figspec.data.table.Table`)."""
    keep = np.ones(len(trials), dtype=bool)
    removed = []
    if rules.exclude:
        gone = np.zeros(len(trials), dtype=bool)
        for j, value in enumerate(rules.exclude):
            parts = value if isinstance(value, list) else [value]
            if len(keys) == 1 and len(parts) > 1:          # a key of several columns, shown joined by "/"
                parts = ["/".join(str(_same_type(v, None)) for v in parts)]
            typed = tuple(_same_type(v, trials[k]) for v, k in zip(parts, keys)) if len(parts) == len(keys) else None
            hit = None
            if typed is not None and None not in typed:
                hit = np.ones(len(trials), dtype=bool)
                for v, k in zip(typed, keys):
                    hit &= (trials[k] == v) if trials[k].dtype.kind in "iu" else (trials[k].astype(str) == v)
            if hit is None or not hit.any():
                raise DataError(Problem(f"no trial has this key ({len(keys)} value(s): {', '.join(keys)})",
                                        loc + ("exclude", j), shown(value)))
            gone |= hit
        removed.append((f"exclude {len(rules.exclude)} trials by key", int((keep & gone).sum())))
        keep &= ~gone
    for column, condition in rules.where.items():
        hit = _matches(trials[f"where:{column}"], condition)
        rule = _range(condition, column) if isinstance(condition, Range) else f"{column} = {shown(condition)}"
        removed.append((f"where {rule}", int((keep & ~hit).sum())))
        keep &= hit
        if not keep.any():
            raise DataError(Problem("no trial is left after this condition", loc + ("where", column),
                                    _range(condition, column) if isinstance(condition, Range) else shown(condition)))
    if not keep.any():
        raise DataError(Problem("the selection keeps no trial", loc))
    return keep, tuple(removed)


def _range(condition: Range, column: str) -> str:
    low = "" if condition.min is None else f"{condition.min:g} <= "
    high = "" if condition.max is None else f" <= {condition.max:g}"
    return f"{low}{column}{high}"
