"""The keys every panel kind shares, and the two families of kinds: time on x (one axes per
level or unit) and level on x (one axes, one line per unit)."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from figspec.spec.fields import MAX_TICKS, Frozen, Level, Magnitude, Name, PositiveMs, Seed, Text, WindowMs
from figspec.spec.selection import ConditionSplit, TrialSelection

Probability = Annotated[float, Field(gt=0, lt=1)]
GridCell = tuple[Annotated[int, Field(ge=1)], Annotated[int, Field(ge=1)]]
Step = Magnitude
Ticks = Annotated[list[Level], Field(min_length=1, max_length=MAX_TICKS)]


class PanelBase(Frozen):
    """Keys every panel kind has: what to draw from, where in the grid, labels and ticks."""

    name: Name
    source: str | Annotated[list[str], Field(min_length=2)] | None = None
    unit: str | None = None
    units: Annotated[list[str], Field(min_length=1)] | Literal["all"] | None = None
    levels: Annotated[list[Level], Field(min_length=1, max_length=200)] | None = None
    cell: GridCell | None = None
    span: GridCell = (1, 1)
    title: Text | None = None
    x_label: Text | None = None
    x_ticks: Ticks | None = None
    x_step: Step | None = None
    y_ticks: Ticks | None = None
    y_step: Step | None = None
    keep: TrialSelection = TrialSelection()
    conditions: ConditionSplit | None = None

    @model_validator(mode="after")
    def _ticks(self) -> "PanelBase":
        for axis in ("x", "y"):
            if getattr(self, f"{axis}_ticks") is not None and getattr(self, f"{axis}_step") is not None:
                raise ValueError(f"give {axis}_ticks or {axis}_step, not both")
        return self

    def source_names(self) -> list[str]:
        """The sources the panel draws from (several: their units pooled)."""
        return [self.source] if isinstance(self.source, str) else list(self.source or [])

    def fitted_model(self) -> str | None:
        """The model fitted to the panel's points (it needs ``levels.scale``), if any."""
        return None

    def unit_names(self) -> list[str]:
        """The units the panel shows: its ``units``, else its one ``unit`` (before the resolve
        step, ``units = "all"`` names none: every unit its source keeps)."""
        if self.units == "all":
            return []
        return list(self.units) if self.units else [self.unit]

    def windows(self) -> dict[str, tuple[float, float]]:
        """The panel's time windows (ms from the alignment point) by key, for data checks."""
        return {}

    def colours_units(self) -> bool:
        """Whether the panel tells units apart by palette colour (and marker) in one axes."""
        return False


class TimePanel(PanelBase):
    """Panels with time on x, repeated per level (or per unit) down rows or across columns, or
    overlaid in one axes. Scale bars can replace the axes."""

    units: Annotated[list[str], Field(min_length=2)] | Literal["all"] | None = None
    repeat: Literal["level", "unit"] = "level"
    arrange: Literal["rows", "columns", "overlay"] = "rows"
    window_ms: WindowMs = (-50.0, 150.0)
    scale_bars: bool = False
    time_bar_ms: PositiveMs | None = None

    @model_validator(mode="after")
    def _arrangement(self) -> "TimePanel":
        if self.repeat == "unit" and not self.units:
            raise ValueError("repeat = 'unit' needs units = [...] naming the units to repeat over")
        if self.repeat == "unit" and self.arrange != "overlay" and (self.levels is None or len(self.levels) != 1):
            raise ValueError("one axes per unit shows one level: set levels = [L]")
        span = self.window_ms[1] - self.window_ms[0]
        if self.x_step is not None and span / self.x_step > MAX_TICKS:
            raise ValueError(f"x_step = {self.x_step:g} ms gives {span / self.x_step:.0f} ticks over window_ms; "
                             f"at most {MAX_TICKS} ticks per axis")
        if self.conditions is not None and self.arrange == "overlay":
            raise ValueError("an overlay already tells its lines apart by colour: split conditions in rows or "
                             "columns (each axes then shows every condition)")
        if self.conditions is not None and self.repeat == "unit":
            raise ValueError("conditions are drawn within each level's axes: use repeat = 'level'")
        if self.time_bar_ms is not None and self.time_bar_ms > span:
            raise ValueError(f"time_bar_ms ({self.time_bar_ms:g} ms) is longer than window_ms ({span:g} ms)")
        return self

    def windows(self) -> dict[str, tuple[float, float]]:
        return {"window_ms": self.window_ms}

    def colours_units(self) -> bool:
        return self.arrange == "overlay" and self.repeat == "unit"

    def stimulus_units(self) -> list[str]:
        """Whose trials give the stimulus windows: each repeated unit, else the first unit."""
        return self.unit_names() if self.units and self.repeat == "unit" else self.unit_names()[:1]


class SummaryPanel(PanelBase):
    """Panels with level on x and one line per unit; with ``small_multiples`` one small axes per
    unit in a grid (``multiples_columns`` wide, about square by default), every axes on the same
    scales."""

    response_ms: WindowMs = (0.0, 50.0)
    baseline_ms: WindowMs = (-50.0, 0.0)
    level_axis: Literal["linear", "log"] = "linear"
    confidence: Probability = 0.95
    resamples: Annotated[int, Field(ge=200, le=100_000)] = 2000
    fit_resamples: Annotated[int, Field(ge=50, le=5000)] = 200
    correction: Literal["holm", "none"] = "holm"
    seed: Seed = 0
    y_label: Text | None = None
    small_multiples: bool = False
    multiples_columns: Annotated[int, Field(ge=1, le=20)] | None = None

    @model_validator(mode="after")
    def _windows(self) -> "SummaryPanel":
        if self.multiples_columns is not None and not self.small_multiples:
            raise ValueError("multiples_columns sets the grid of small_multiples: set small_multiples = true")
        if self.response_ms[0] < 0:
            raise ValueError(f"response_ms must start at or after stimulus onset (0 ms), got {list(self.response_ms)}")
        if self.baseline_ms[1] > 0:
            raise ValueError(f"baseline_ms must end by stimulus onset (0 ms), got {list(self.baseline_ms)}")
        return self

    def windows(self) -> dict[str, tuple[float, float]]:
        return {"response_ms": self.response_ms, "baseline_ms": self.baseline_ms}

    def colours_units(self) -> bool:
        return not self.small_multiples
