"""Write figures and source-data tables: atomically, with no dates, byte-stable."""

from __future__ import annotations

import io
import os
import re
import tempfile
from pathlib import Path
from typing import TYPE_CHECKING

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


def figure_bytes(fig: "Figure", fmt: str, dpi: int, software: str, provenance: str = "") -> bytes:
    """Render ``fig`` to bytes with metadata that holds no date, so the bytes are stable, and
    the ``provenance`` line (hashes of spec, data and style) where each format keeps text."""
    metadata = {
        "svg": {"Date": None, "Creator": software, "Description": provenance},
        "pdf": {"CreationDate": None, "ModDate": None, "Creator": software, "Producer": software,
                "Subject": provenance},
        "png": {"Software": software, "Description": provenance},
    }[fmt]
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=dpi, metadata=metadata)
    data = buffer.getvalue()
    return stable_svg_ids(data) if fmt == "svg" else data


CLIP_ID = re.compile(rb"\bp[0-9a-f]{10}\b")


def stable_svg_ids(svg: bytes) -> bytes:
    """Number matplotlib's clip-path ids in order of appearance. Some are derived from object
    ids in memory, which differ between processes and would change the bytes of one figure."""
    mapping: dict[bytes, bytes] = {}
    for found in re.finditer(rb'id="(p[0-9a-f]{10})"', svg):
        mapping.setdefault(found.group(1), b"clip%d" % (len(mapping) + 1))
    return CLIP_ID.sub(lambda m: mapping.get(m.group(0), m.group(0)), svg)


def table_bytes(table: pd.DataFrame) -> bytes:
    """A tidy table as CSV with a header row (``\\n`` line ends, full float precision)."""
    return table.to_csv(index=False, lineterminator="\n", float_format="%.10g").encode()


def write_all(payload: dict[Path, bytes]) -> list[Path]:
    """Write every file as a set: all contents go to temporary files beside their targets
    first, and only when all are written are they renamed into place. A failure before that
    leaves every previous output untouched (and no temporary file behind)."""
    staged: list[tuple[str, Path]] = []
    try:
        for path, data in payload.items():
            path.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
            staged.append((tmp, path))
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
    except BaseException:
        for tmp, _ in staged:
            Path(tmp).unlink(missing_ok=True)
        raise
    for tmp, path in staged:
        os.replace(tmp, path)
    return list(payload)
