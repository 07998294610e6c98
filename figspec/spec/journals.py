"""Journal profiles: what a journal (or a lab) requires of a figure file, as TOML."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Literal

from pydantic import Field

from figspec.errors import Problem, SpecError, toml_text
from figspec.spec.style import BUILTIN_STYLES, lab_style_folders
from figspec.spec.fields import Frozen

Positive = Annotated[float, Field(gt=0)]


class Profile(Frozen):
    """Limits a rendered figure is checked against (see ``figspec check --journal``)."""

    name: str
    column_widths_mm: list[Positive] = Field(min_length=1)
    width_tolerance_mm: Positive = 0.5
    max_height_mm: Positive
    min_text_pt: Positive
    min_line_pt: Positive
    truetype_fonts: bool = True
    cvd_min_delta_e: Annotated[float, Field(ge=0)] = 10.0
    max_file_mb: Positive = 10.0
    min_image_ppi: Positive = 300.0          # an image embedded in the figure (a density raster), per inch on the page
    formats: list[Literal["svg", "pdf", "png", "tiff", "eps"]] = Field(default_factory=list)   # files it takes
    min_png_dpi: Positive = 300.0            # resolution of the PNG and TIFF files


def profile_path(name: str, folder: Path | None = None) -> Path:
    """A profile by path (``.toml``) or by name in ``journals/`` of the lab's style folders, then
    figspec's own."""
    if name.endswith(".toml"):
        return (folder or Path.cwd()) / name
    places = [place / "journals" for place in lab_style_folders(folder)] + [BUILTIN_STYLES / "journals"]
    for place in places:
        if (place / f"{name}.toml").is_file():
            return place / f"{name}.toml"
    known = sorted({p.stem for place in places if place.is_dir() for p in place.glob("*.toml")})
    raise SpecError(Problem(f"no journal profile named {name!r} (known: {', '.join(known)})",
                            ("figure", "journal"), toml_text(name)))


def load_profile(name: str, folder: Path | None = None) -> Profile:
    from figspec.spec.loader import read_toml, validate

    path = profile_path(name, folder)
    text, data = read_toml(path)
    return validate(Profile, data, path, text)
