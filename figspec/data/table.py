"""The data layer's tables: named, equal-length one-dimensional numpy columns.

Reading and checking data needs no pandas (``figspec check`` starts without it): sources return
:class:`Table` objects and the assembly works on their columns with numpy. ``to_frame`` gives a
pandas DataFrame where the computed tables want one. Text columns are numpy unicode arrays, or
:class:`Coded` columns (distinct values and one code per row, as Arrow's dictionary arrays hold
them), so a unit name per spike costs a small integer, not its characters.
"""

from __future__ import annotations

import re
from typing import Iterator, Mapping

import numpy as np

# A whole number as Python's int() reads it, in ASCII only: str.isdigit() also accepts '²' and
# str.strip() removes control characters such as '\x1c', neither of which int() reads
WHOLE = re.compile(r"\s*-?[0-9]+\s*", re.ASCII)


def whole_number(text: str) -> int | None:
    """``text`` as an integer when it is a whole number written in ASCII digits, else None."""
    return int(text) if WHOLE.fullmatch(text) else None


class Coded:
    """A column held as its distinct ``values`` and one integer code per row into them (an Arrow
    dictionary array's layout). ``decoded()`` gives the plain array; the assembly uses the codes."""

    __slots__ = ("values", "codes", "size")

    def __init__(self, values, codes):
        self.values = np.asarray(values)
        self.codes = np.asarray(codes)
        self.size = self.codes.size

    def decoded(self) -> np.ndarray:
        return self.values[self.codes]

    def take(self, rows) -> "Coded":
        return Coded(self.values, self.codes[rows])


def coded(column) -> tuple[np.ndarray, np.ndarray]:
    """(distinct values, each row's code into them) of a column, plain or :class:`Coded`; the
    values of a plain column come sorted (:func:`factorize`)."""
    if isinstance(column, Coded):
        return column.values, column.codes
    return factorize(column)


class Table:
    """Columns by name (insertion order kept), every one a 1-D numpy array of the same length."""

    __slots__ = ("_columns", "_rows")

    def __init__(self, columns: Mapping[str, object] | None = None, rows: int | None = None):
        arrays = {str(name): column_array(values) for name, values in (columns or {}).items()}
        lengths = {a.size for a in arrays.values()}
        if len(lengths) > 1:
            raise ValueError(f"columns of different lengths: {sorted(lengths)}")
        self._columns = arrays
        self._rows = lengths.pop() if lengths else (rows or 0)

    @classmethod
    def of(cls, data) -> "Table":
        """A Table of ``data``: a Table, a mapping of columns, or a DataFrame (read through its
        ``columns`` and ``to_numpy``, so pandas is not imported here)."""
        if isinstance(data, Table):
            return data
        if isinstance(data, Mapping):
            return cls(data)
        return cls({name: data[name] for name in data.columns}, rows=len(data))

    def __getitem__(self, name: str) -> np.ndarray:
        column = self._columns[name]
        return column.decoded() if isinstance(column, Coded) else column

    def raw(self, name: str):
        """The column as held: a numpy array or a :class:`Coded` column (not decoded)."""
        return self._columns[name]

    def __contains__(self, name: object) -> bool:
        return name in self._columns

    def __iter__(self) -> Iterator[str]:
        return iter(self._columns)

    def __len__(self) -> int:
        return self._rows

    def __repr__(self) -> str:
        return f"Table({self._rows} rows: {', '.join(self._columns)})"

    @property
    def columns(self) -> tuple[str, ...]:
        return tuple(self._columns)

    def take(self, rows: np.ndarray) -> "Table":
        """The rows ``rows`` picks (a boolean mask or row indices), in that order."""
        rows = np.asarray(rows)
        n = int(np.count_nonzero(rows)) if rows.dtype == bool else rows.size
        return Table({name: values.take(rows) if isinstance(values, Coded) else values[rows]
                      for name, values in self._columns.items()}, rows=n)

    def select(self, names) -> "Table":
        return Table({name: self._columns[name] for name in names}, rows=self._rows)

    def with_columns(self, columns: Mapping[str, object]) -> "Table":
        """This table with ``columns`` added or replaced (a scalar fills every row)."""
        out = dict(self._columns)
        for name, values in columns.items():
            out[name] = np.full(self._rows, values) if np.ndim(values) == 0 else values
        return Table(out, rows=self._rows)

    def to_frame(self):
        """The table as a pandas DataFrame (pandas imported here, on first use)."""
        import pandas as pd

        return pd.DataFrame({name: self[name] for name in self._columns}, index=pd.RangeIndex(self._rows))

    @staticmethod
    def concat(tables: list["Table"]) -> "Table":
        """Rows of ``tables`` one after another. A column some tables lack is empty there (NaN,
        or blank text in a text column); a column that is text in one table is text in all."""
        names = list(dict.fromkeys(name for t in tables for name in t.columns))
        out = {}
        for name in names:
            present = [t[name] for t in tables if name in t]
            as_text = any(p.dtype.kind in "USO" for p in present)
            parts = [t[name] if name in t else np.full(len(t), "" if as_text else np.nan) for t in tables]
            out[name] = np.concatenate([p.astype(str) for p in parts] if as_text else parts)
        return Table(out, rows=sum(len(t) for t in tables))


