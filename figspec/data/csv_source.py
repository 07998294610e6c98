"""CSV source: delimited spike and trial tables, columns named in the spec."""

from __future__ import annotations

import csv
import warnings
from pathlib import Path

import numpy as np

from figspec.data.columns import Plan, missing_columns
from figspec.data.table import Table
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import CsvSource

DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar", " ": "space"}


def read(src: CsvSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None]) -> tuple[Table, Table | None]:
    """The canonical spike table and trial table (None without a trial table) of a CSV source."""
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


def ragged_row(path: Path, delimiter: str, n_fields: int, file_loc: Loc = ()) -> tuple[int, int] | None:
    """(line number, fields) of the first row whose number of fields differs from the
    header's, or None. Counted with numpy over the file's bytes (one pass, no Python loop over
    rows); a file with quoted fields goes through the csv module instead, which knows quotes
    (a quote never closed is an error naming the line it opens on)."""
    data = path.read_bytes()
    if b'"' in data:
        with open(path, encoding="utf-8-sig", newline="") as handle:
            reader, started = csv.reader(handle, delimiter=delimiter, strict=True), 1
            try:
                for number, row in enumerate(reader, start=1):
                    if row and len(row) != n_fields:
                        return number, len(row)
                    started = reader.line_num + 1
            except csv.Error as err:
                what = "is never closed" if "end of data" in str(err) else "is malformed"
                raise DataError(Problem(f"cannot read {path} as CSV: a quoted field on line {started} {what} ({err})",
                                        file_loc)) from None
        return None
    raw = np.frombuffer(data, dtype=np.uint8)
    breaks = np.flatnonzero(raw == ord("\n"))
    ends = np.append(breaks, raw.size) if raw.size and raw[-1] != ord("\n") else breaks
    starts = np.concatenate([[0], ends[:-1] + 1])
    # each delimiter's line: the first line end at or after it (a bincount, not a cumulative sum over every byte)
    counts = np.bincount(np.searchsorted(ends, np.flatnonzero(raw == ord(delimiter))), minlength=ends.size)[:ends.size]
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


def read_table(path: Path, wanted: Plan, file_loc: Loc, delimiter: str = ",", src_loc: Loc = ()) -> Table:
    """Read the planned columns of a delimited file, renamed to canonical names: unit names as
    text, trial keys as integers when every one is (else text), selection columns as text,
    times and levels as numbers when every field is one (else text, so the assembly can say
    which field is not)."""
    check_file(path, file_loc)
    header = _header(path, delimiter, file_loc)
    wrong = _delimiter_problem(header, delimiter, path, src_loc)
    if wrong is not None:
        raise DataError(wrong)
    problems = missing_columns(header, wanted, str(path))
    if problems:
        raise DataError(problems)
    ragged = ragged_row(path, delimiter, len(header), file_loc)
    if ragged is not None:
        line, fields = ragged
        raise DataError(Problem(f"line {line} of {path} has {fields} fields, the header {len(header)}: a missing "
                                "or extra delimiter?", file_loc))
    names = sorted({column for column, _ in wanted.values()}, key=header.index)
    kinds = {column: _kind(column, wanted) for column in names}
    columns = _parse(path, delimiter, [header.index(c) for c in names], names, kinds, file_loc)
    if not columns[names[0]].size:
        raise DataError(Problem(f"{path} has a header but no rows", file_loc))
    return Table({canonical: columns[column] for canonical, (column, _) in wanted.items()})


def _kind(column: str, wanted: Plan) -> str:
    """How a file column is parsed: "text" for unit names and selection columns, "whole" for
    a trial key, else "number" (a column serving twice takes the first of these it needs)."""
    roles = [canonical for canonical, (c, _) in wanted.items() if c == column]
    if any(r == "unit" or r.startswith("where:") for r in roles):
        return "text"
    return "whole" if any(r.startswith("key") for r in roles) else "number"


FIRST_TRY = {"text": object, "whole": np.int64, "number": np.float64}


def _parse(path: Path, delimiter: str, usecols: list[int], names: list[str], kinds: dict[str, str],
           file_loc: Loc) -> dict[str, np.ndarray]:
    """The columns in one pass of numpy's CSV reader with the types ``kinds`` asks for; when a
    field does not fit its type, again with every column as text, each column then converted
    on its own where it can be (so a text trial key or a blank time is seen, not lost)."""
    def load(dtype):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)              # "input contained no data"
            return np.loadtxt(path, delimiter=delimiter, skiprows=1, usecols=usecols, dtype=dtype, comments=None,
                              quotechar='"', encoding="utf-8", ndmin=1)
    try:
        try:
            rows = load([(f"f{i}", FIRST_TRY[kinds[c]]) for i, c in enumerate(names)])
            out = {c: rows[f"f{i}"] for i, c in enumerate(names)}
        except (ValueError, OverflowError):
            rows = load([(f"f{i}", object) for i in range(len(names))])
            out = {c: _converted(rows[f"f{i}"], kinds[c]) for i, c in enumerate(names)}
    except UnicodeDecodeError:
        raise DataError(Problem(f"{path} is not UTF-8 text: is it a CSV file (or another format, e.g. "
                                "Parquet: set format)?", file_loc)) from None
    except (ValueError, OSError) as err:
        raise DataError(Problem(f"cannot read {path} as CSV: {str(err).strip().splitlines()[-1]}", file_loc)) from None
    # Copies, not views of the parsed rows: a view would keep every row's Python strings alive.
    return {c: values.astype(str) if values.dtype == object else np.array(values) for c, values in out.items()}


def _converted(values: np.ndarray, kind: str) -> np.ndarray:
    if kind != "text":
        try:
            return values.astype(FIRST_TRY[kind])
        except (ValueError, OverflowError):
            pass
    return values
