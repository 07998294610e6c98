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


def unit_colours(units: Iterable[str], style: Style) -> dict[str, str]:
    """The palette colour of each unit, in order, cycling when there are more units than colours."""
    palette = style.palette.units
    return {u: palette[i % len(palette)] for i, u in enumerate(dict.fromkeys(units))}


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