def column_array(values) -> np.ndarray:
    """``values`` as a 1-D numpy array. A pandas Series of text (or of categories) is taken
    through its own ``factorize``, so its rows become a unicode array without a Python string
    per row; other Series through ``to_numpy``."""
    if isinstance(values, Coded):
        return values
    if hasattr(values, "to_numpy") and not isinstance(values, np.ndarray):
        dtype = getattr(values, "dtype", None)
        if hasattr(values, "factorize") and (not isinstance(dtype, np.dtype) or dtype == object):
            codes, uniques = values.factorize()
            distinct = np.asarray(uniques, dtype=object)
            if len(distinct) and all(isinstance(v, str) for v in distinct.tolist()):
                return np.append(distinct.astype(str), "")[codes]          # code -1 (a missing value): ""
        values = values.to_numpy()
    array = np.asarray(values)
    return array.reshape(1) if array.ndim == 0 else array


def factorize(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(sorted distinct values, the code of each value into them). Runs of equal values (a
    table sorted by unit, say) are coded as runs, so sorted columns cost one pass."""
    values = np.asarray(values)
    if values.size == 0:
        return values[:0], np.empty(0, dtype=np.int64)
    starts = np.flatnonzero(np.concatenate([[True], values[1:] != values[:-1]]))
    uniques, run_code = np.unique(values[starts], return_inverse=True)
    return uniques, np.repeat(run_code.reshape(-1).astype(np.int64), np.diff(np.append(starts, values.size)))


def lookup(uniques: np.ndarray, values: np.ndarray) -> np.ndarray:
    """The position of each of ``values`` in the sorted ``uniques``, -1 where it is not there.
    Whole numbers in a dense range are looked up in a table (one gather), others by bisection."""
    values = np.asarray(values)
    if uniques.size == 0:
        return np.full(values.size, -1, dtype=np.int64)
    if uniques.dtype.kind in "iu" and values.dtype.kind in "iu":
        low, high = int(uniques[0]), int(uniques[-1])
        if high - low < 4 * uniques.size + 1024:
            dense = np.full(high - low + 1, -1, dtype=np.int64)
            dense[uniques.astype(np.int64) - low] = np.arange(uniques.size)
            if values.size and values.min() >= low and values.max() <= high:
                return dense[values - low]                    # every value in range: one gather
            inside = (values >= low) & (values <= high)
            out = np.full(values.size, -1, dtype=np.int64)
            out[inside] = dense[values[inside].astype(np.int64) - low]
            return out
    if uniques.dtype.kind != values.dtype.kind and "U" in (uniques.dtype.kind, values.dtype.kind):
        uniques, values = uniques.astype(str), values.astype(str)
    at = np.clip(np.searchsorted(uniques, values), 0, uniques.size - 1)
    return np.where(uniques[at] == values, at, -1).astype(np.int64)


def row_codes(columns: list[np.ndarray], against: list[np.ndarray] | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Codes that tell rows apart by all of ``columns`` together (equal rows, equal codes), and
    the codes of the rows of ``against`` (same columns) on the same scale, -1 for a row with no
    equal row in ``columns``. Codes combine column by column and are compacted before they
    could overflow."""
    n = columns[0].size if columns else 0
    codes, size = np.zeros(n, dtype=np.int64), 1
    other = None if against is None else np.zeros(np.asarray(against[0]).size, dtype=np.int64)
    for j, column in enumerate(columns):
        uniques, code = factorize(column)
        if size * max(uniques.size, 1) >= 2 ** 62:
            compact, codes = factorize(codes)
            if other is not None:
                other = np.where(other >= 0, lookup(compact, other), -1)
            size = compact.size
        codes = codes * uniques.size + code
        if other is not None:
            found = lookup(uniques, np.asarray(against[j]))
            other = np.where((found >= 0) & (other >= 0), other * uniques.size + found, -1)
        size *= max(uniques.size, 1)
    return codes, (np.empty(0, dtype=np.int64) if other is None else other)


def first_of_each(codes: np.ndarray) -> np.ndarray:
    """Mask of the rows whose code no earlier row has (the opposite of a repeat)."""
    first = np.zeros(codes.size, dtype=bool)
    if codes.size:
        first[np.unique(codes, return_index=True)[1]] = True
    return first


def numbers(values: np.ndarray) -> np.ndarray:
    """``values`` as floats, NaN where a value is not a number (text is parsed as Python's
    ``float`` reads it; an empty field is NaN)."""
    values = np.asarray(values)
    if values.dtype.kind in "biuf":
        return values.astype(float, copy=False)
    try:
        return values.astype(float)
    except (ValueError, TypeError):
        pass
    uniques, codes = factorize(values.astype(str))       # parse each distinct text once
    parsed = np.array([_number(u) for u in uniques.tolist()], dtype=float)
    return parsed[codes]


def _number(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        return np.nan


def is_missing(value) -> bool:
    """An empty field: None, NaN or blank text."""
    if value is None:
        return True
    if isinstance(value, (float, np.floating)):
        return bool(np.isnan(value))
    return isinstance(value, str) and not value.strip()


def text(values: np.ndarray) -> np.ndarray:
    """``values`` as stripped text (a unicode array)."""
    values = np.asarray(values)
    if values.dtype.kind in "iub":
        return values.astype(str)
    return np.char.strip(values.astype(str))


def missing(values: np.ndarray) -> np.ndarray:
    """Mask of empty fields: NaN, None or blank text."""
    values = np.asarray(values)
    if values.dtype.kind == "f":
        return np.isnan(values)
    if values.dtype.kind in "US":
        return np.char.str_len(np.char.strip(values)) == 0
    if values.dtype == object:
        gone = np.equal(values, None) | (values != values)          # None, or NaN (not equal to itself)
        return gone | (np.char.str_len(np.char.strip(values.astype(str))) == 0)
    return np.zeros(values.size, dtype=bool)


def count_missing(values: np.ndarray) -> int:
    """How many of ``values`` are empty fields; text is tested once per distinct value (a
    stripped copy of every row would cost more than the coding)."""
    values = np.asarray(values)
    if values.dtype.kind in "US":
        distinct, codes = factorize(values)
        empty = np.flatnonzero(missing(distinct))
        return int(np.count_nonzero(np.isin(codes, empty))) if empty.size else 0
    return int(np.count_nonzero(missing(values)))


def index_in(names, values: np.ndarray) -> np.ndarray:
    """For each of ``values``, its position in the list ``names`` (-1 when not there)."""
    names = np.asarray(list(names))
    order = np.argsort(names, kind="stable")
    found = lookup(names[order], values)
    return np.where(found >= 0, order[np.maximum(found, 0)], -1)
