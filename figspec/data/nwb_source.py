"""NWB source (optional extra ``nwb``): a Neurodata Without Borders file read with pynwb.

Spikes come from the units table's flat ``spike_times`` with its ragged ``spike_times_index``
(cumulative end indices, an unsigned type: cast before subtracting), unit names from a chosen
column or the unit id. Trials come from the trials table: ``start_time``, ``stop_time`` and the
mapped columns. NWB times are seconds on the session clock, so spikes are assigned to trials by
time. Arrays are read inside the open file (the data are lazy)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from figspec.data.csv_source import check_file
from figspec.data.table import Table
from figspec.errors import DataError, Loc, Problem
from figspec.optional import require
from figspec.spec.sources import NwbSource


def read(src: NwbSource, folder: Path, loc: Loc, plans=None, units=None) -> tuple[Table, Table]:
    pynwb = require("pynwb", "format = 'nwb'", loc + ("format",))
    path = folder / src.file
    check_file(path, loc + ("file",))
    try:
        with pynwb.NWBHDF5IO(str(path), "r") as io:
            nwb = io.read()
            return _spikes(nwb, src, path, loc), _trials(nwb, src, path, loc)
    except DataError:
        raise
    except Exception as err:          # h5py and hdmf raise many types for a file that is not NWB
        raise DataError(Problem(f"cannot read {path} as NWB ({type(err).__name__}: {str(err)[:120]})",
                                loc + ("file",))) from None


def _spikes(nwb, src: NwbSource, path: Path, loc: Loc) -> Table:
    if nwb.units is None:
        raise DataError(Problem(f"{path} has no units table (spike times)", loc + ("file",)))
    times = np.asarray(nwb.units.spike_times.data[:], dtype=float)
    ends = np.asarray(nwb.units.spike_times_index.data[:]).astype(np.int64)
    counts = np.diff(np.r_[0, ends])
    if src.unit_names is None:
        names = [str(i) for i in nwb.units.id[:]]
    elif src.unit_names in nwb.units.colnames:
        names = [str(v) for v in nwb.units[src.unit_names].data[:]]
    else:
        raise DataError(Problem(f"the units table of {path} has no column {src.unit_names!r}",
                                loc + ("unit_names",), f"columns: {', '.join(nwb.units.colnames)}"))
    return Table({"unit": np.repeat(np.asarray(names, dtype=str), counts), "time": times})


def _trials(nwb, src: NwbSource, path: Path, loc: Loc) -> Table:
    if nwb.trials is None:
        raise DataError(Problem(f"{path} has no trials table", loc + ("file",)))
    table = nwb.trials
    tc = src.trial_columns
    wanted = {"level": (tc.level, ("level",)), "onset": (tc.onset, ("onset",)), "offset": (tc.offset, ("offset",))}
    wanted.update({f"event:{k}": (v, ("events", k)) for k, v in tc.events.items()})
    wanted.update({f"where:{c}": (c, None) for c in src.keep.where})
    columns = set(table.colnames)
    problems = [Problem(f"the trials table of {path} has no column {column!r}",
                        loc + (("trial_columns",) + key if key else ("keep", "where", column)),
                        f"columns: {', '.join(table.colnames)}")
                for name, (column, key) in wanted.items() if column is not None and column not in columns]
    if problems:
        raise DataError(problems)
    out = {"key0": np.asarray(table.id[:]), "start": np.asarray(table["start_time"].data[:], dtype=float),
           "stop": np.asarray(table["stop_time"].data[:], dtype=float)}
    out.update({name: np.asarray(table[column].data[:]) for name, (column, _) in wanted.items() if column is not None})
    return Table(out)
