"""Reusable annotated field types (first tier of checks: one field at a time).

Every number in a spec is finite (``inf`` and ``nan`` are refused by :class:`Frozen`) and
bounded so that a figure stays renderable; the bounds are figspec's stated limits, listed in
:data:`LIMITS` and in the README.
"""

from __future__ import annotations

import unicodedata
from typing import Annotated, Union

from pydantic import AfterValidator, BaseModel, ConfigDict, Field

MAX_TIME_MS = 1e7          # about 2.8 h either side of the alignment point
MAX_BINS = 20_000          # bins of one histogram (window / bin width)
MAX_TICKS = 40             # tick marks on one axis
MAX_PANELS = 60            # [[panels]] in one spec
MAX_AXES = 400             # axes in one figure (panels x levels or units)
MAX_PIXELS = 60_000_000    # width x height of the PNG in pixels
MAX_TEXT = 300             # characters in one title or label

LIMITS = {
    "time (ms) from the alignment point": f"±{MAX_TIME_MS:g}",
    "bins per histogram": MAX_BINS,
    "ticks per axis": MAX_TICKS,
    "panels per spec": MAX_PANELS,
    "axes per figure": MAX_AXES,
    "PNG pixels (width × height)": f"{MAX_PIXELS:,}",
    "characters per title or label": MAX_TEXT,
}


class Frozen(BaseModel):
    """Base of every spec model: immutable, unknown keys are errors, numbers are finite."""

    model_config = ConfigDict(frozen=True, extra="forbid", populate_by_name=False, allow_inf_nan=False)


TimeMs = Annotated[float, Field(ge=-MAX_TIME_MS, le=MAX_TIME_MS, description="a time in ms")]
PositiveMs = Annotated[float, Field(gt=0, le=MAX_TIME_MS, description="a duration in ms, > 0")]
Millimetres = Annotated[float, Field(gt=0, le=2000, description="a length in mm")]
Points = Annotated[float, Field(gt=0, le=72, description="a size in points")]
Fraction = Annotated[float, Field(ge=0, le=1)]
Seed = Annotated[int, Field(ge=0, le=2**63 - 1)]
Level = Annotated[float, Field(ge=-1e12, le=1e12)]
Magnitude = Annotated[float, Field(gt=0, le=1e9)]    # a positive value on a data axis (y maximum, bar length)


def _ordered_window(value: tuple[float, float]) -> tuple[float, float]:
    start, stop = value
    if not start < stop:
        raise ValueError(f"the window must be [start, stop] with start < stop, got [{start:g}, {stop:g}]")
    return value


WindowMs = Annotated[tuple[TimeMs, TimeMs], AfterValidator(_ordered_window)]


def _identifier(value: str) -> str:
    if not value or not value.replace("_", "").replace("-", "").isalnum() or not value.isascii():
        raise ValueError("use letters, digits, '_' or '-' only")
    return value


Name = Annotated[str, Field(max_length=64), AfterValidator(_identifier)]


def control_characters(value: str) -> list[str]:
    """The characters of ``value`` that no SVG (XML 1.0) may hold, as ``U+0007``: control
    characters other than tab and line break, and the noncharacters U+FFFE and U+FFFF."""
    return [f"U+{ord(c):04X}" for c in value
            if (unicodedata.category(c) in ("Cc", "Cs") and c not in "\t\n") or c in "\ufffe\uffff"]


def _printable(value: str) -> str:
    bad = control_characters(value)
    if bad:
        raise ValueError(f"text may not hold control characters (found {', '.join(dict.fromkeys(bad))})")
    return value


class MathText(str):
    """Text the spec asked to be typeset as mathematics: ``{ math = "$\\mu$V" }``."""


class _MathTable(BaseModel):
    model_config = ConfigDict(frozen=True, extra="forbid")

    math: Annotated[str, Field(min_length=2, max_length=MAX_TEXT)]


def _text(value: "str | _MathTable") -> str:
    if isinstance(value, _MathTable):
        if value.math.count("$") % 2 or "$" not in value.math:
            raise ValueError("mathematical notation goes between pairs of '$', e.g. { math = \"$\\mu$V\" }")
        return MathText(_printable(value.math))
    if len(value) > MAX_TEXT:
        raise ValueError(f"text is at most {MAX_TEXT} characters (got {len(value)})")
    return _printable(value)


Text = Annotated[Union[str, _MathTable], AfterValidator(_text)]


def is_math(value: object) -> bool:
    """Whether ``value`` is text the spec asked to be typeset as mathematics."""
    return isinstance(value, MathText)


def math_pieces(model: BaseModel) -> list[str]:
    """Every text in ``model`` (and the models inside it) marked as mathematics."""
    found: list[str] = []

    def walk(value: object) -> None:
        if isinstance(value, MathText):
            found.append(str(value))
        elif isinstance(value, BaseModel):
            for name in type(value).model_fields:
                walk(getattr(value, name))
        elif isinstance(value, (list, tuple)):
            for item in value:
                walk(item)
        elif isinstance(value, dict):
            for item in value.values():
                walk(item)

    walk(model)
    return list(dict.fromkeys(found))


def _hex_colour(value: str) -> str:
    from figspec.spec.css_colours import CSS_COLOURS

    named = CSS_COLOURS.get(value.strip().lower())
    if named is not None:
        return named
    text = value.lstrip("#")
    if not value.startswith("#") or len(text) not in (6, 8) or any(c not in "0123456789abcdefABCDEF" for c in text):
        import difflib

        close = difflib.get_close_matches(value.lower(), CSS_COLOURS, n=1, cutoff=0.75)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise ValueError(f"a colour is a hex string like '#1f4e79' or a CSS colour name like 'steelblue'{hint}")
    return "#" + text.lower()


Colour = Annotated[str, AfterValidator(_hex_colour)]

# Sequential colour maps figspec offers for levels (names of matplotlib's maps; a test checks
# that each exists there). Named here so that ``check`` needs no matplotlib.
SEQUENTIAL_MAPS = ("viridis", "cividis", "magma", "inferno", "plasma", "Greys", "Blues", "Greens", "Oranges",
                   "Purples", "Reds", "YlOrBr", "YlGnBu", "PuBu", "BuPu", "OrRd")


def _colormap(value: str) -> str:
    if value not in SEQUENTIAL_MAPS:
        import difflib

        close = difflib.get_close_matches(value, SEQUENTIAL_MAPS, n=1, cutoff=0.5)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise ValueError(f"a sequential colour map, one of {', '.join(SEQUENTIAL_MAPS)}{hint}")
    return value


ColourMap = Annotated[str, AfterValidator(_colormap), Field(json_schema_extra={"enum": list(SEQUENTIAL_MAPS)})]
