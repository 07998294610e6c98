"""Reading tables nobody has described yet, for ``figspec draft``: a CSV (any delimiter) or
Parquet table by its content, an NWB file's units and trials tables, and a spike sorter's folder
(``.npy`` sample indices and unit ids, and a per-unit table beside them)."""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pandas as pd

from figspec.data.csv_source import DELIMITER_NAMES, check_file
from figspec.data.survey_names import Table, UnitTableFound
from figspec.errors import DataError, Problem
from figspec.optional import require

ID_NAMES = ("unit_id", "cluster_id", "id", "unit", "cluster")
LABEL_NAMES = ("label", "group", "kslabel", "quality", "classification")


def sniff_delimiter(path: Path) -> str:
    """The delimiter of a text table, from its first lines (comma when unsure)."""
    with open(path, encoding="utf-8-sig", newline="") as handle:
        sample = handle.read(1 << 14)
    try:
        return csv.Sniffer().sniff(sample, delimiters="".join(DELIMITER_NAMES)).delimiter
    except csv.Error:
        return ","


def read_any(path: Path) -> Table:
    """Read every column of a CSV (any delimiter) or Parquet file, by its content."""
    path = Path(path)
    if path.is_dir():
        return read_folder(path)
    check_file(path, ())
    with open(path, "rb") as handle:
        magic = handle.read(8)
    if magic[:4] == b"PAR1":
        import pyarrow.parquet as pq

        return Table(path, "parquet", pq.read_table(path).to_pandas())
    if magic.startswith(b"\x89HDF"):
        raise DataError(Problem(file=str(path), message="an HDF5 file: give an NWB file alone (figspec draft FILE.nwb)"))
    try:
        delimiter = sniff_delimiter(path)
        frame = pd.read_csv(path, sep=delimiter, encoding="utf-8-sig")
    except (UnicodeDecodeError, pd.errors.ParserError, ValueError) as err:
        raise DataError(Problem(f"cannot read this as a CSV or Parquet table ({type(err).__name__})", file=str(path))) from None
    if frame.empty:
        raise DataError(Problem(file=str(path), message="no rows"))
    return Table(path, "csv", frame, delimiter)


def read_nwb(path: Path) -> tuple[Table, Table]:
    """The units table (one row per spike: unit, spike_times) and the trials table of an NWB
    file, under the NWB standard's column names."""
    pynwb = require("pynwb", f"reading {Path(path).name} (NWB)")
    check_file(Path(path), ())
    with pynwb.NWBHDF5IO(str(path), "r") as io:
        nwb = io.read()
        if nwb.units is None or nwb.trials is None:
            raise DataError(Problem(file=str(path), message="an NWB file needs a units table and a trials table"))
        ends = np.asarray(nwb.units.spike_times_index.data[:]).astype(np.int64)
        named = next((c for c in ("unit_name", "name", "label") if c in nwb.units.colnames), None)
        names = nwb.units[named].data[:] if named else nwb.units.id[:]
        spikes = pd.DataFrame({"unit": np.repeat(np.asarray([str(n) for n in names], dtype=object),
                                                 np.diff(np.r_[0, ends])),
                               "spike_times": np.asarray(nwb.units.spike_times.data[:], dtype=float)})
        trials = pd.DataFrame({c: np.asarray(nwb.trials[c].data[:]) for c in nwb.trials.colnames})
    return Table(Path(path), "nwb", spikes, unit_names=named), Table(Path(path), "nwb", trials)


def read_folder(path: Path) -> Table:
    """A spike sorter's folder: ``spike_samples.npy`` (or another ``*sample*.npy``/``*times*.npy``)
    and ``spike_units.npy`` (or ``*unit*``/``*cluster*.npy``), and a per-unit table (``.tsv``/``.csv``)."""
    from figspec.data.sample_arrays import load_array

    arrays = sorted(p.name for p in path.glob("*.npy"))
    times = next((n for n in arrays if "sample" in n or "time" in n), None)
    units = next((n for n in arrays if n != times and ("unit" in n or "cluster" in n)), None)
    if times is None or units is None:
        raise DataError(Problem(file=str(path), message="a sorter's folder holds a .npy array of spike samples and "
                                "one of unit ids (e.g. spike_samples.npy, spike_units.npy)",
                                got=f"arrays: {', '.join(arrays[:8]) or 'none'}"))
    samples, ids = load_array(path / times, ()), load_array(path / units, ())
    if samples.shape != ids.shape:
        raise DataError(Problem(file=str(path), message=f"{times} and {units} differ in length "
                                f"({samples.size} and {ids.size})"))
    frame = pd.DataFrame({"unit": np.asarray(ids).astype(str), "spike_sample": np.asarray(samples)})
    return Table(path, "sample_arrays", frame, unit_table=find_unit_table(path, set(frame["unit"].unique())),
                 unit_names=f"{times}|{units}")


def find_unit_table(folder: Path, units: set[str]) -> UnitTableFound | None:
    """The first ``.tsv``/``.csv`` table in ``folder`` with a column of ids matching the units."""
    for candidate in sorted(list(folder.glob("*.tsv")) + list(folder.glob("*.csv"))):
        try:
            frame = pd.read_csv(candidate, sep="\t" if candidate.suffix == ".tsv" else ",", dtype=str)
        except (ValueError, UnicodeDecodeError, pd.errors.ParserError):
            continue
        lower = {c.lower(): c for c in frame.columns}
        ids = next((lower[n] for n in ID_NAMES if n in lower and set(frame[lower[n]].str.strip()) & units), None)
        if ids is None:
            continue
        label = next((lower[n] for n in LABEL_NAMES if n in lower), None)
        counts = frame[label].str.strip().value_counts() if label else None
        labels = tuple((str(k), int(v)) for k, v in counts.items()) if counts is not None else ()
        labelled = tuple(zip(frame[ids].str.strip(), frame[label].str.strip())) if label else ()
        return UnitTableFound(candidate, ids, label, labels, labelled)
    return None
