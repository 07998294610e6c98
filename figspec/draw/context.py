"""What draw functions receive besides axes, table and panel; and the style applied only
inside a context, so nothing leaks between figures."""

from __future__ import annotations

import contextlib
import re
from dataclasses import dataclass
from typing import Iterator

from figspec.errors import FigspecWarning
from figspec.spec.models import LevelSpec, UnitsSpec
from figspec.spec.style import Style


@dataclass(frozen=True)
class DrawContext:
    """Figure-wide settings a draw function may read."""

    style: Style
    levels: LevelSpec
    units: "UnitsSpec | None" = None

    def unit_label(self, unit: str) -> str:
        """A unit's display name (``[units] names``), else its name in the data."""
        return self.units.label(unit) if self.units is not None else str(unit)


def check_fonts(style: Style) -> None:
    """Warn when the style's font is not installed: matplotlib would quietly fall back to
    DejaVu Sans, changing text widths and the layout."""
    import warnings

    from matplotlib import font_manager

    try:
        font_manager.findfont(font_manager.FontProperties(family=style.font.family), fallback_to_default=False)
    except ValueError:
        warnings.warn(f"font {style.font.family!r} is not installed, so text falls back to DejaVu Sans "
                      "(other widths, other line breaks). Install it, or a metric-compatible free font "
                      "(for Arial: Liberation Sans, Debian package fonts-liberation2), or use DejaVu Sans.",
                      FigspecWarning, stacklevel=3)


def group_key(repeat: str, value) -> float | str:
    """How repeated axes are keyed: levels as floats, units as strings."""
    return float(value) if repeat == "level" else str(value)


@contextlib.contextmanager
def styled(style: Style) -> Iterator[None]:
    """matplotlib settings of ``style`` from a clean default base, restored on exit."""
    import matplotlib as mpl

    with mpl.rc_context():
        mpl.rcdefaults()
        mpl.rcParams.update(style.rc())
        mpl.rcParams["text.parse_math"] = False      # text is literal: "$5 and $6" stays as written
        yield


GLYPH = re.compile(r"Glyph (\d+) \(.*?\) missing from font")


@contextlib.contextmanager
def missing_glyphs() -> Iterator[None]:
    """matplotlib's warnings about characters the font lacks, one per glyph and drawing, become
    one figspec warning naming the characters; other warnings pass through."""
    import warnings

    from figspec.errors import FigspecWarning

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", UserWarning)
        yield
    missing = sorted({chr(int(m.group(1))) for w in caught for m in [GLYPH.search(str(w.message))] if m})
    for w in caught:
        if not GLYPH.search(str(w.message)):
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    if missing:
        shown = " ".join(repr(c)[1:-1] if not c.isprintable() else c for c in missing[:10])
        warnings.warn(f"the font has no glyph for {len(missing)} character(s) in the text ({shown}), which print "
                      "as empty boxes: use a font that has them (font.family in the style)", FigspecWarning,
                      stacklevel=3)


def typeset_math(fig, pieces: list[str]) -> None:
    """Typeset the texts of ``fig`` that hold a piece the spec marked as mathematics
    (``{ math = "..." }``); any other '$' in such a text is escaped, so it stays literal."""
    import re

    from matplotlib.text import Text

    if not pieces:
        return
    pattern = re.compile("(" + "|".join(map(re.escape, sorted(pieces, key=len, reverse=True))) + ")")
    for text in fig.findobj(Text):
        content = text.get_text()
        parts = pattern.split(content)
        if len(parts) == 1:
            continue
        text.set_text("".join(part if i % 2 else part.replace("$", r"\$") for i, part in enumerate(parts)))
        text.set_parse_math(True)


@dataclass(frozen=True)
class Labels:
    """A panel kind's default title and axis labels (the spec's own win), and the unit of its
    y values (for a scale bar), from its tables."""

    title: str
    x: str | None = None
    y: str | None = None
    y_unit: str | None = None


SPARE = 1.34          # the axes' final size may exceed its grid share before layout by this much, at most
IMAGE_PPI = 300        # common practice (journal figure guides): embedded images at 300 pixels per inch or more


def repeats_for(ax, cells: int, side: str) -> int:
    """How many times each density cell is repeated so the embedded image has at least IMAGE_PPI
    pixels per inch at its size on the page (the cells stay the cells: each is a block of equal
    pixels, so a viewer's resampling cannot blur one into another). The layout engine has not run
    yet, so the axes' grid share is taken with a third to spare (a colour bar or labels may move
    it), never more than its whole subfigure."""
    import numpy as np

    sub = ax.get_figure(root=False)
    box = ax.get_position()
    whole = (sub.bbox.width if side == "width" else sub.bbox.height) / sub.dpi
    share = (box.width if side == "width" else box.height) * whole
    inches = min(whole, SPARE * share)

    return max(1, int(np.ceil(IMAGE_PPI * inches / max(cells, 1))))


def at_page_resolution(ax, grid):
    """An image's cells repeated (whole cells, nearest neighbour) so that it embeds at no fewer
    than IMAGE_PPI pixels per inch in the axes ``ax``: vector files carry it as the journals ask."""
    import numpy as np

    rows, cols = grid.shape[:2]
    return np.repeat(np.repeat(grid, repeats_for(ax, rows, "height"), axis=0), repeats_for(ax, cols, "width"), axis=1)
