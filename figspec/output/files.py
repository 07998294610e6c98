"""Write figures and source-data tables as one set, with no dates, byte-stable."""

from __future__ import annotations

import io
import os
import re
from pathlib import Path
from typing import TYPE_CHECKING, Iterable


from figspec.draw.context import missing_glyphs, styled
from figspec.optional import deferred
from figspec.spec.style import Style

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

if TYPE_CHECKING:
    from matplotlib.figure import Figure


def figure_bytes(fig: "Figure", fmt: str, dpi: int, software: str, provenance: str = "") -> bytes:
    """Render ``fig`` to bytes with metadata that holds no date, so the bytes are stable, and
    the ``provenance`` line (hashes of spec, data and style) where each format keeps text."""
    if fmt in ("png", "tiff"):
        return raster_bytes(fig, fmt, dpi, software, provenance)
    metadata = {
        "svg": {"Date": None, "Creator": software, "Description": provenance},
        "pdf": {"CreationDate": None, "ModDate": None, "Creator": software, "Producer": software,
                "Subject": provenance},
        "eps": {"Creator": software},
    }[fmt]
    buffer = io.BytesIO()
    fig.savefig(buffer, format=fmt, dpi=dpi, metadata=metadata)
    data = buffer.getvalue()
    if fmt == "eps":            # the one date PostScript output carries: left out, so the bytes are stable
        data = re.sub(rb"%%CreationDate:[^\n]*\n", b"", data, count=1)
    return stable_svg_ids(data) if fmt == "svg" else data


def raster_bytes(fig: "Figure", fmt: str, dpi: int, software: str, provenance: str) -> bytes:
    """PNG or TIFF as journals take them: RGB without an alpha channel (the figure composited on
    white), at ``dpi``, lossless (PNG's deflate; TIFF with LZW compression), with the software and
    provenance in the file's text fields and no date."""
    from PIL import Image, PngImagePlugin

    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=dpi)
    rgba = Image.open(io.BytesIO(buffer.getvalue())).convert("RGBA")
    white = Image.new("RGBA", rgba.size, (255, 255, 255, 255))
    rgb = Image.alpha_composite(white, rgba).convert("RGB")
    out = io.BytesIO()
    if fmt == "png":
        info = PngImagePlugin.PngInfo()
        info.add_text("Software", software)
        info.add_text("Description", provenance)
        rgb.save(out, format="PNG", pnginfo=info, dpi=(dpi, dpi))
    else:
        rgb.save(out, format="TIFF", compression="tiff_lzw", dpi=(dpi, dpi),
                 tiffinfo={305: software, 270: provenance})
    return out.getvalue()


def figure_files(fig: "Figure", style: Style, formats: Iterable[str], dpi: int, software: str,
                 provenance: str = "") -> dict[str, bytes]:
    """``{format: bytes}`` of a drawn figure, rendered inside its style's context (tick labels
    and font embedding are settled when the file is written)."""
    # one layout for every format: the layout engine runs once, at the PNG's resolution, and is
    # then switched off, so the vector files and the PNG place every artist at the same spot
    # (a PNG baseline vouches for the SVG and PDF too)
    order = sorted(formats, key=lambda fmt: fmt != "png")
    with styled(style), missing_glyphs():
        lay_out_once(fig, dpi)
        return {fmt: figure_bytes(fig, fmt, dpi, software, provenance) for fmt in order}


def lay_out_once(fig: "Figure", dpi: int) -> None:
    """Run the figure's layout engine at ``dpi`` and freeze the result (a figure already frozen
    is left as it is)."""
    engine = fig.get_layout_engine()
    if engine is None or type(engine).__name__ == "PlaceHolderLayoutEngine":
        return
    own = fig.dpi
    fig.set_dpi(dpi)
    try:
        fig.draw_without_rendering()
    finally:
        fig.set_dpi(own)
    fig.set_layout_engine("none")


CLIP_ID = re.compile(rb"\bp[0-9a-f]{10}\b")


def stable_svg_ids(svg: bytes) -> bytes:
    """Number matplotlib's clip-path ids in order of appearance (some are derived from object
    ids in memory, which differ between processes and would change the bytes of one figure), and
    make every id unique: an id that repeats (the stimulus mark of every row) keeps its name the
    first time and gets ``-2``, ``-3`` ... after, in document order, so a vector editor finds each
    element by an id of its own instead of renaming repeats its own way."""
    mapping: dict[bytes, bytes] = {}
    for found in re.finditer(rb'id="(p[0-9a-f]{10})"', svg):
        mapping.setdefault(found.group(1), b"clip%d" % (len(mapping) + 1))
    svg = CLIP_ID.sub(lambda m: mapping.get(m.group(0), m.group(0)), svg)
    seen: dict[bytes, int] = {}
    taken = set(re.findall(rb' id="([^"]*)"', svg))

    def unique(match: re.Match) -> bytes:
        name = match.group(1)
        count = seen.get(name, 0) + 1
        seen[name] = count
        if count == 1:
            return match.group(0)
        new = b"%s-%d" % (name, count)
        while new in taken:
            count += 1
            new = b"%s-%d" % (name, count)
        taken.add(new)
        return b' id="' + new + b'"'

    return re.sub(rb' id="([^"]*)"', unique, svg)


def table_bytes(table: pd.DataFrame) -> bytes:
    """A tidy table as CSV with a header row (``\\n`` line ends). Floats are written as the
    shortest decimal that reads back to the same number (Python's repr), so values round-trip."""
    return table.to_csv(index=False, lineterminator="\n").encode()


def write_all(payload: dict[Path, bytes]) -> list[Path]:
    """Write files that are not a spec's output set (review images, baselines): each goes to a
    temporary file beside its target first and is renamed into place when all are written, so
    a failure leaves the previous files as they were. New files get the ordinary permissions
    (0666 less the umask); a file-system failure is an :class:`OutputError`."""
    from figspec.output.output_set import OutputError, output_problem, refuse_links

    staged: list[tuple[Path, Path]] = []
    try:
        for path, data in payload.items():
            refuse_links(path, path.parent)
            path.parent.mkdir(parents=True, exist_ok=True)
            tmp = path.parent / f".{path.name}.{os.getpid()}.{len(staged)}.partial"
            # O_EXCL: a name planted in advance (a link) is never opened
            fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0), 0o666)
            staged.append((tmp, path))
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
        for tmp, path in staged:
            os.replace(tmp, path)
    except OutputError:
        for tmp, _ in staged:
            tmp.unlink(missing_ok=True)
        raise
    except OSError as err:
        for tmp, _ in staged:
            tmp.unlink(missing_ok=True)
        raise output_problem(err, Path(err.filename) if err.filename else next(iter(payload))) from None
    except BaseException:
        for tmp, _ in staged:
            tmp.unlink(missing_ok=True)
        raise
    return list(payload)
