"""A trial table rebuilt from a spike table that carries levels, when the source has none.

With ``trials_per_level`` the trials without any spike are added as empty trials; without it
a loud warning says they cannot be seen (rates are then too high)."""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import pandas as pd

from figspec.errors import DataError, FigspecWarning, Loc, Problem


@dataclass(frozen=True)
class TrialCounts:
    """What the spec says about trials when there is no trial table."""

    per_level: int | dict[str, int] | None
    loc: Loc


def trials_from_spikes(spikes: pd.DataFrame, keys: list[str], counts: TrialCounts, where: str) -> pd.DataFrame:
    """The trial table (``keys`` and ``level``) of the trials seen in ``spikes``, plus the empty
    trials ``counts`` declares."""
    if (spikes.groupby(keys)["level"].nunique() > 1).any():
        raise DataError(Problem("a trial has more than one level in the spike table", counts.loc, where))
    seen = spikes[[*keys, "level"]].drop_duplicates(keys).sort_values(["level", *keys], kind="stable")
    if counts.per_level is None:
        warnings.warn(
            f"{where}: no trial table and no trials_per_level: trials are inferred from the spikes, "
            "so trials without any spike are missing and rates are too high. "
            "Give a trial table or trials_per_level.", FigspecWarning, stacklevel=3)
        return seen.reset_index(drop=True)
    declared = _declared_counts(counts, seen["level"].unique())
    frames = [seen.astype({k: str for k in keys})]
    for level, n in declared.items():
        found = int((seen["level"] == level).sum())
        if found > n:
            raise DataError(Problem(f"level {level:g} has spikes in {found} trials, more than the {n} declared",
                                    counts.loc))
        empty = pd.DataFrame({k: [f"empty-{level:g}-{i + 1}" for i in range(n - found)] for k in keys})
        frames.append(empty.assign(level=float(level)))
    return pd.concat(frames, ignore_index=True).sort_values("level", kind="stable").reset_index(drop=True)


def _declared_counts(counts: TrialCounts, seen_levels) -> dict[float, int]:
    if isinstance(counts.per_level, int):
        return {float(level): counts.per_level for level in seen_levels}
    declared = {float(key): n for key, n in counts.per_level.items()}
    missing = sorted(set(float(v) for v in seen_levels) - set(declared))
    if missing:
        raise DataError(Problem(f"no trial count declared for level {missing[0]:g}", counts.loc))
    return declared
