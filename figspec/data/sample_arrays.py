"""Sorter's-folder source (``format = "sample_arrays"``): spike times as whole sample indices in
a ``.npy`` array, a parallel ``.npy`` array of unit ids, and a trial table (CSV) whose times are
on the same session clock. Arrays are memory-mapped (``numpy.load(mmap_mode="r")``, NumPy's
``.npy`` format: only the rows of the units a spec uses are copied) and never unpickled."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from figspec.data import csv_source
from figspec.data.columns import Plan
from figspec.data.table import Coded, Table
from figspec.errors import DataError, Loc, Problem
from figspec.spec.sources import SampleArraysSource

DENSE_IDS = 1 << 24          # integer unit ids spanning fewer values than this are coded by a table


def read(src: SampleArraysSource, folder: Path, loc: Loc, plans: tuple[Plan, Plan | None],
         units: set[str] | None = None) -> tuple[Table, Table]:
    base = folder / src.folder
    if not base.is_dir():
        raise DataError(Problem(f"{base} is not a folder" if base.exists() else f"folder not found: {base}",
                                loc + ("folder",)))
    samples = load_array(base / src.spike_samples, loc + ("spike_samples",))
    ids = load_array(base / src.spike_units, loc + ("spike_units",))
    if samples.shape != ids.shape:
        raise DataError(Problem(f"{src.spike_samples} holds {samples.size} spike times but {src.spike_units} "
                                f"{ids.size} unit ids: the two arrays must be parallel (one entry per spike)",
                                loc + ("spike_units",), str(base)))
    if samples.dtype.kind not in "iuf":
        raise DataError(Problem(f"{src.spike_samples} holds {samples.dtype} values, not sample indices",
                                loc + ("spike_samples",), str(base)))
    names, codes = unit_codes(ids, loc + ("spike_units",), base / src.spike_units)
    if units is not None:
        wanted = np.isin(names, sorted(u.strip() for u in units))
        keep = wanted[codes]
        samples, codes = samples[keep], codes[keep]
    else:
        samples = np.asarray(samples)
    spikes = Table({"unit": Coded(names, codes), "time": samples})
    trials = csv_source.read_table(folder / src.trials, plans[1], loc + ("trials",), src.delimiter, loc)
    return spikes, trials


def load_array(path: Path, file_loc: Loc) -> np.ndarray:
    """A one-dimensional array from a ``.npy`` file, memory-mapped; anything else is a user error."""
    csv_source.check_file(path, file_loc)
    with open(path, "rb") as handle:
        if handle.read(6) != b"\x93NUMPY":
            raise DataError(Problem(f"{path} is not a NumPy .npy array file (it does not begin as one)", file_loc))
    try:
        array = np.load(path, mmap_mode="r", allow_pickle=False)
    except (ValueError, OSError, EOFError) as err:
        raise DataError(Problem(f"{path} is not a NumPy .npy array file ({str(err).splitlines()[0][:120]})",
                                file_loc)) from None
    if not isinstance(array, np.ndarray) or array.ndim != 1:
        shape = getattr(array, "shape", "an archive")
        raise DataError(Problem(f"{path} must hold a one-dimensional array (one entry per spike)", file_loc,
                                f"shape {shape}"))
    return array


def unit_codes(ids: np.ndarray, loc: Loc, path: Path) -> tuple[np.ndarray, np.ndarray]:
    """(distinct unit ids as text, each spike's code into them). Integer ids in a modest range
    are coded by one table lookup (no sort of the spikes); others through ``np.unique``."""
    if ids.dtype.kind in "iu" and ids.size:
        low, high = int(ids.min()), int(ids.max())
        if high - low < DENSE_IDS:
            shifted = np.asarray(ids, dtype=np.int64) - low
            present = np.bincount(shifted, minlength=high - low + 1) > 0
            distinct = np.flatnonzero(present) + low
            return distinct.astype(str), (np.cumsum(present) - 1)[shifted]
    if ids.dtype.kind not in "iuUS":
        raise DataError(Problem(f"{path} holds {ids.dtype} values: unit ids are whole numbers or text", loc))
    distinct, codes = np.unique(np.asarray(ids), return_inverse=True)
    return np.char.strip(distinct.astype(str)), codes.reshape(-1)
