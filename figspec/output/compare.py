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


def rms_difference(expected: Path, actual: Path, tolerance: float) -> ImageResult:
    """Compare two PNGs; on a difference matplotlib writes ``<actual>-failed-diff.png``."""
    from matplotlib.testing.compare import compare_images
    from matplotlib.testing.exceptions import ImageComparisonFailure

    try:
        result = compare_images(str(expected), str(actual), tol=tolerance, in_decorator=True)
    except ImageComparisonFailure as err:     # different sizes
        return ImageResult(actual.stem, None, False, str(err).split("\n")[0])
    if result is None:
        return ImageResult(actual.stem, 0.0, True, "same within tolerance")
    return ImageResult(actual.stem, float(result["rms"]), False,
                       f"RMS {result['rms']:.2f} > tolerance {tolerance:g}")


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
