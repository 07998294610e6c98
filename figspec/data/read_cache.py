"""One read per build: when several specs of one build read the same data file with the same
plan, the first to need it parses it and keeps the canonical tables on disk; the others (in the
same process or in other worker processes) load those instead of parsing again.

Where: ``OUTDIR/.figspec-read-cache/`` (figspec's own folder; ``figspec render`` sets it up only
when two or more specs of the build read one data file, and removes it when the build ends, so
it lives for one build). An entry is a folder named by the sha256 of the read's description
(format, the file contents' sha256, the reading keys of the source and the columns planned)
holding one ``.npy`` per column, memory-mapped when loaded. A change to a data file's bytes or to
how it is read gives another key, so a stale entry is never used.

The entry holds every unit's rows; each spec then keeps the units it uses.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import shutil
import time
from pathlib import Path
from typing import Callable, Iterator

import numpy as np

from figspec.data.table import Coded, Table

FOLDER = ".figspec-read-cache"
FORMATS = ("csv", "parquet")          # formats whose parse is worth keeping (NWB and .npy are read lazily)
WAIT_S = 600.0                        # how long a process waits for another to finish the same entry

_active: dict = {"folder": None, "shared": frozenset()}
_digests: dict[tuple, str] = {}


@contextlib.contextmanager
def use(folder: str | Path | None, shared: frozenset[str] = frozenset()) -> Iterator[None]:
    """Keep reads of the files ``shared`` (resolved paths) in ``folder`` while the block runs."""
    before = dict(_active)
    _active.update(folder=None if folder is None else Path(folder), shared=frozenset(shared))
    try:
        yield
    finally:
        _active.update(before)


def applies(fmt: str, paths: list[Path]) -> bool:
    """Whether a read of ``paths`` in format ``fmt`` goes through the cache now."""
    return (_active["folder"] is not None and fmt in FORMATS
            and any(str(Path(p).resolve()) in _active["shared"] for p in paths))


def digest(path: Path) -> str:
    """sha256 of a file's bytes (once per process for each size and modification time)."""
    stat = os.stat(path)
    key = (str(Path(path).resolve()), stat.st_size, stat.st_mtime_ns)
    if key not in _digests:
        sha = hashlib.sha256()
        with open(path, "rb") as handle:
            for block in iter(lambda: handle.read(1 << 22), b""):
                sha.update(block)
        _digests[key] = sha.hexdigest()
    return _digests[key]


def cached(description: dict, paths: list[Path], read: Callable[[], tuple]) -> tuple:
    """``read()`` (a pair of Tables, the second may be None), or the same pair kept by an earlier
    read of the same description and file contents."""
    from figspec import __version__

    body = json.dumps({**description, "files": [digest(p) for p in paths], "figspec": __version__},
                      sort_keys=True, default=str)
    key = hashlib.sha256(body.encode()).hexdigest()[:32]
    root: Path = _active["folder"]
    entry = root / key
    if (entry / "done").is_file():
        return _load(entry)
    root.mkdir(parents=True, exist_ok=True)
    lock = root / f"{key}.lock"
    try:
        os.close(os.open(lock, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644))
    except FileExistsError:                     # another process is reading it: wait for its entry
        deadline = time.monotonic() + WAIT_S
        while time.monotonic() < deadline and lock.exists():
            if (entry / "done").is_file():
                return _load(entry)
            time.sleep(0.05)
        return read()
    try:
        frames = read()
        _store(frames, root, key)
        return frames
    finally:
        lock.unlink(missing_ok=True)


def _store(frames: tuple, root: Path, key: str) -> None:
    staging = root / f"{key}.{os.getpid()}.tmp"
    shutil.rmtree(staging, ignore_errors=True)
    staging.mkdir()
    meta = []
    for t, table in enumerate(frames):
        if table is None:
            meta.append(None)
            continue
        columns = []
        for i, name in enumerate(table.columns):
            column = table.raw(name)
            if isinstance(column, Coded):
                np.save(staging / f"{t}_{i}_values.npy", column.values, allow_pickle=False)
                np.save(staging / f"{t}_{i}_codes.npy", column.codes, allow_pickle=False)
                columns.append([name, "coded"])
            else:
                np.save(staging / f"{t}_{i}.npy", np.asarray(column), allow_pickle=False)
                columns.append([name, "plain"])
        meta.append({"rows": len(table), "columns": columns})
    (staging / "meta.json").write_text(json.dumps(meta))
    (staging / "done").write_text("")
    try:
        os.replace(staging, root / key)
    except OSError:                             # another process finished the same entry first
        shutil.rmtree(staging, ignore_errors=True)


def _load(entry: Path) -> tuple:
    meta = json.loads((entry / "meta.json").read_text())
    out = []
    for t, table in enumerate(meta):
        if table is None:
            out.append(None)
            continue
        columns = {}
        for i, (name, kind) in enumerate(table["columns"]):
            if kind == "coded":
                columns[name] = Coded(np.load(entry / f"{t}_{i}_values.npy", allow_pickle=False),
                                      np.load(entry / f"{t}_{i}_codes.npy", mmap_mode="r", allow_pickle=False))
            else:
                columns[name] = np.load(entry / f"{t}_{i}.npy", mmap_mode="r", allow_pickle=False)
        out.append(Table(columns, rows=table["rows"]))
    return tuple(out)


def keep_units(spikes: Table, units: set[str]) -> Table:
    """The rows of the units ``units`` (and rows with an empty unit, which the assembly reports)."""
    column = spikes.raw("unit")
    if not isinstance(column, Coded):
        return spikes
    names = np.char.strip(column.values.astype(str))
    wanted = np.isin(names, sorted(u.strip() for u in units)) | (np.char.str_len(names) == 0)
    return spikes.take(wanted[np.asarray(column.codes)])


def remove(folder: Path) -> None:
    """Remove the cache of a build that has ended (never following a link)."""
    root = Path(folder) / FOLDER
    if root.is_symlink():
        return
    if root.is_dir():
        shutil.rmtree(root, ignore_errors=True)
