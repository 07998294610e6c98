"""Compare figures with stored baselines, and two renders of a figure with each other:
RMS image difference (matplotlib.testing.compare), difference and side-by-side images, and
what changed in the source numbers."""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd


@dataclass(frozen=True)
class ImageResult:
    name: str
    rms: float | None          # None: sizes differ
    passed: bool
    message: str


def _rgb(data: bytes) -> np.ndarray:
    from PIL import Image

    return np.asarray(Image.open(io.BytesIO(data)).convert("RGB"), dtype=float)


def rms(expected: np.ndarray, actual: np.ndarray) -> float:
    """Root mean square difference over every pixel and RGB channel, on the 0-255 scale."""
    return float(np.sqrt(np.mean((expected - actual) ** 2)))


def difference_image(expected: np.ndarray, actual: np.ndarray) -> bytes:
    """The absolute difference of two same-sized images, stretched so the largest difference is
    white (black where equal), as PNG."""
    from PIL import Image

    diff = np.abs(expected - actual)
    top = diff.max()
    scaled = (diff * (255.0 / top) if top > 0 else diff).astype(np.uint8)
    buffer = io.BytesIO()
    Image.fromarray(scaled, "RGB").save(buffer, format="PNG")
    return buffer.getvalue()


def rms_difference(expected: Path, actual: Path, tolerance: float,
                   difference: Path | None = None) -> ImageResult:
    """Compare two PNGs by :func:`rms`; when they differ and ``difference`` is given, write the
    difference image there."""
    a, b = _rgb(Path(expected).read_bytes()), _rgb(Path(actual).read_bytes())
    name = Path(actual).name.split(".")[0]
    if a.shape != b.shape:
        return ImageResult(name, None, False, f"image sizes differ: {a.shape[1]}x{a.shape[0]} px "
                                              f"(baseline) and {b.shape[1]}x{b.shape[0]} px (new)")
    value = rms(a, b)
    if value <= tolerance:
        return ImageResult(name, value, True, f"RMS {value:.2f} <= tolerance {tolerance:g}")
    if difference is not None:
        Path(difference).write_bytes(difference_image(a, b))
    return ImageResult(name, value, False, f"RMS {value:.2f} > tolerance {tolerance:g}")


def side_by_side(old_png: bytes, new_png: bytes) -> tuple[bytes, bytes]:
    """(old | new) side by side, and their absolute difference (black where equal), as PNG."""
    from PIL import Image, ImageChops

    old = Image.open(io.BytesIO(old_png)).convert("RGB")
    new = Image.open(io.BytesIO(new_png)).convert("RGB")
    width, height = old.width + new.width + 20, max(old.height, new.height)
    pair = Image.new("RGB", (width, height), "white")
    pair.paste(old, (0, 0))
    pair.paste(new, (old.width + 20, 0))
    canvas = Image.new("RGB", (max(old.width, new.width), height), "white")
    a, b = canvas.copy(), canvas.copy()
    a.paste(old, (0, 0))
    b.paste(new, (0, 0))
    diff = ImageChops.difference(a, b)
    out = []
    for image in (pair, diff):
        buffer = io.BytesIO()
        image.save(buffer, format="PNG")
        out.append(buffer.getvalue())
    return out[0], out[1]


def table_changes(old: dict[str, pd.DataFrame], new: dict[str, pd.DataFrame]) -> list[str]:
    """Per source-data table: added or removed, changed shape or columns, and the largest
    change of each numeric column."""
    lines = []
    for name in sorted(set(old) | set(new)):
        if name not in old:
            lines.append(f"table {name}: added ({len(new[name])} rows)")
            continue
        if name not in new:
            lines.append(f"table {name}: removed")
            continue
        a, b = old[name], new[name]
        if list(a.columns) != list(b.columns):
            lines.append(f"table {name}: columns {list(a.columns)} -> {list(b.columns)}")
            continue
        if len(a) != len(b):
            lines.append(f"table {name}: {len(a)} -> {len(b)} rows")
            continue
        for column in a.columns:
            x, y = a[column], b[column]
            if pd.api.types.is_numeric_dtype(x) and pd.api.types.is_numeric_dtype(y):
                delta = np.abs(x.to_numpy(float) - y.to_numpy(float))
                both_nan = np.isnan(x.to_numpy(float)) & np.isnan(y.to_numpy(float))
                delta = np.where(both_nan, 0.0, delta)
                if np.nan_to_num(delta, nan=np.inf).max(initial=0.0) > 0:
                    changed = int((np.nan_to_num(delta, nan=np.inf) > 0).sum())
                    lines.append(f"table {name}: {column}: {changed} values changed, largest by "
                                 f"{np.nan_to_num(delta, nan=np.inf).max():.6g}")
            elif not x.equals(y):
                lines.append(f"table {name}: {column}: {int((x != y).sum())} values changed")
    return lines
