"""NWB source (optional extra ``nwb``): a Neurodata Without Borders 2.x file read lazily with
h5py, by the layout the NWB schema fixes: the units table at ``/units`` (``id``, the flat
``spike_times`` and its ragged ``spike_times_index`` of cumulative end indices, an unsigned type:
cast before subtracting) and the trials table at ``/intervals/trials`` (``id``, ``start_time``,
``stop_time`` and the lab's own columns). Only the spike times of the units a spec uses are read,
one slice per unit; nothing else of the file is loaded. NWB times are seconds on the session
clock, so spikes are assigned to trials by time."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from figspec.data.csv_source import check_file
from figspec.data.table import Coded, Table
from figspec.errors import DataError, Loc, Problem
from figspec.optional import require
from figspec.spec.sources import NwbSource

UNITS, TRIALS = "units", "intervals/trials"


def read(src: NwbSource, folder: Path, loc: Loc, plans=None, units: set[str] | None = None) -> tuple[Table, Table]:
    h5py = require("h5py", "format = 'nwb'", loc + ("format",))
    path = folder / src.file
    check_file(path, loc + ("file",))
    try:
        with h5py.File(path, "r") as nwb:
            return _spikes(nwb, src, path, loc, units), _trials(nwb, src, path, loc)
    except DataError:
        raise
    except Exception as err:          # h5py raises many types for a file that is not HDF5 or not NWB
        raise DataError(Problem(f"cannot read {path} as NWB ({type(err).__name__}: {str(err)[:120]})",
                                loc + ("file",))) from None


def _texts(dataset) -> np.ndarray:
    values = dataset[()]
    return np.array([v.decode("utf-8") if isinstance(v, bytes) else str(v) for v in values.tolist()], dtype=str)


def _spikes(nwb, src: NwbSource, path: Path, loc: Loc, units: set[str] | None) -> Table:
    table = nwb.get(UNITS)
    if table is None or "spike_times" not in table:
        raise DataError(Problem(f"{path} has no units table (spike times)", loc + ("file",)))
    ends = np.asarray(table["spike_times_index"][()]).astype(np.int64)
    starts = np.r_[0, ends[:-1]]
    if src.unit_names is None:
        names = _texts(table["id"])
    elif src.unit_names in table:
        names = np.char.strip(_texts(table[src.unit_names]))
    else:
        columns = [c for c in table if c not in ("id", "spike_times_index")]
        raise DataError(Problem(f"the units table of {path} has no column {src.unit_names!r}",
                                loc + ("unit_names",), f"columns: {', '.join(columns)}"))
    chosen = np.arange(names.size) if units is None else np.flatnonzero(np.isin(names, sorted(units)))
    times = table["spike_times"]
    parts = [np.asarray(times[starts[i]:ends[i]], dtype=float) for i in chosen]       # one slice per unit
    counts = np.array([p.size for p in parts], dtype=np.int64)
    codes = np.repeat(chosen, counts)
    return Table({"unit": Coded(names, codes), "time": np.concatenate(parts) if parts else np.empty(0)})


def _trials(nwb, src: NwbSource, path: Path, loc: Loc) -> Table:
    table = nwb.get(TRIALS)
    if table is None or "id" not in table:
        raise DataError(Problem(f"{path} has no trials table", loc + ("file",)))
    tc = src.trial_columns
    wanted = {"level": (tc.level, ("level",)), "onset": (tc.onset, ("onset",)), "offset": (tc.offset, ("offset",)),
              "start": (tc.start, ("start",)), "stop": (tc.stop or None, ("stop",)), "key0": (tc.trial, ("trial",))}
    wanted.update({f"event:{k}": (v, ("events", k)) for k, v in tc.events.items()})
    wanted.update({f"where:{c}": (c, None) for c in src.keep.where})
    columns = [c for c in table if c != "id" and not c.endswith("_index")]
    problems = [Problem(f"the trials table of {path} has no column {column!r}",
                        loc + (("trial_columns",) + key if key else ("keep", "where", column)),
                        f"columns: {', '.join(columns)}")
                for name, (column, key) in wanted.items() if column is not None and column not in table]
    if problems:
        raise DataError(problems)
    out = {"key0": np.asarray(table["id"][()])}
    for name, (column, _) in wanted.items():
        if column is None:
            continue
        values = np.asarray(table[column][()])
        out[name] = _texts(table[column]) if values.dtype.kind in "OSU" else values
    return Table(out)
