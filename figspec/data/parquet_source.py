"""Parquet source (optional extra ``parquet``): spike and trial tables as Apache Parquet files,
read with pyarrow: only the mapped columns, and for the spike table only the row groups that
can hold the units the spec uses (a filter pushed down to the row-group statistics)."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from figspec.data.columns import Plan, missing_columns
from figspec.data.csv_source import check_file
from figspec.errors import DataError, Loc, Problem
from figspec.optional import require
from figspec.spec.sources import ParquetSource


def read(src: ParquetSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None],
         units: set[str] | None = None) -> tuple[pd.DataFrame, pd.DataFrame | None]:
    spike_plan, trial_plan = plans
    spikes = read_table(folder / src.spikes, spike_plan, loc + ("spikes",), loc,
                        units if src.unit_name is None else None)
    trials = read_table(folder / src.trials, trial_plan, loc + ("trials",), loc) if trial_plan and src.trials else None
    return spikes, trials


def read_table(path: Path, wanted: Plan, file_loc: Loc, src_loc: Loc, units: set[str] | None = None) -> pd.DataFrame:
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
    table = pq.read_table(path, columns=columns, filters=filters).to_pandas()
    if table.empty and filters is None:
        raise DataError(Problem(f"{path} has no rows", file_loc))
    out = pd.DataFrame({canonical: table[column] for canonical, (column, _) in wanted.items()})
    if "unit" in out and not pd.api.types.is_string_dtype(out["unit"]):
        out["unit"] = out["unit"].astype(str)      # unit names are text; keys keep their type (see assemble)
    return out
