"""CSV source: delimited spike and trial tables, columns named in the spec."""

from __future__ import annotations

import csv
from pathlib import Path

import pandas as pd

from figspec.data.columns import Plan, column_plan, missing_columns
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import CsvSource

DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar", " ": "space"}


def read(src: CsvSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None]) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    """The canonical spike frame and trial frame (None without a trial table) of a CSV source."""
    spike_plan, trial_plan = plans
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",), src.delimiter, loc)
    trials = None
    if trial_plan is not None and src.trials is not None:
        trials = read_table(folder / src.trials, trial_plan, loc + ("trials",), src.delimiter, loc)
    return spikes, trials


def check_file(path: Path, file_loc: Loc) -> None:
    """A missing file, a folder or an unreadable file is a user error at the key that named it."""
    if path.is_dir():
        raise DataError(Problem(f"{path} is a folder, not a data file", file_loc))
    if not path.is_file():
        raise DataError(Problem(f"data file not found: {path}", file_loc))
    try:
        with open(path, "rb") as handle:
            handle.read(1)
    except OSError as err:
        raise DataError(Problem(f"cannot read {path}: {err.strerror}", file_loc)) from None


def ragged_row(path: Path, delimiter: str, n_fields: int) -> tuple[int, int] | None:
    """(line number, fields) of the first row whose number of fields differs from the
    header's, or None. Counted with numpy over the file's bytes (one pass, no Python loop over
    rows); a file with quoted fields goes through the csv module instead, which knows quotes."""
    import numpy as np

    data = path.read_bytes()
    if b'"' in data:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            for number, row in enumerate(csv.reader(handle, delimiter=delimiter), start=1):
                if row and len(row) != n_fields:
                    return number, len(row)
        return None
    raw = np.frombuffer(data, dtype=np.uint8)
    breaks = np.flatnonzero(raw == ord("\n"))
    ends = np.append(breaks, raw.size) if raw.size and raw[-1] != ord("\n") else breaks
    starts = np.concatenate([[0], ends[:-1] + 1])
    counts = np.diff(np.concatenate([[0], np.cumsum(raw == ord(delimiter))[ends - 1]])) if ends.size else ends
    blank = (ends - starts) <= np.where((ends - starts > 0) & (raw[np.maximum(ends - 1, 0)] == ord("\r")), 1, 0)
    bad = np.flatnonzero((counts + 1 != n_fields) & ~blank)
    return (int(bad[0]) + 1, int(counts[bad[0]]) + 1) if bad.size else None


def _header(path: Path, delimiter: str, file_loc: Loc) -> list[str]:
    try:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            first = handle.readline()
    except UnicodeDecodeError:
        raise DataError(Problem(f"{path} is not UTF-8 text: is it a CSV file (or another format, e.g. "
                                "Parquet: set format)?", file_loc)) from None
    if not first.strip():
        raise DataError(Problem(f"{path} is empty: a CSV file starts with a header row", file_loc))
    if "\x00" in first or b"\x00" in path.read_bytes()[:1 << 20]:
        raise DataError(Problem(f"{path} holds NUL bytes: is it a text file in UTF-8 (or another format, e.g. "
                                "Parquet: set format)?", file_loc))
    return next(csv.reader([first], delimiter=delimiter))


def _delimiter_problem(header: list[str], delimiter: str, path: Path, loc: Loc) -> Problem | None:
    """Say so when a header read with ``delimiter`` is one column that another delimiter splits."""
    if len(header) != 1:
        return None
    for other, name in DELIMITER_NAMES.items():
        if other != delimiter and other != " " and other in header[0]:
            shown = "\\t" if other == "\t" else other
            return Problem(f"{path} looks {name}-separated, but is read as {DELIMITER_NAMES[delimiter]}-separated: "
                           f"set delimiter = \"{shown}\"", loc + ("delimiter",), f"header {header[0][:40]!r}")
    return None


def read_table(path: Path, wanted: Plan, file_loc: Loc, delimiter: str = ",", src_loc: Loc = ()) -> pd.DataFrame:
    """Read the planned columns of a delimited file, renamed to canonical names (key and unit
    columns as text, so the assembly decides their type)."""
    check_file(path, file_loc)
    header = _header(path, delimiter, file_loc)
    wrong = _delimiter_problem(header, delimiter, path, src_loc)
    if wrong is not None:
        raise DataError(wrong)
    problems = missing_columns(header, wanted, str(path))
    if problems:
        raise DataError(problems)
    text_columns = {column: str for canonical, (column, _) in wanted.items()
                    if canonical == "unit" or canonical.startswith("key")}
    try:
        frame = pd.read_csv(path, sep=delimiter, usecols=sorted({c for c, _ in wanted.values()}),
                            dtype=text_columns, encoding="utf-8-sig", on_bad_lines="error")
    except (pd.errors.ParserError, ValueError, OSError) as err:
        raise DataError(Problem(f"cannot read {path} as CSV: {str(err).strip().splitlines()[-1]}", file_loc)) from None
    if frame.empty:
        raise DataError(Problem(f"{path} has a header but no rows", file_loc))
    ragged = ragged_row(path, delimiter, len(header))
    if ragged is not None:
        line, fields = ragged
        raise DataError(Problem(f"line {line} of {path} has {fields} fields, the header {len(header)}: a missing "
                                "or extra delimiter?", file_loc))
    return pd.DataFrame({canonical: frame[column].to_numpy() for canonical, (column, _) in wanted.items()})
