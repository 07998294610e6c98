"""Pydantic models of a figure spec (one TOML file).

Every model is frozen and forbids unknown keys. Panel kinds form a discriminated union on
``kind``, so a mistake inside one panel gives one error at one key path. Checks that relate
keys in different tables (a panel naming a source that does not exist) live in
:func:`cross_check`; checks that need the data live in the resolve step of the pipeline.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Field, field_validator, model_validator

from figspec.errors import Problem, toml_text
from figspec.spec.analysis import AnalysisSpec
from figspec.spec.layout import LayoutSpec, SharedGroup, grid_problems
from figspec.spec.fields import (MAX_PANELS, ColourMap, Fraction, Frozen, Level, Millimetres, Name, Text,
                                  TimeMs)
from figspec.spec.panel_base import PanelBase
from figspec.spec.panels import Panel
from figspec.spec.sources import Source

Format = Literal["svg", "pdf", "png", "tiff", "eps"]
ALL_FORMATS: tuple[Format, ...] = ("svg", "pdf", "png")          # written unless the spec says otherwise
KNOWN_FORMATS: tuple[Format, ...] = ALL_FORMATS + ("tiff", "eps")  # TIFF and EPS on request (journals ask)


class FigureSpec(Frozen):
    """``[figure]``: the page the panels are laid out on."""

    title: Text = ""
    width_mm: Millimetres | None = None
    height_mm: Millimetres = 170.0
    formats: Annotated[list[Format], Field(min_length=1, max_length=len(KNOWN_FORMATS))] = \
        Field(default_factory=lambda: list(ALL_FORMATS))
    png_dpi: Annotated[int, Field(ge=72, le=1200)] = 300
    style: str = "default"
    journal: str | None = None

    @field_validator("formats")
    @classmethod
    def _once_each(cls, formats: list[str]) -> list[str]:
        repeated = sorted({f for f in formats if formats.count(f) > 1})
        if repeated:
            raise ValueError(f"each format once: {', '.join(repeated)} is listed more than once")
        return formats


class LevelSpec(Frozen):
    """``[levels]``: what the stimulus level is and how rows are ordered."""

    quantity: Text = "Level"
    unit: Text = ""
    order: Literal["high_at_top", "low_at_top"] = "high_at_top"
    scale: Literal["pressure_db", "power_db", "linear"] | None = None
    names: dict[str, Text] = Field(default_factory=dict)

    @field_validator("names")
    @classmethod
    def _numeric_keys(cls, names: dict[str, str]) -> dict[str, str]:
        for key in names:
            try:
                float(key)
            except ValueError:
                raise ValueError(f"names are keyed by the level as a number in quotes, e.g. \"0\" = \"silence\" "
                                 f"(got key {key!r})") from None
        return names

    def name_of(self, value: float) -> str | None:
        """The display name the spec gives the level ``value``, if any."""
        return next((name for key, name in self.names.items() if float(key) == float(value)), None)

    @model_validator(mode="after")
    def _db_scale(self) -> "LevelSpec":
        if self.scale == "linear" and "db" in self.unit.lower():
            raise ValueError(f"levels in {self.unit!r} are logarithmic: set scale to 'pressure_db' "
                             "(sound pressure, voltage, current) or 'power_db' (power, intensity)")
        return self

    @property
    def axis_label(self) -> str:
        return f"{self.quantity} ({self.unit})" if self.unit else self.quantity

    def label(self, value: float) -> str:
        """How a level is named in the figure: its display name, else its value and unit."""
        name = self.name_of(value)
        if name is not None:
            return name
        text = f"{value:g}"
        return f"{text} {self.unit}" if self.unit else text


class UnitsSpec(Frozen):
    """``[units]``: display names of units (keys: the unit as the data name it)."""

    names: dict[str, Text] = Field(default_factory=dict)

    def label(self, unit: str) -> str:
        """How a unit is named in the figure (a pooled unit ``source/unit`` by its own name too)."""
        return self.names.get(unit) or self.names.get(str(unit).split("/")[-1]) or str(unit)


class StimulusSpec(Frozen):
    """``[stimulus]``: where the stimulus window is and how it is shaded.

    Either ``per_trial = true`` (onset and offset come from the trial table) or a fixed window
    ``start_ms``/``stop_ms`` relative to the alignment point.
    """

    per_trial: bool = False
    start_ms: TimeMs | None = None
    stop_ms: TimeMs | None = None
    label: Text = "Stimulus"
    mark: Literal["shade", "bar"] = "shade"
    encoding: Literal["opacity", "colormap", "wavelength"] = "opacity"
    opacity: tuple[Fraction, Fraction] = (0.08, 0.4)
    opacity_scale: Literal["linear", "log"] = "linear"
    colormap: ColourMap | None = None
    wavelength_nm: Annotated[float, Field(ge=380, le=780)] | None = None
    key: bool = True
    sham_levels: Annotated[list[Level], Field(max_length=200)] | None = Field(
        None, description="Levels at which no stimulus was presented (a sham, contrast 0 %, silence): left "
        "unshaded and named so in the key. Default: a level of 0 of a linear quantity (levels.scale = 'linear', "
        "or a unit that is not in dB); [] shades every level.")

    @model_validator(mode="after")
    def _one_window(self) -> "StimulusSpec":
        fixed = self.start_ms is not None or self.stop_ms is not None
        if self.per_trial and fixed:
            raise ValueError("give either per_trial = true or start_ms/stop_ms, not both")
        if not self.per_trial:
            if self.start_ms is None or self.stop_ms is None:
                raise ValueError("a fixed stimulus window needs both start_ms and stop_ms "
                                 "(or set per_trial = true to read it from the trial table)")
            if not self.start_ms < self.stop_ms:
                raise ValueError(f"start_ms must be < stop_ms, got {self.start_ms:g} and {self.stop_ms:g}")
        if self.encoding == "wavelength" and self.wavelength_nm is None:
            raise ValueError("encoding = 'wavelength' needs wavelength_nm (380-780 nm)")
        lo, hi = self.opacity
        if lo > hi:
            raise ValueError(f"opacity is [lowest level, highest level] and must not fall, got [{lo:g}, {hi:g}]")
        return self


class FigureFile(Frozen):
    """The whole spec file."""

    figure: FigureSpec = FigureSpec()
    levels: LevelSpec = LevelSpec()
    units: UnitsSpec = UnitsSpec()
    stimulus: StimulusSpec
    layout: LayoutSpec | None = None
    analysis: AnalysisSpec = AnalysisSpec()
    sources: dict[Name, Source] = Field(min_length=1)
    panels: list[Panel] = Field(min_length=1, max_length=MAX_PANELS)
    shared: list[SharedGroup] = Field(default_factory=list)
    style: dict[str, Any] | None = None


def sham_levels(spec: FigureFile) -> frozenset[float]:
    """The levels drawn without a stimulus mark: the spec's ``sham_levels``, else a level of 0 of
    a linear quantity (0 % contrast, 0 Pa: nothing was presented; 0 dB SPL is a sound)."""
    if spec.stimulus.sham_levels is not None:
        return frozenset(float(v) for v in spec.stimulus.sham_levels)
    unit = spec.levels.unit.lower()
    linear = spec.levels.scale == "linear" or (spec.levels.scale is None and unit != "" and "db" not in unit)
    return frozenset({0.0}) if linear else frozenset()


def source_name(spec: FigureFile, panel: PanelBase) -> str | list[str] | None:
    """The source a panel draws from (the only source when it names none), or the list of
    sources it pools."""
    if panel.source is not None:
        return panel.source
    return next(iter(spec.sources)) if len(spec.sources) == 1 else None


RESERVED_NAMES = ("stimulus", "statistics", "legend", "manifest")   # figspec's own files in <stem>_data/
TABLE_PARTS = ("points", "fit", "params")                          # <panel>_<part>.csv of summary panels


def name_problems(spec: FigureFile) -> list[Problem]:
    """Panel names that would write the same source-data file as figspec's own or another panel's."""
    problems = []
    names = [p.name for p in spec.panels]
    for i, name in enumerate(names):
        if name in RESERVED_NAMES:
            problems.append(Problem(f"{name!r} names one of figspec's own files ({', '.join(RESERVED_NAMES)}): "
                                    "choose another panel name", ("panels", i, "name"), toml_text(name)))
        for other in names:
            if any(name == f"{other}_{part}" for part in TABLE_PARTS):
                problems.append(Problem(f"the source data of panel {other!r} include {name}.csv: choose another "
                                        "panel name", ("panels", i, "name"), toml_text(name)))
    return problems


def cross_check(spec: FigureFile) -> list[Problem]:
    """Checks between tables of a valid spec (second tier), each with its key path."""
    problems: list[Problem] = name_problems(spec)
    seen: dict[str, int] = {}
    for i, panel in enumerate(spec.panels):
        if panel.name in seen:
            problems.append(Problem(f"panel names must be unique; panels[{seen[panel.name]}] has it too",
                                    ("panels", i, "name"), toml_text(panel.name)))
        seen.setdefault(panel.name, i)
        unknown = [name for name in panel.source_names() if name not in spec.sources]
        if unknown:
            problems.append(Problem(f"no such source; sources are {sorted(spec.sources)}",
                                    ("panels", i, "source"), toml_text(unknown[0])))
        elif source_name(spec, panel) is None:
            problems.append(Problem(f"several sources exist, so the panel must name one of {sorted(spec.sources)}",
                                    ("panels", i)))
        if panel.units is not None and panel.unit is not None:
            problems.append(Problem("give either unit or units, not both", ("panels", i, "units")))
        if panel.fitted_model() is not None and spec.levels.scale is None:
            problems.append(Problem(f"a {panel.fitted_model()} fit needs the level's scale: set levels.scale to "
                                    "'pressure_db', 'power_db' or 'linear'", ("panels", i, "fit")))
        named = source_name(spec, panel)
        for src_name in [named] if isinstance(named, str) else (named or []):
            src = spec.sources.get(src_name)
            if spec.stimulus.per_trial and src is not None and not src.has_stimulus_window:
                problems.append(Problem("stimulus.per_trial needs a trial table with onset and offset columns "
                                        f"in source {src_name!r}", ("stimulus", "per_trial")))
    problems += grid_problems(spec.layout, spec.panels, spec.shared)
    if spec.stimulus.opacity_scale == "log" and spec.levels.unit.lower().startswith("db"):
        problems.append(Problem("levels in dB are already logarithmic: use opacity_scale = 'linear'",
                                ("stimulus", "opacity_scale"), "'log'"))
    return list(dict.fromkeys(problems))
