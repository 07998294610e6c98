"""Journal check: a rendered figure and its files against a journal profile (its limits).

Each finding names the rule, the panel and the element, so it can be fixed where it is.
"""

from __future__ import annotations

import itertools
import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Callable

import numpy as np

from figspec.output.colour_vision import delta_e, simulate
from figspec.output.drawn import drawn_lines, drawn_texts, panel_of
from figspec.spec.journals import Profile

if TYPE_CHECKING:
    from matplotlib.figure import Figure

MM_PER_INCH = 25.4


@dataclass(frozen=True)
class Finding:
    rule: str
    panel: str
    element: str
    message: str

    def format(self, profile: Profile) -> str:
        where = "figure" if self.panel == "figure" else f"panel {self.panel!r}"
        return f"journal check {profile.name}: {self.rule}: {where}, {self.element}: {self.message}"


def journal_check(fig: "Figure", files: dict[str, bytes], profile: Profile,
                  categories: dict[str, Callable[[list], dict[str, tuple]]]) -> list[Finding]:
    """Every finding of ``profile``'s rules on a drawn ``fig`` and its rendered ``files``
    (format -> bytes). ``categories`` gives, per panel name, the function that reads the
    categorical colours off that panel's artists (its kind's, from the registry)."""
    findings = _size(fig, profile) + _text(fig, profile) + _lines(fig, profile)
    findings += _colours(categorical_colours(fig, categories), profile)
    findings += _fonts(files, profile) + _file_size(files, profile) + _images(fig, profile)
    return findings


def _images(fig, profile: Profile) -> list[Finding]:
    """Images embedded in the figure (a density raster) with fewer pixels per inch on the page
    than the profile asks: journals' checks flag them, and they print blocky."""
    from matplotlib.image import AxesImage

    out = []
    for image in fig.findobj(AxesImage):
        rows, cols = np.asarray(image.get_array()).shape[:2]
        box = image.get_window_extent()
        width_in, height_in = box.width / fig.dpi, box.height / fig.dpi
        if width_in <= 0 or height_in <= 0:
            continue
        ppi = min(cols / width_in, rows / height_in)
        if ppi < profile.min_image_ppi - 1e-6:
            out.append(Finding("image resolution", panel_of(image), image.get_gid() or "image",
                               f"{ppi:.0f} pixels per inch on the page, below {profile.min_image_ppi:g} "
                               f"({cols} x {rows} pixels over {width_in * MM_PER_INCH:.0f} x "
                               f"{height_in * MM_PER_INCH:.0f} mm)"))
    return out


def format_findings(formats, png_dpi: int, profile: Profile) -> list[Finding]:
    """The files the profile asks for that the render does not write, and a PNG or TIFF below
    the resolution it asks."""
    out = []
    missing = [f for f in profile.formats if f not in formats]
    if missing:
        out.append(Finding("formats", "figure", "files", f"the journal takes {', '.join(profile.formats)}; "
                                                          f"not written: {', '.join(missing)} (set figure.formats)"))
    if any(f in formats for f in ("png", "tiff")) and png_dpi < profile.min_png_dpi - 1e-9:
        out.append(Finding("resolution", "figure", "files", f"png_dpi = {png_dpi} is below the "
                                                            f"{profile.min_png_dpi:g} dpi the journal asks"))
    return out


def _size(fig, profile: Profile) -> list[Finding]:
    width, height = fig.get_size_inches() * MM_PER_INCH
    out = []
    if not any(abs(width - w) <= profile.width_tolerance_mm for w in profile.column_widths_mm):
        widths = ", ".join(f"{w:g}" for w in profile.column_widths_mm)
        out.append(Finding("width", "figure", "page", f"{width:.1f} mm is not a column width ({widths} mm, "
                                                      f"within {profile.width_tolerance_mm:g} mm)"))
    if height > profile.max_height_mm + 1e-9:
        out.append(Finding("height", "figure", "page", f"{height:.1f} mm is taller than {profile.max_height_mm:g} mm"))
    return out


def _text(fig, profile: Profile) -> list[Finding]:
    small: dict[tuple[str, float], list[str]] = {}
    for text in drawn_texts(fig):
        size = float(text.get_fontsize())
        if size < profile.min_text_pt - 1e-9:
            small.setdefault((panel_of(text), size), []).append(text.get_text().replace("\n", " "))
    return [Finding("text size", panel, f"text {', '.join(repr(t) for t in texts[:3])}"
                    + (f" and {len(texts) - 3} more" if len(texts) > 3 else ""),
                    f"{size:g} pt is below {profile.min_text_pt:g} pt")
            for (panel, size), texts in small.items()]


def _lines(fig, profile: Profile) -> list[Finding]:
    thin: dict[tuple[str, str], float] = {}
    for artist, what, width in drawn_lines(fig):
        if width < profile.min_line_pt - 1e-9:
            key = (panel_of(artist), what.split(":")[0])
            thin[key] = min(width, thin.get(key, width))
    return [Finding("line width", panel, what, f"{width:g} pt is below {profile.min_line_pt:g} pt")
            for (panel, what), width in thin.items()]


def categorical_colours(fig, categories: dict[str, Callable]) -> dict[str, dict[str, tuple]]:
    """Per panel (per axes, in a panel of several axes such as small multiples, where only the
    categories sharing one axes must be told apart), the colour of each category drawn with a
    palette colour."""
    out: dict[str, dict[str, tuple]] = {}
    for sub in fig.subfigs:
        read = categories.get(sub.get_gid())
        if read is None:
            continue
        each = [found for ax in sub.axes if (found := read(ax.findobj(lambda a: a.get_visible())))]
        if len(each) == 1:
            out[sub.get_gid()] = each[0]
        for k, found in enumerate(each if len(each) > 1 else []):
            out[f"{sub.get_gid()} (axes {k + 1})"] = found
    return out


def _colours(by_panel: dict[str, dict[str, tuple]], profile: Profile) -> list[Finding]:
    out = []
    for panel, colours in by_panel.items():
        for (a, ca), (b, cb) in itertools.combinations(sorted(colours.items()), 2):
            for deficiency in ("deuteranopia", "protanopia"):
                d = float(delta_e(simulate(np.array(ca), deficiency), simulate(np.array(cb), deficiency)))
                if d < profile.cvd_min_delta_e:
                    out.append(Finding("colour vision", panel, f"{a} and {b}",
                                       f"under simulated {deficiency} their colours differ by dE {d:.1f} "
                                       f"(< {profile.cvd_min_delta_e:g})"))
    return out


def _fonts(files: dict[str, bytes], profile: Profile) -> list[Finding]:
    pdf = files.get("pdf")
    if not profile.truetype_fonts or pdf is None:
        return []
    out = []
    if re.search(rb"/Subtype\s*/Type3", pdf):
        out.append(Finding("fonts", "figure", "PDF", "has Type 3 fonts (text is not editable): set pdf.fonttype 42"))
    descriptors = len(re.findall(rb"/Type\s*/FontDescriptor", pdf))
    embedded = len(re.findall(rb"/FontFile2", pdf))
    if embedded < descriptors:
        out.append(Finding("fonts", "figure", "PDF", f"{descriptors - embedded} fonts are not embedded as TrueType"))
    return out


def _file_size(files: dict[str, bytes], profile: Profile) -> list[Finding]:
    limit = profile.max_file_mb * 1e6
    return [Finding("file size", "figure", f"{fmt.upper()} file", f"{len(data) / 1e6:.1f} MB is over "
                    f"{profile.max_file_mb:g} MB") for fmt, data in files.items() if len(data) > limit]
