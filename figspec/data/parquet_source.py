"""Parquet source (optional extra ``parquet``): spike and trial tables as Apache Parquet files,
read with pyarrow: only the mapped columns, and for the spike table only the row groups that
can hold the units the spec uses (a filter pushed down to the row-group statistics)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from figspec.data.columns import Plan, missing_columns
from figspec.data.csv_source import check_file
from figspec.data.table import Table
from figspec.errors import DataError, Loc, Problem
from figspec.optional import require
from figspec.spec.sources import ParquetSource


def read(src: ParquetSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None],
         units: set[str] | None = None) -> tuple[Table, Table | None]:
    spike_plan, trial_plan = plans
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",), loc,
                        units if src.unit_name is None else None)
    trials = read_table(folder / src.trials, trial_plan, loc + ("trials",), loc) if trial_plan and src.trials else None
    return spikes, trials


def read_table(path: Path, wanted: Plan, file_loc: Loc, src_loc: Loc, units: set[str] | None = None) -> Table:
    pq = require("pyarrow.parquet", "format = 'parquet'", src_loc + ("format",))
    check_file(path, file_loc)
    try:
        schema = pq.read_schema(path)
    except Exception as err:          # pyarrow raises its own types for files of another format
        raise DataError(Problem(f"cannot read {path} as Parquet ({type(err).__name__}: is it a Parquet file?)",
                                file_loc)) from None
    problems = missing_columns(list(schema.names), wanted, str(path))
    if problems:
        raise DataError(problems)
    columns = sorted({c for c, _ in wanted.values()})
    filters = None
    if units is not None and "unit" in wanted:
        column = wanted["unit"][0]
        typed = [int(u) if schema.field(column).type.__str__().startswith(("int", "uint")) and u.lstrip("-").isdigit()
                 else u for u in sorted(units)]
        filters = [(column, "in", typed)]
    table = pq.read_table(path, columns=columns, filters=filters)
    if table.num_rows == 0 and filters is None:
        raise DataError(Problem(f"{path} has no rows", file_loc))
    pa = require("pyarrow", "format = 'parquet'", src_loc + ("format",))
    arrays = {column: _numpy(pa, table.column(column)) for column in columns}
    out = Table({canonical: arrays[column] for canonical, (column, _) in wanted.items()})
    if "unit" in out and out["unit"].dtype.kind in "biuf":
        out = out.with_columns({"unit": out["unit"].astype(str)})   # unit names are text; keys keep their type
    return out


def _numpy(pa, column) -> np.ndarray:
    """A pyarrow column as numpy: dictionary-encoded (categorical) columns decoded, text as a
    unicode array, nulls as NaN (numbers) or None (text, which the assembly reports)."""
    if pa.types.is_dictionary(column.type):
        column = column.cast(column.type.value_type)
    if pa.types.is_integer(column.type) and column.null_count:
        column = column.cast(pa.float64())
    if (pa.types.is_string(column.type) or pa.types.is_large_string(column.type)) and not column.null_count:
        coded = column.dictionary_encode().combine_chunks()       # text as codes: no Python string per row
        return coded.dictionary.to_numpy(zero_copy_only=False).astype(str)[coded.indices.to_numpy()]
    return column.to_numpy()
