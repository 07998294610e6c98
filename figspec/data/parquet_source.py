"""Parquet source: spike and trial tables as Apache Parquet files, read through Arrow's dataset
API (``pyarrow.dataset``): only the mapped columns, the unit filter pushed down to the row
groups' statistics (row groups that cannot hold a unit the spec uses are never decoded), the
unit column read as a dictionary array (each name once, a code per spike), batch by batch."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from figspec.data.columns import Plan, missing_columns
from figspec.data.csv_source import check_file
from figspec.data.table import Coded, Table, whole_number
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import ParquetSource


def read(src: ParquetSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None],
         units: set[str] | None = None) -> tuple[Table, Table | None]:
    spike_plan, trial_plan = plans
    keep = units if (trial_plan is not None and src.unit_name is None) else None    # trials from spikes need all
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",), loc, keep)
    trials = read_table(folder / src.trials, trial_plan, loc + ("trials",), loc) if trial_plan and src.trials else None
    return spikes, trials


def scanner(path: Path, columns: list[str], unit_column: str | None, units: list | None):
    """Arrow's scanner of the file: the columns, the unit column as a dictionary array, and the
    filter ``unit_column in units`` pushed down to the row groups."""
    import pyarrow.dataset as ds

    # pre_buffer off and one batch read ahead: row groups are read one at a time, so memory follows
    # the rows kept (a 1e8-spike file with pre-buffering peaked near 1 GB for 1e6 rows kept; 0.2 GB without)
    fmt = ds.ParquetFileFormat(read_options={"dictionary_columns": [unit_column] if unit_column else []},
                               default_fragment_scan_options=ds.ParquetFragmentScanOptions(pre_buffer=False))
    dataset = ds.dataset(str(path), format=fmt)
    where = None if units is None else ds.field(unit_column).isin(units)
    return dataset.scanner(columns=columns, filter=where, use_threads=False, batch_readahead=1, fragment_readahead=1)


def read_table(path: Path, wanted: Plan, file_loc: Loc, src_loc: Loc, units: set[str] | None = None) -> Table:
    import pyarrow as pa
    import pyarrow.parquet as pq

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
    unit_column = wanted["unit"][0] if "unit" in wanted else None
    typed = None
    if units is not None and unit_column is not None:
        whole = pa.types.is_integer(schema.field(unit_column).type)
        typed = sorted(n for n in map(whole_number, units) if n is not None) if whole else sorted(units)
    try:
        table = scanner(path, columns, unit_column, typed).to_table()
    except (pa.ArrowException, OSError) as err:
        raise DataError(Problem(f"cannot read {path} as Parquet ({type(err).__name__}: "
                                f"{str(err).strip().splitlines()[0][:160] if str(err).strip() else 'unreadable'})",
                                file_loc)) from None
    if typed is not None and not whole and _missing_units(table, unit_column, typed):
        # a name stored with surrounding spaces (" u1 ") escapes the pushed-down filter: read every
        # row group's units, so the names are matched as every format matches them (stripped)
        try:
            table = scanner(path, columns, unit_column, None).to_table()
        except (pa.ArrowException, OSError) as err:
            raise DataError(Problem(f"cannot read {path} as Parquet ({type(err).__name__})", file_loc)) from None
    if table.num_rows == 0 and typed is None:
        raise DataError(Problem(f"{path} has no rows", file_loc))
    arrays = {column: _numpy(pa, table.column(column), column == unit_column) for column in columns}
    out = Table({canonical: arrays[column] for canonical, (column, _) in wanted.items()})
    return out


def _missing_units(table, unit_column: str, wanted: list) -> bool:
    """Whether a wanted unit has no row among those read."""
    import pyarrow.compute as pc

    found = {str(v).strip() for v in pc.unique(table.column(unit_column)).to_pylist() if v is not None}
    return any(str(u).strip() not in found for u in wanted)


def _numpy(pa, column, is_unit: bool):
    """A pyarrow column as numpy: the unit column as a :class:`Coded` column of text (numbers as
    names), text as a unicode array through its dictionary (no Python string per row), nulls as
    NaN (numbers) or empty text (which the assembly reports)."""
    if is_unit or pa.types.is_string(column.type) or pa.types.is_large_string(column.type) \
            or pa.types.is_dictionary(column.type):
        if len(column) == 0:
            coded = Coded(np.array([""]), np.empty(0, dtype=np.int64))
        else:
            if not pa.types.is_dictionary(column.type):
                column = column.dictionary_encode()
            column = column.unify_dictionaries().combine_chunks()
            values = column.dictionary.to_pylist()
            names = np.array(["" if v is None else str(v) for v in values] + [""], dtype=str)
            coded = Coded(names, column.indices.fill_null(len(values)).to_numpy(zero_copy_only=False))
        return coded if is_unit else coded.decoded()
    if pa.types.is_integer(column.type) and column.null_count:
        column = column.cast(pa.float64())
    return column.to_numpy()
