"""A trial table rebuilt from a spike table that carries levels, when the source has none.

With ``trials_per_level`` the trials without any spike are added as empty trials; without it
a loud warning says they cannot be seen (rates are then too high)."""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from figspec.data.table import Table, first_of_each, row_codes
from figspec.errors import DataError, FigspecWarning, Loc, Problem


@dataclass(frozen=True)
class TrialCounts:
    """What the spec says about trials when there is no trial table."""

    per_level: int | dict[str, int] | None
    loc: Loc


def trials_from_spikes(spikes: Table, keys: list[str], counts: TrialCounts, where: str) -> Table:
    """The trial table (``keys`` and ``level``) of the trials seen in ``spikes``, plus the empty
    trials ``counts`` declares."""
    key_codes, _ = row_codes([spikes[k] for k in keys])
    with_level, _ = row_codes([key_codes, spikes["level"]])
    if np.unique(with_level).size > np.unique(key_codes).size:
        raise DataError(Problem("a trial has more than one level in the spike table", counts.loc, where))
    seen = spikes.select([*keys, "level"]).take(np.flatnonzero(first_of_each(key_codes)))
    seen = seen.take(np.lexsort([seen[k] for k in reversed(keys)] + [seen["level"]]))
    if counts.per_level is None:
        warnings.warn(
            f"{where}: no trial table and no trials_per_level: trials are inferred from the spikes, "
            "so trials without any spike are missing and rates are too high. "
            "Give a trial table or trials_per_level.", FigspecWarning, stacklevel=3)
        return seen
    declared = _declared_counts(counts, np.unique(seen["level"]))
    tables = [Table({**{k: seen[k].astype(str) for k in keys}, "level": seen["level"]})]
    for level, n in declared.items():
        found = int(np.count_nonzero(seen["level"] == level))
        if found > n:
            raise DataError(Problem(f"level {level:g} has spikes in {found} trials, more than the {n} declared",
                                    counts.loc))
        names = np.char.add(f"empty-{level:g}-", (np.arange(n - found) + 1).astype(str))
        tables.append(Table({**{k: names for k in keys}, "level": np.full(n - found, float(level))}))
    table = Table.concat(tables)
    return table.take(np.argsort(table["level"], kind="stable"))


def _declared_counts(counts: TrialCounts, seen_levels) -> dict[float, int]:
    if isinstance(counts.per_level, int):
        return {float(level): counts.per_level for level in seen_levels}
    declared = {float(key): n for key, n in counts.per_level.items()}
    missing = sorted(set(float(v) for v in seen_levels) - set(declared))
    if missing:
        raise DataError(Problem(f"no trial count declared for level {missing[0]:g}", counts.loc))
    return declared
