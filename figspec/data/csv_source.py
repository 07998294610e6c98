"""CSV source: a spike table and an optional trial table, columns named in the spec."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from figspec.data.columns import Plan, column_plan
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import CsvSource


def read(src: CsvSource, folder: Path, loc: Loc) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    """The canonical spike frame and trial frame (None without a trial table) of a CSV source."""
    spike_plan, trial_plan = column_plan(src, loc)
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",))
    trials = None
    if trial_plan is not None and src.trials is not None:
        trials = read_table(folder / src.trials, trial_plan, loc + ("trials",))
    return spikes, trials


def read_table(path: Path, wanted: Plan, file_loc: Loc) -> pd.DataFrame:
    """Read the columns of a CSV file, renamed to canonical names.

    Parameters
    ----------
    path : the CSV file.
    wanted : canonical name -> (column name in the file, key path of that mapping in the spec).
    file_loc : key path of the file name in the spec, for a missing or unreadable file.
    """
    if not path.is_file():
        raise DataError(Problem(f"data file not found: {path}", file_loc))
    try:
        header = list(pd.read_csv(path, nrows=0).columns)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError, OSError) as err:
        raise DataError(Problem(f"cannot read {path} as CSV: {err}", file_loc)) from None
    problems = []
    for canonical, (column, loc) in wanted.items():
        if column not in header:
            shown = ", ".join(header[:12]) + (" ..." if len(header) > 12 else "")
            problems.append(Problem(f"column {column!r} not found in {path}", loc, f"columns: {shown}"))
    if problems:
        raise DataError(problems)
    columns = {column: canonical for canonical, (column, _) in wanted.items()}
    try:
        frame = pd.read_csv(path, usecols=list(columns), dtype={c: str for c, k in columns.items()
                                                                  if k in ("unit", "trial")})
    except (pd.errors.ParserError, ValueError, OSError) as err:
        raise DataError(Problem(f"cannot read {path} as CSV: {err}", file_loc)) from None
    return frame.rename(columns=columns)
