"""CSV source: delimited spike and trial tables, columns named in the spec, read by Arrow.

The file is parsed by ``pyarrow.csv.open_csv`` (Apache Arrow's streaming CSV reader): only the
planned columns, with the types the spec implies, batch by batch, so memory follows the rows a
spec keeps and not the file. Unit names and trial keys are read as dictionary arrays (each
distinct text once, a 32-bit code per row): no string per spike, no sort of strings. figspec's
own code here only says what Arrow does not: which key the file and column came from, the line
of a ragged row, the delimiter a one-column header suggests.
"""

from __future__ import annotations

import codecs
import csv
import itertools
from pathlib import Path

import numpy as np

from figspec.data.columns import Plan, missing_columns
from figspec.data.table import Coded, Table, whole_number
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import CsvSource

DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar", " ": "space"}
BLOCK_BYTES = 1 << 20
LONGEST_FIELD = 1000            # characters in any field figspec reads (a name, key, value or number)


def read(src: CsvSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None],
         units: set[str] | None = None) -> tuple[Table, Table | None]:
    """The canonical spike table and trial table (None without a trial table) of a CSV source.
    ``units``: the units the spec uses (only their spikes are kept; None keeps all)."""
    spike_plan, trial_plan = plans
    keep = units if (trial_plan is not None and src.unit_name is None) else None     # trials from spikes need all
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",), src.delimiter, loc, keep,
                        samples="time" if src.time_unit == "samples" else None)
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
    header's, or None. Only called once Arrow has refused a row (its message has no line
    number): counted with numpy over the file's bytes, or, for a file with quoted fields, by
    the csv module, which knows quotes (a quote never closed is an error naming its line)."""
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


NOT_UTF8 = "is not UTF-8 text: is it a CSV file (or another format, e.g. Parquet: set format)?"


def _header(path: Path, delimiter: str, file_loc: Loc) -> list[str]:
    """The header's column names, read by the csv module from the first line (at most 1 MB)."""
    with open(path, "rb") as handle:
        head = handle.read(1 << 20)
    try:
        codecs.getincrementaldecoder("utf-8-sig")().decode(head[:1 << 16], final=False)
        text = head.split(b"\n", 1)[0].decode("utf-8-sig")
    except UnicodeDecodeError:
        raise DataError(Problem(f"{path} {NOT_UTF8}", file_loc)) from None
    if not text.strip():
        raise DataError(Problem(f"{path} is empty: a CSV file starts with a header row", file_loc))
    if b"\x00" in head:
        raise DataError(Problem(f"{path} holds NUL bytes: is it a text file in UTF-8 (or another format, e.g. "
                                "Parquet: set format)?", file_loc))
    try:
        return next(csv.reader([text.rstrip("\r")], delimiter=delimiter))
    except csv.Error:                              # a lone carriage return inside the header row
        raise DataError(Problem(f"{path}: the header row holds a stray line-break character (\\r) the CSV reader "
                                "cannot read; is the file's end of line mixed?", file_loc)) from None


def _delimiter_problem(header: list[str], delimiter: str, path: Path, loc: Loc) -> Problem | None:
    """Say so when a header read with ``delimiter`` is one column that another delimiter splits."""
    if len(header) != 1:
        return None
    for other, name in DELIMITER_NAMES.items():
        if other != delimiter and other != " " and other in header[0]:
            shown = "\\t" if other == "\t" else other
            found = f"header {header[0]!r}" if len(header[0]) <= 32 else f"a header field of {len(header[0])} characters"
            return Problem(f"{path} looks {name}-separated, but is read as {DELIMITER_NAMES[delimiter]}-separated: "
                           f"set delimiter = \"{shown}\"", loc + ("delimiter",), found)
    return None


def _kind(column: str, wanted: Plan, samples: str | None) -> str:
    """How a file column is read: "text" (unit names, trial keys, selection columns: coded,
    keys turned into integers afterwards when every one is), "whole" (sample indices) or
    "number" (a column serving twice takes the first of these it needs)."""
    roles = [canonical for canonical, (c, _) in wanted.items() if c == column]
    if any(r == "unit" or r.startswith(("where:", "key")) for r in roles):
        return "text"
    return "whole" if samples in roles else "number"


def read_table(path: Path, wanted: Plan, file_loc: Loc, delimiter: str = ",", src_loc: Loc = (),
               units: set[str] | None = None, samples: str | None = None) -> Table:
    """Read the planned columns of a delimited file, renamed to canonical names: unit names
    coded, trial keys as integers when every one is (else text), selection columns as text,
    times and levels as numbers (sample indices, the ``samples`` column, as integers). A field
    that is not a number is kept as text, so the assembly can say which and where."""
    check_file(path, file_loc)
    header = _header(path, delimiter, file_loc)
    wrong = _delimiter_problem(header, delimiter, path, src_loc)
    if wrong is not None:
        raise DataError(wrong)
    problems = missing_columns(header, wanted, str(path))
    if problems:
        raise DataError(problems)
    names = sorted({column for column, _ in wanted.values()}, key=header.index)
    kinds = {column: _kind(column, wanted, samples) for column in names}
    unit_column = wanted["unit"][0] if "unit" in wanted and units is not None else None
    try:
        try:
            columns = _stream(path, delimiter, kinds, unit_column, units)
        except _NotANumber:
            columns = _stream(path, delimiter, {c: "text" for c in kinds}, unit_column, units)
            columns = {c: (v if kinds[c] == "text" else v.decoded()) for c, v in (columns or {}).items()} or None
    except _Refused as err:
        raise DataError(_refusal(path, delimiter, header, str(err), file_loc)) from None
    except _TooLong as err:
        loc = next(loc for column, loc in wanted.values() if column == err.column)
        raise DataError(Problem(f"a field of column {err.column!r} in {path} is {err.length} characters long; "
                                f"figspec reads fields of at most {LONGEST_FIELD} characters", loc)) from None
    if columns is None:
        raise DataError(Problem(f"{path} has a header but no rows", file_loc))
    out = {}
    for canonical, (column, _) in wanted.items():
        values = columns[column]
        if isinstance(values, Coded) and canonical != "unit":
            values = _whole_numbers(values)
        out[canonical] = values
    return Table(out)


