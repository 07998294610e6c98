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
                   difference: Path | None = None, names: tuple[str, str] = ("baseline", "new")) -> ImageResult:
    """Compare two PNGs by :func:`rms`; when they differ and ``difference`` is given, write the
    difference image there."""
    a, b = _rgb(Path(expected).read_bytes()), _rgb(Path(actual).read_bytes())
    name = Path(actual).name.split(".")[0]
    if a.shape != b.shape:
        return ImageResult(name, None, False, f"image sizes differ: {a.shape[1]}x{a.shape[0]} px "
                                              f"({names[0]}) and {b.shape[1]}x{b.shape[0]} px ({names[1]})")
    value = rms(a, b)
    if value <= tolerance:
        return ImageResult(name, value, True, f"RMS {value:.2f} <= tolerance {tolerance:g}")
    if difference is not None:
        from figspec.output.safe_write import write_bytes

        write_bytes(difference, difference_image(a, b))
    return ImageResult(name, value, False, f"RMS {value:.2f} > tolerance {tolerance:g}")


def _label_font(height: int):
    from PIL import ImageFont

    try:
        return ImageFont.load_default(size=max(12, height))     # Pillow >= 10.1: a scalable font
    except TypeError:
        return ImageFont.load_default()


def side_by_side(old_png: bytes, new_png: bytes, old_label: str = "old", new_label: str = "new") -> tuple[bytes, bytes]:
    """(old | new) side by side under their labels, and their absolute difference (black where
    equal), as PNG."""
    from PIL import Image, ImageChops, ImageDraw

    old = Image.open(io.BytesIO(old_png)).convert("RGB")
    new = Image.open(io.BytesIO(new_png)).convert("RGB")
    band = max(24, old.height // 30)
    width, height = old.width + new.width + 20, max(old.height, new.height) + band
    pair = Image.new("RGB", (width, height), "white")
    pair.paste(old, (0, band))
    pair.paste(new, (old.width + 20, band))
    draw, font = ImageDraw.Draw(pair), _label_font(int(band * 0.7))
    draw.text((4, band * 0.12), old_label, fill="black", font=font)
    draw.text((old.width + 24, band * 0.12), new_label, fill="black", font=font)
    canvas = Image.new("RGB", (max(old.width, new.width), max(old.height, new.height)), "white")
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


# Columns that name a row rather than measure it: rows of two versions of a table are matched on
# those of them both versions have (a spike is also named by its time).
ROW_KEYS = ("unit", "level", "trial", "row", "bin_start_ms", "bin_stop_ms", "model", "quantity", "time_ms")


@dataclass(frozen=True)
class ColumnChange:
    """One column's changes among the rows both versions have."""

    column: str
    changed: int                 # rows whose value differs
    largest: float | None        # largest absolute change (None for text columns)
    at: str                      # the row of the largest change, by its key columns


@dataclass(frozen=True)
class TableDiff:
    """What changed in one source-data table between two versions of a figure."""

    name: str
    status: str                  # added | removed | columns | same | changed
    rows_old: int
    rows_new: int
    keys: tuple[str, ...] = ()
    added: pd.DataFrame | None = None      # rows only in the new version
    removed: pd.DataFrame | None = None    # rows only in the old version
    columns: tuple[ColumnChange, ...] = ()
    note: str = ""

    def lines(self) -> list[str]:
        """The plain-text summary lines of this table's changes (none when it is the same)."""
        head = f"table {self.name}"
        if self.status == "added":
            return [f"{head}: added ({self.rows_new} rows)"]
        if self.status == "removed":
            return [f"{head}: removed (had {self.rows_old} rows)"]
        if self.status == "columns":
            return [f"{head}: {self.note}"]
        out = []
        if self.added is not None and len(self.added):
            out.append(f"{head}: {len(self.added)} rows added (of {self.rows_new})")
        if self.removed is not None and len(self.removed):
            out.append(f"{head}: {len(self.removed)} rows removed (of {self.rows_old})")
        for c in self.columns:
            largest = f", largest by {c.largest:.6g}" if c.largest is not None else ""
            out.append(f"{head}: {c.column}: {c.changed} values changed{largest} (at {c.at})")
        return out


def _row_name(row: pd.Series, keys: tuple[str, ...]) -> str:
    return ", ".join(f"{k} {row[k]:g}" if isinstance(row[k], float) else f"{k} {row[k]}" for k in keys) or "row"


def table_diff(name: str, old: pd.DataFrame | None, new: pd.DataFrame | None) -> TableDiff:
    """Match the rows of two versions of a table on their key columns (:data:`ROW_KEYS`; all
    columns when those do not name rows uniquely) and report rows added and removed and, per
    column, how many values changed and the largest change with the row it is in."""
    if old is None:
        return TableDiff(name, "added", 0, len(new))
    if new is None:
        return TableDiff(name, "removed", len(old), 0)
    if list(old.columns) != list(new.columns):
        return TableDiff(name, "columns", len(old), len(new),
                         note=f"columns {list(old.columns)} -> {list(new.columns)}")
    keys = tuple(k for k in ROW_KEYS if k in old.columns)
    if not keys or old.duplicated(list(keys)).any() or new.duplicated(list(keys)).any():
        keys = tuple(old.columns)
    key_list = list(keys)
    a, b = old.reset_index(drop=True), new.reset_index(drop=True)

    def named(frame: pd.DataFrame, row: str) -> pd.DataFrame:   # key columns as text (one dtype for both)
        out = frame[key_list].astype("string").fillna("<NA>")
        out.columns = [f"k{i}" for i in range(len(key_list))]
        return out.assign(**{row: np.arange(len(frame))})

    merged = named(a, "_old").merge(named(b, "_new"), on=[f"k{i}" for i in range(len(key_list))],
                                    how="outer", indicator=True)
    added = b.loc[np.sort(merged.loc[merged["_merge"] == "right_only", "_new"].astype(int).to_numpy())]
    removed = a.loc[np.sort(merged.loc[merged["_merge"] == "left_only", "_old"].astype(int).to_numpy())]
    both = merged[merged["_merge"] == "both"]
    common_a = a.iloc[both["_old"].astype(int).to_numpy()].reset_index(drop=True)
    common_b = b.iloc[both["_new"].astype(int).to_numpy()].reset_index(drop=True)
    changes = []
    for column in (c for c in a.columns if c not in keys):
        x, y = common_a[column], common_b[column]
        if pd.api.types.is_numeric_dtype(x) and pd.api.types.is_numeric_dtype(y) and not pd.api.types.is_bool_dtype(x):
            xf, yf = x.to_numpy(float), y.to_numpy(float)
            delta = np.where(np.isnan(xf) & np.isnan(yf), 0.0, np.nan_to_num(np.abs(xf - yf), nan=np.inf))
            if delta.size and delta.max() > 0:
                where = int(np.argmax(delta))
                changes.append(ColumnChange(column, int((delta > 0).sum()), float(delta[where]),
                                            _row_name(common_a.iloc[where], keys)))
        else:
            differs = ~((x == y) | (x.isna() & y.isna())).to_numpy(bool)
            if differs.any():
                changes.append(ColumnChange(column, int(differs.sum()), None,
                                            _row_name(common_a.iloc[int(np.argmax(differs))], keys)))
    same = not len(added) and not len(removed) and not changes
    return TableDiff(name, "same" if same else "changed", len(a), len(b), keys, added, removed, tuple(changes))


def table_diffs(old: dict[str, pd.DataFrame], new: dict[str, pd.DataFrame]) -> list[TableDiff]:
    """:func:`table_diff` of every table in either version, by name."""
    return [table_diff(name, old.get(name), new.get(name)) for name in sorted(set(old) | set(new))]


def table_changes(old: dict[str, pd.DataFrame], new: dict[str, pd.DataFrame]) -> list[str]:
    """Plain-text lines of what changed in each source-data table (nothing for equal tables)."""
    return [line for d in table_diffs(old, new) for line in d.lines()]
