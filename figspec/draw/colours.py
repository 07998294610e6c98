"""Categorical colours: one palette colour per unit, and the artist naming that lets the
colour-vision check find which artists carry a category.

A draw function that colours an artist by category gives it the gid ``category:NAME``
(:func:`category_gid`); :func:`marked_categories` is the registry's default way of reading
them back. A kind that marks categories otherwise supplies its own reader.
"""

from __future__ import annotations

from typing import Iterable

from figspec.spec.style import Style

CATEGORY = "category:"
MAX_LIGHTNESS = 75.0       # CIELAB L*: lines lighter than this fade into white paper (common practice)


def lightness(rgb) -> "np.ndarray":
    """CIELAB L* of sRGB colours (..., 3) in 0-1 (IEC 61966-2-1 transfer, CIE 1976 L*)."""
    import numpy as np

    c = np.asarray(rgb, dtype=float)
    linear = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    y = linear @ np.array([0.2126, 0.7152, 0.0722])
    return np.where(y > (6 / 29) ** 3, 116 * np.cbrt(y) - 16, 116 * (y * (29 / 6) ** 2 / 3 + 4 / 29) - 16)


def visible_range(cmap, max_lightness: float = MAX_LIGHTNESS) -> tuple[float, float]:
    """The longest stretch of a sequential colour map, as (start, stop) in 0-1, whose colours
    are no lighter than ``max_lightness``: levels drawn as lines take their colours from it."""
    import numpy as np

    t = np.linspace(0.0, 1.0, 256)
    ok = lightness(cmap(t)[:, :3]) <= max_lightness
    best, start = (0, 0), None
    for i, good in enumerate(np.r_[ok, False]):
        if good and start is None:
            start = i
        elif not good and start is not None:
            best = max(best, (start, i - 1), key=lambda r: r[1] - r[0])
            start = None
    return float(t[best[0]]), float(t[best[1]])


def unit_colours(units: Iterable[str], style: Style) -> dict[str, str]:
    """The palette colour of each unit, in order, cycling when there are more units than colours."""
    palette = style.palette.units
    return {u: palette[i % len(palette)] for i, u in enumerate(dict.fromkeys(units))}


# marker shapes of the second, third ... pass through the palette, so a unit past the palette's
# length differs from the unit that shares its colour by shape (Tufte 1983: redundant encoding)
MARKERS = ("o", "s", "^", "D", "v", "P", "X")


def unit_markers(units: Iterable[str], style: Style) -> dict[str, str]:
    """The marker of each unit, in order: circles for the first pass through the palette, then
    squares, triangles ... so every (colour, marker) pair is distinct up to 7 palette lengths."""
    n = len(style.palette.units)
    return {u: MARKERS[(i // n) % len(MARKERS)] for i, u in enumerate(dict.fromkeys(units))}


def category_gid(name: str) -> str:
    return CATEGORY + str(name)


def marked_categories(artists: Iterable) -> dict[str, tuple]:
    """{category name: RGB} of the artists whose gid is ``category:NAME``."""
    from matplotlib.colors import to_rgb

    out: dict[str, tuple] = {}
    for artist in artists:
        gid = artist.get_gid() or ""
        if gid.startswith(CATEGORY):
            colour = artist.get_color() if hasattr(artist, "get_color") else artist.get_edgecolor()
            out[gid[len(CATEGORY):]] = to_rgb(colour)
    return out


LINE_DASHES = {"solid": "-", "dashed": "--", "dotted": ":", "dashdot": "-."}


def series(points, panel, style: Style, unit_label=str) -> list[tuple]:
    """The lines of a level-on-x panel: (name, rows, colour, marker, line, key label), one per unit,
    or per unit and condition in a panel split by conditions. Units take the palette's colours
    and markers; conditions take the spec's or the style's condition colours (one unit) and line
    styles (always), so colour never carries two meanings at once."""
    colours = unit_colours(points["unit"], style)
    markers = unit_markers(points["unit"], style)
    if "condition" not in points.columns:
        return [(str(u), rows, colours[u], markers[u], "-", unit_label(u))
                for u, rows in points.groupby("unit", sort=False)]
    names = list(dict.fromkeys(points["condition"]))
    looks = dict(zip(names, panel.conditions.looks(len(names), style.palette)))
    one = len(colours) == 1
    out = []
    for (u, cond), rows in points.groupby(["unit", "condition"], sort=False):
        colour, line = looks[cond]
        out.append((f"{u}:{cond}", rows, colour if one else colours[u], markers[u], LINE_DASHES[line],
                    str(cond) if one else f"{unit_label(u)}, {cond}"))
    return out