class _NotANumber(Exception):
    pass


class _Refused(Exception):
    pass


class _TooLong(Exception):
    def __init__(self, column: str, length: int):
        super().__init__(column)
        self.column, self.length = column, length


def _stream(path: Path, delimiter: str, kinds: dict[str, str], unit_column: str | None,
            units: set[str] | None) -> dict | None:
    """The columns, batch by batch through Arrow; with ``unit_column``, only rows whose unit is
    one of ``units`` (or empty, so the assembly can report it). None when the file has no rows."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    types = {"text": pa.dictionary(pa.int32(), pa.string()), "whole": pa.int64(), "number": pa.float64()}
    convert = pcsv.ConvertOptions(include_columns=list(kinds), column_types={c: types[k] for c, k in kinds.items()},
                                  null_values=[], strings_can_be_null=False,
                                  quoted_strings_can_be_null=False)       # a blank or "n/a" is not a number
    parts: dict[str, list] = {c: [] for c in kinds}
    names: dict[str, dict[str, int]] = {c: {} for c in kinds if kinds[c] == "text"}
    wanted = None if units is None else {u.strip() for u in units}
    kept: list[bool] = []
    rows = 0
    try:
        reader = pcsv.open_csv(path, read_options=pcsv.ReadOptions(block_size=BLOCK_BYTES, use_threads=False),
                               parse_options=pcsv.ParseOptions(delimiter=delimiter), convert_options=convert)
        for batch in reader:
            values = {c: _codes(batch.column(i), names[c]) if c in names else plain(batch.column(i))
                      for i, c in enumerate(batch.schema.names)}
            keep = None
            if unit_column is not None:                # whether each unit name met so far is kept, by its code
                kept += [n.strip() in wanted or not n.strip()
                         for n in itertools.islice(names[unit_column], len(kept), None)]
                keep = np.array(kept)[values[unit_column]]
            rows += batch.num_rows
            for c, v in values.items():
                parts[c].append(v if keep is None else v[keep])
    except pa.ArrowInvalid as err:
        message = str(err)
        if "conversion error" in message and "UTF8" not in message:
            raise _NotANumber() from None
        raise _Refused(message) from None
    if rows == 0:
        return None
    out = {}
    for c, chunks in parts.items():
        joined = np.concatenate(chunks) if chunks else np.empty(0)
        if c in names:
            longest = max(map(len, names[c]), default=0)
            if longest > LONGEST_FIELD:                 # before a fixed-width array of every value is made
                raise _TooLong(c, longest)
            out[c] = Coded(np.array(list(names[c]), dtype=str), joined)
        else:
            out[c] = joined
    return out


NUMPY_TYPES = {"int8": np.int8, "int16": np.int16, "int32": np.int32, "int64": np.int64, "uint8": np.uint8,
               "uint16": np.uint16, "uint32": np.uint32, "uint64": np.uint64, "float": np.float32,
               "double": np.float64}


def plain(array) -> np.ndarray:
    """A null-free Arrow array of numbers as a numpy view of its data buffer (the buffer
    protocol; Arrow's own ``to_numpy`` would import pandas, which ``figspec check`` does not)."""
    dtype = np.dtype(NUMPY_TYPES[str(array.type)])
    return np.frombuffer(array.buffers()[1], dtype=dtype, count=len(array), offset=array.offset * dtype.itemsize)


def _indices(array, n: int) -> np.ndarray:
    """A dictionary array's codes as numpy (a null, which the reader does not make, as ``n``)."""
    return plain(array.indices.fill_null(n) if array.null_count else array.indices)


def _codes(array, seen: dict[str, int]) -> np.ndarray:
    """A batch's dictionary codes recoded into ``seen`` (the file's distinct values, in the order
    met), so codes of every batch agree."""
    dictionary = array.dictionary.to_pylist()
    into = np.array([seen.setdefault(d, len(seen)) for d in dictionary] + [0], dtype=np.int32)
    return into[_indices(array, len(dictionary))]


def _whole_numbers(column: Coded):
    """A coded key or selection column as integers when every distinct value is a whole number
    that fits in 64 bits (trial numbers), else as text."""
    as_int = [whole_number(t) for t in column.values.tolist()]
    if as_int and all(v is not None and -2 ** 63 <= v < 2 ** 63 for v in as_int):
        return np.array(as_int, dtype=np.int64)[column.codes]
    return column.decoded()


def _refusal(path: Path, delimiter: str, header: list[str], message: str, file_loc: Loc) -> Problem:
    """Arrow's refusal of a file as a located problem: the line of a ragged row (or of a quote
    never closed), text that is not UTF-8, else Arrow's own first line."""
    if "UTF8" in message:
        return Problem(f"{path} {NOT_UTF8}", file_loc)
    if "Expected" in message and "columns" in message:
        ragged = ragged_row(path, delimiter, len(header), file_loc)
        if ragged is not None:
            line, fields = ragged
            return Problem(f"line {line} of {path} has {fields} fields, the header {len(header)}: a missing "
                           "or extra delimiter?", file_loc)
    first = message.strip().splitlines()[0] if message.strip() else "unreadable"
    return Problem(f"cannot read {path} as CSV: {first[:200]}", file_loc)
