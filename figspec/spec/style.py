"""House style: a TOML file in styles/ resolved to figspec's own drawing tokens.

Every key is required in a style file, so a style says everything it means; the resolved
:class:`Style` is what draw functions receive. ``rc()`` gives the matplotlib settings that go
with it, applied by the draw layer inside a context so that nothing leaks between figures.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Literal

from pydantic import Field

from figspec.errors import Problem, SpecError, toml_text
from figspec.spec.fields import Colour, ColourMap, Fraction, Frozen, Points

BUILTIN_STYLES = Path(__file__).resolve().parents[1] / "styles"   # shipped inside the package


class FontStyle(Frozen):
    family: str
    body_pt: Points
    tick_pt: Points
    title_pt: Points
    figure_title_pt: Points


class AxesStyle(Frozen):
    line_pt: Points
    tick_length_pt: Annotated[float, Field(ge=0, le=20)]
    tick_direction: Literal["in", "out", "inout"]
    spines: list[Literal["left", "bottom", "right", "top"]]


class RasterStyle(Frozen):
    colour: Colour
    tick_height: Annotated[float, Field(gt=0, le=1)]
    tick_width_pt: Points


class RateStyle(Frozen):
    colour: Colour
    edge_pt: Annotated[float, Field(ge=0, le=10)]


class StimulusStyle(Frozen):
    colour: Colour
    range_hatch_opacity: Fraction


CONDITION_COLOURS = ("#000000", "#0072b2", "#d55e00", "#009e73", "#cc79a7", "#e69f00")   # Okabe & Ito's set
CONDITION_LINES = ("solid", "dashed", "dotted", "dashdot", "solid", "dashed")


class PaletteStyle(Frozen):
    units: list[Colour] = Field(min_length=1)
    levels: ColourMap
    stimulus_levels: ColourMap
    conditions: Annotated[list[Colour], Field(min_length=2)] = list(CONDITION_COLOURS)
    condition_lines: Annotated[list[Literal["solid", "dashed", "dotted", "dashdot"]], Field(min_length=2)] = \
        list(CONDITION_LINES)


class LetterStyle(Frozen):
    case: Literal["lower", "upper"]
    weight: Literal["normal", "bold"]
    size_pt: Points
    position: Literal["left", "center"]


class ScaleBarStyle(Frozen):
    line_pt: Points


class SummaryStyle(Frozen):
    marker_pt: Points
    line_pt: Points
    error_cap_pt: Annotated[float, Field(ge=0, le=20)]


class FigureDefaults(Frozen):
    width_mm: Annotated[float, Field(gt=0, le=2000)]
    width_is_a_limit: bool          # print (a journal column): true; slides and posters: false


class Style(Frozen):
    """A resolved house style."""

    extends: str | None = None
    figure: FigureDefaults
    font: FontStyle
    palette: PaletteStyle
    letters: LetterStyle
    scale_bar: ScaleBarStyle
    summary: SummaryStyle
    axes: AxesStyle
    raster: RasterStyle
    rate: RateStyle
    stimulus: StimulusStyle
    size_scale: Annotated[float, Field(gt=0, le=20)] = 1.0   # set by figspec when it scales a whole figure

    def with_sizes_of(self, other: "Style", scale: float) -> "Style":
        """This style (colours, font, spines ...) with every size of ``other`` times ``scale``:
        text, lines, ticks, markers, letters and the gaps between them, so a figure drawn in it
        is ``other``'s figure scaled as a whole."""
        def sized(mine, theirs):
            update = {name: getattr(theirs, name) * scale for name, info in type(theirs).model_fields.items()
                      if name.endswith("_pt") or name == "tick_length_pt"}
            return mine.model_copy(update=update)

        return self.model_copy(update={"font": sized(self.font, other.font), "axes": sized(self.axes, other.axes),
                                       "raster": sized(self.raster, other.raster),
                                       "rate": sized(self.rate, other.rate),
                                       "letters": sized(self.letters, other.letters),
                                       "scale_bar": sized(self.scale_bar, other.scale_bar),
                                       "summary": sized(self.summary, other.summary),
                                       "size_scale": other.size_scale * scale})

    def rc(self) -> dict[str, object]:
        """matplotlib settings for this style (applied only inside a context)."""
        f, a = self.font, self.axes
        return {
            "font.family": "sans-serif",
            "font.sans-serif": [f.family, "DejaVu Sans"],
            "font.size": f.body_pt,
            "axes.titlesize": f.title_pt,
            "axes.labelsize": f.body_pt,
            "figure.titlesize": f.figure_title_pt,
            "xtick.labelsize": f.tick_pt,
            "ytick.labelsize": f.tick_pt,
            "axes.linewidth": a.line_pt,
            "xtick.major.width": a.line_pt,
            "ytick.major.width": a.line_pt,
            "xtick.major.size": a.tick_length_pt,
            "ytick.major.size": a.tick_length_pt,
            "xtick.direction": a.tick_direction,
            "ytick.direction": a.tick_direction,
            "axes.spines.left": "left" in a.spines,
            "axes.spines.bottom": "bottom" in a.spines,
            "axes.spines.right": "right" in a.spines,
            "axes.spines.top": "top" in a.spines,
            "axes.titlepad": 4.5 * self.size_scale,
            "axes.labelpad": 2.0 * self.size_scale,
            "xtick.major.pad": 1.5 * self.size_scale,
            "ytick.major.pad": 1.5 * self.size_scale,
            "pdf.fonttype": 42,
            "ps.fonttype": 42,
            "svg.fonttype": "none",
            "svg.hashsalt": "figspec",
            "path.simplify": False,
            "legend.fontsize": f.tick_pt,
            "legend.frameon": False,
            "lines.linewidth": self.summary.line_pt,
            "lines.markersize": self.summary.marker_pt,
            "errorbar.capsize": self.summary.error_cap_pt,
        }


def lab_style_folders(folder: Path | None) -> list[Path]:
    """Where a lab's own styles are looked for, first match winning: ``styles/`` beside the
    spec, then ``styles/`` one folder up (a project with ``specs/`` and ``styles/`` side by side)."""
    if folder is None:
        return []
    folder = folder.resolve()                 # "..".parent is ".": resolve before going up
    return [folder / "styles", folder.parent / "styles"]


def style_path(name: str, folder: Path | None = None) -> Path:
    """Where the style ``name`` lives: a path to a .toml file (relative to ``folder``), or a name
    looked up in the lab's style folders (:func:`lab_style_folders`), in ``folder`` itself (a
    style extending a sibling), then among figspec's built-in styles."""
    if name.endswith(".toml"):
        return (folder or Path.cwd()) / name
    places = lab_style_folders(folder) + ([folder] if folder else []) + [BUILTIN_STYLES]
    for place in places:
        candidate = place / f"{name}.toml"
        if candidate.is_file():
            return candidate
    raise SpecError(Problem(f"no style named {name!r} (looked in styles/ beside the spec, one folder up, "
                            f"and among figspec's own: {', '.join(builtin_styles())})", ("figure", "style"),
                            toml_text(name)))


def builtin_styles() -> list[str]:
    """Names of figspec's own styles."""
    return sorted(p.stem for p in BUILTIN_STYLES.glob("*.toml"))
