"""Write figures and source-data tables: atomically, with no dates, byte-stable."""

from __future__ import annotations

import io
import os
import tempfile
from pathlib import Path
from typing import TYPE_CHECKING, Iterable

import pandas as pd

if TYPE_CHECKING:
    from matplotlib.figure import Figure


def write_atomic(path: Path, data: bytes) -> None:
    """Write ``data`` to a temporary file beside ``path`` and rename it into place, so a
    failed render never leaves a truncated file and the previous file survives until then."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def figure_bytes(fig: "Figure", fmt: str, dpi: int, software: str) -> bytes:
    """Render ``fig`` to bytes with metadata that holds no date, so the bytes are stable."""
    metadata = {
        "svg": {"Date": None, "Creator": software},
        "pdf": {"CreationDate": None, "ModDate": None, "Creator": software, "Producer": software},
        "png": {"Software": software},
    }[fmt]
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=dpi, metadata=metadata)
    return buffer.getvalue()


def table_bytes(table: pd.DataFrame) -> bytes:
    """A tidy table as CSV with a header row (``\\n`` line ends, full float precision)."""
    return table.to_csv(index=False, lineterminator="\n", float_format="%.10g").encode()


def save_all(fig: "Figure", stem: Path, formats: Iterable[str], dpi: int, software: str,
             tables: dict[str, pd.DataFrame]) -> list[Path]:
    """Render every format to memory first, then write each file atomically.

    Writes ``stem.<fmt>`` for each format and ``stem_data/<table>.csv`` for each table.
    Returns the paths written.
    """
    payload: dict[Path, bytes] = {}
    for fmt in formats:
        payload[stem.with_suffix(f".{fmt}")] = figure_bytes(fig, fmt, dpi, software)
    data_dir = stem.parent / f"{stem.name}_data"
    for name, table in tables.items():
        payload[data_dir / f"{name}.csv"] = table_bytes(table)
    for path, data in payload.items():
        write_atomic(path, data)
    return list(payload)
