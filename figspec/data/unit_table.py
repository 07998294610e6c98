"""A per-unit table (a spike sorter's labels and metrics: one row per unit) and the units it
chooses: ``keep_units`` keeps the units whose columns meet every condition (a value, a list of
values, a numeric range), so that a rerun of spike sorting needs no edit of the spec. Read by
Arrow (CSV, ``.tsv`` tab-separated, or Parquet)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from figspec.data.csv_source import check_file, plain
from figspec.data.keep import _matches, _range, shown
from figspec.errors import DataError, Loc, Problem
from figspec.spec.selection import Range

MAX_UNITS = 100_000


@dataclass(frozen=True)
class UnitChoice:
    """Which units a per-unit table chose: the rule as text, the table, the units kept (of
    those in the data), and how many units the data holds."""

    rule: str
    table: str
    kept: tuple[str, ...]
    of: int

    def sentence(self, source: str) -> str:
        return (f"Units of {source}: those with {self.rule} in {Path(self.table).name} "
                f"({len(self.kept)} of {self.of} units: {', '.join(self.kept[:12])}"
                f"{' ...' if len(self.kept) > 12 else ''}).")

    def record(self) -> dict:
        return {"rule": self.rule, "table": self.table, "kept": list(self.kept), "of": self.of}


def read_unit_table(path: Path, id_column: str, loc: Loc) -> dict[str, np.ndarray]:
    """Every column of the table as numpy (numbers, or stripped text), the id column as text."""
    import pyarrow as pa

    check_file(path, loc + ("file",))
    try:
        with open(path, "rb") as handle:
            parquet = handle.read(4) == b"PAR1"
        if parquet:
            import pyarrow.parquet as pq

            table = pq.read_table(path)
        else:
            import pyarrow.csv as pcsv

            delimiter = "\t" if path.suffix.lower() in (".tsv", ".tab") else ","
            table = pcsv.read_csv(path, parse_options=pcsv.ParseOptions(delimiter=delimiter),
                                  convert_options=pcsv.ConvertOptions(strings_can_be_null=False))
    except (pa.ArrowException, OSError) as err:
        first = str(err).strip().splitlines()[0][:160] if str(err).strip() else type(err).__name__
        raise DataError(Problem(f"cannot read the unit table {path}: {first}", loc + ("file",))) from None
    if id_column not in table.column_names:
        shown_columns = ", ".join(table.column_names[:12])
        raise DataError(Problem(f"column {id_column!r} not found in {path}", loc + ("id",), f"columns: {shown_columns}"))
    if table.num_rows > MAX_UNITS:
        raise DataError(Problem(f"{path} has {table.num_rows} rows; a unit table has at most {MAX_UNITS}",
                                loc + ("file",)))
    out = {}
    for name in table.column_names:
        column = table.column(name).combine_chunks()
        if (pa.types.is_integer(column.type) or pa.types.is_floating(column.type)) and not column.null_count:
            out[name] = plain(column).copy()
        elif pa.types.is_boolean(column.type) and not column.null_count:
            out[name] = np.array(column.to_pylist(), dtype=bool)
        else:
            out[name] = np.array(["" if v is None else str(v).strip() for v in column.to_pylist()], dtype=str)
    ids = out[id_column]
    out[id_column] = ids.astype(np.int64).astype(str) if ids.dtype.kind == "f" and np.all(ids == np.round(ids)) \
        else ids.astype(str)
    return out


def describe(rules: dict) -> str:
    return " and ".join(_range(c, column) if isinstance(c, Range) else f"{column} = {shown(c)}"
                        for column, c in rules.items())


def rows_meeting(table: dict[str, np.ndarray], rules: dict, path: Path, loc: Loc) -> np.ndarray:
    """Mask of the table's rows that meet every rule (an unknown column is an error)."""
    hit = np.ones(len(next(iter(table.values()))), dtype=bool)
    for column, condition in rules.items():
        if column not in table:
            raise DataError(Problem(f"column {column!r} not found in the unit table {path}", loc + ("keep_units", column),
                                    f"columns: {', '.join(list(table)[:12])}"))
        hit &= _matches(table[column], condition)
    return hit


def choose(ids: np.ndarray, meeting: np.ndarray, rules: dict, data_units: list[str], path: Path, loc: Loc,
           id_column: str) -> UnitChoice:
    """The units of ``data_units`` named by the table rows ``meeting`` marks (those that meet every
    rule, :func:`rows_meeting`); ``ids`` is the table's id column."""
    matched = np.isin(ids, data_units)
    if not matched.any():
        raise DataError(Problem(f"no unit id of {path} ({id_column!r}) matches a unit of the data",
                                loc + ("unit_table", "id"),
                                f"ids {', '.join(ids[:3].tolist())}; units {', '.join(data_units[:3])}"))
    chosen = set(ids[matched & meeting].tolist())
    kept = tuple(u for u in data_units if u in chosen)
    rule = describe(rules)
    if not kept:
        raise DataError(Problem(f"keep_units keeps no unit ({rule}; {int(matched.sum())} units of the data are in "
                                f"{path.name})", loc + ("keep_units",)))
    return UnitChoice(rule=rule, table=str(path), kept=kept, of=len(data_units))
