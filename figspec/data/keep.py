"""Trial selection on the trial table: leave out trials by key, keep trials whose columns meet
conditions (a value, a list of values, a numeric range). Each rule reports how many trials it
removed; an unknown key or a rule that keeps no trial is an error."""

from __future__ import annotations

import numpy as np
import pandas as pd

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


def _same_type(value, column: pd.Series):
    """A key value in the type figspec gave the key column (integers or strings), or None."""
    if pd.api.types.is_integer_dtype(column):
        if isinstance(value, bool):
            return None
        if isinstance(value, int) or (isinstance(value, float) and value.is_integer()):
            return int(value)
        text = str(value).strip()
        return int(text) if text.lstrip("-").isdigit() else None
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def _matches(series: pd.Series, condition) -> np.ndarray:
    if isinstance(condition, Range):
        values = pd.to_numeric(series, errors="coerce").to_numpy(dtype=float)
        low = -np.inf if condition.min is None else condition.min
        high = np.inf if condition.max is None else condition.max
        return (values >= low) & (values <= high)
    options = condition if isinstance(condition, list) else [condition]
    hit = np.zeros(len(series), dtype=bool)
    for option in options:
        if isinstance(option, bool):
            text = series.astype(str).str.strip().str.lower()
            hit |= (series.to_numpy() == option) if series.dtype == bool else text.isin(
                ["true", "1"] if option else ["false", "0"]).to_numpy()
        elif isinstance(option, (int, float)):
            hit |= pd.to_numeric(series, errors="coerce").to_numpy(dtype=float) == float(option)
        else:
            hit |= series.astype(str).to_numpy() == option
    return hit


def select_trials(trials: pd.DataFrame, keys: list[str], rules: TrialSelection,
                  loc: Loc) -> tuple[np.ndarray, tuple[tuple[str, int], ...]]:
    """(mask of kept trials, (rule, trials removed) for each rule) of ``rules`` on ``trials``."""
    keep = np.ones(len(trials), dtype=bool)
    removed = []
    if rules.exclude:
        key_tuples = list(zip(*(trials[k].tolist() for k in keys)))
        index = {t: i for i, t in enumerate(key_tuples)}
        gone = np.zeros(len(trials), dtype=bool)
        for j, value in enumerate(rules.exclude):
            parts = value if isinstance(value, list) else [value]
            if len(keys) == 1 and len(parts) > 1:          # a key of several columns, shown joined by "/"
                parts = ["/".join(str(_same_type(v, pd.Series([], dtype=object))) for v in parts)]
            typed = tuple(_same_type(v, trials[k]) for v, k in zip(parts, keys)) if len(parts) == len(keys) else None
            if typed is None or typed not in index:
                raise DataError(Problem(f"no trial has this key ({len(keys)} value(s): {', '.join(keys)})",
                                        loc + ("exclude", j), shown(value)))
            gone[index[typed]] = True
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
