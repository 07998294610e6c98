"""Panel models, one per kind, joined in the discriminated union :data:`Panel`.

Rows of level-repeated panels (raster, psth) are levels; summary panels (level_response,
latency) draw one axes with level on x, one line per unit.
"""

from __future__ import annotations

from typing import Annotated, Literal, Union

from pydantic import Field, ValidationInfo, field_validator, model_validator

from figspec.spec.types import Frozen, Name, PositiveMs, WindowMs

Probability = Annotated[float, Field(gt=0, lt=1)]


GridCell = tuple[Annotated[int, Field(ge=1)], Annotated[int, Field(ge=1)]]
Step = Annotated[float, Field(gt=0)]


class PanelBase(Frozen):
    """Keys every panel kind has: what to draw from, where in the grid, labels and ticks."""

    name: Name
    source: str | None = None
    unit: str | None = None
    levels: list[float] | None = None
    cell: GridCell | None = None
    span: GridCell = (1, 1)
    title: str | None = None
    x_label: str | None = None
    x_ticks: list[float] | None = None
    x_step: Step | None = None
    y_ticks: list[float] | None = None
    y_step: Step | None = None

    @model_validator(mode="after")
    def _ticks(self) -> "PanelBase":
        for axis in ("x", "y"):
            if getattr(self, f"{axis}_ticks") is not None and getattr(self, f"{axis}_step") is not None:
                raise ValueError(f"give {axis}_ticks or {axis}_step, not both")
        return self


class TimePanel(PanelBase):
    """Panels with time on x, repeated per level (or per unit) down rows or across columns, or
    overlaid in one axes. Scale bars can replace the axes."""

    repeat: Literal["level", "unit"] = "level"
    arrange: Literal["rows", "columns", "overlay"] = "rows"
    window_ms: WindowMs = (-50.0, 150.0)
    scale_bars: bool = False
    time_bar_ms: Step | None = None

    @model_validator(mode="after")
    def _arrangement(self) -> "TimePanel":
        if self.repeat == "unit" and not getattr(self, "units", None):
            raise ValueError("repeat = 'unit' needs units = [...] naming the units to repeat over")
        if self.repeat == "unit" and self.arrange != "overlay" and (self.levels is None or len(self.levels) != 1):
            raise ValueError("one axes per unit shows one level: set levels = [L]")
        return self


class RasterPanel(TimePanel):
    """``kind = "raster"``: one tick per spike, one line per trial presented."""

    kind: Literal["raster"]
    units: list[str] | None = Field(default=None, min_length=2)

    @model_validator(mode="after")
    def _no_overlay(self) -> "RasterPanel":
        if self.arrange == "overlay":
            raise ValueError("rasters cannot be overlaid: arrange them in rows or columns")
        if self.units is not None and self.repeat != "unit":
            raise ValueError("a raster shows one unit per axes: with units = [...] set repeat = 'unit'")
        return self


class PsthPanel(TimePanel):
    """``kind = "psth"``: spikes binned in time over the trials presented, optionally smoothed,
    optionally averaged across ``units`` (population rate, mean +/- SEM)."""

    kind: Literal["psth"]
    units: list[str] | None = Field(default=None, min_length=2)
    bin_ms: PositiveMs | Literal["auto"] = 5.0
    bin_search_ms: WindowMs = (1.0, 50.0)
    measure: Literal["spikes_per_s", "spikes_per_trial", "count", "z_score"] = "spikes_per_s"
    baseline_ms: WindowMs | None = None
    smooth: Literal["none", "gaussian", "causal"] = "none"
    kernel_ms: PositiveMs | Literal["auto"] | None = None
    lock_y: bool = True
    y_max: Annotated[float, Field(gt=0)] | None = None
    y_label: str | None = None
    rate_bar: Step | None = None

    @field_validator("bin_ms")
    @classmethod
    def _whole_bins(cls, bin_ms: float | str, info: ValidationInfo) -> float | str:
        window = info.data.get("window_ms")
        if window is not None and bin_ms != "auto":
            n = (window[1] - window[0]) / bin_ms
            if abs(n - round(n)) > 1e-6 * max(1.0, n):
                raise ValueError(f"window_ms [{window[0]:g}, {window[1]:g}] must hold a whole number "
                                 f"of bins ({n:.3g} bins of {bin_ms:g} ms)")
        return bin_ms

    @model_validator(mode="after")
    def _consistent(self) -> "PsthPanel":
        if self.smooth != "none" and self.kernel_ms is None:
            raise ValueError(f"smooth = {self.smooth!r} needs kernel_ms (a width in ms, or 'auto')")
        if self.smooth == "none" and self.kernel_ms is not None:
            raise ValueError("kernel_ms is set but smooth is 'none'")
        if self.kernel_ms == "auto" and self.smooth != "gaussian":
            raise ValueError("kernel_ms = 'auto' (Shimazaki & Shinomoto 2010) is for smooth = 'gaussian'")
        if self.baseline_ms is not None and not (
            self.window_ms[0] <= self.baseline_ms[0] and self.baseline_ms[1] <= min(0.0, self.window_ms[1])
        ):
            raise ValueError(f"baseline_ms must lie inside window_ms and end by stimulus onset (0 ms), "
                             f"got {list(self.baseline_ms)}")
        if self.measure == "z_score" and self.window_ms[0] >= 0 and self.baseline_ms is None:
            raise ValueError("measure = 'z_score' needs pre-stimulus bins: start window_ms before 0")
        return self


class SummaryPanel(PanelBase):
    """Panels with level on x and one line per unit."""

    units: list[str] | None = Field(default=None, min_length=1)
    response_ms: WindowMs = (0.0, 50.0)
    baseline_ms: WindowMs = (-50.0, 0.0)
    level_axis: Literal["linear", "log"] = "linear"
    confidence: Probability = 0.95
    resamples: Annotated[int, Field(ge=200, le=100_000)] = 2000
    seed: int = 0
    y_label: str | None = None

    @model_validator(mode="after")
    def _windows(self) -> "SummaryPanel":
        if self.response_ms[0] < 0:
            raise ValueError(f"response_ms must start at or after stimulus onset (0 ms), got {list(self.response_ms)}")
        if self.baseline_ms[1] > 0:
            raise ValueError(f"baseline_ms must end by stimulus onset (0 ms), got {list(self.baseline_ms)}")
        return self


class LevelResponsePanel(SummaryPanel):
    """``kind = "level_response"``: evoked response vs level, with a test against baseline and an
    optional Naka-Rushton fit."""

    kind: Literal["level_response"]
    measure: Literal["spikes_per_s", "count"] = "spikes_per_s"
    subtract_baseline: bool = False
    error: Literal["sem", "bootstrap"] = "sem"
    test: Literal["wilcoxon", "none"] = "wilcoxon"
    zero_method: Literal["wilcox", "pratt", "zsplit"] = "wilcox"
    alpha: Probability = 0.05
    fit: Literal["none", "naka_rushton"] = "none"

    @model_validator(mode="after")
    def _equal_windows(self) -> "LevelResponsePanel":
        lengths = (self.response_ms[1] - self.response_ms[0], self.baseline_ms[1] - self.baseline_ms[0])
        if (self.test != "none" or self.subtract_baseline) and abs(lengths[0] - lengths[1]) > 1e-9:
            raise ValueError(f"response_ms and baseline_ms must be equally long to compare counts "
                             f"(got {lengths[0]:g} and {lengths[1]:g} ms)")
        return self


class LatencyPanel(SummaryPanel):
    """``kind = "latency"``: response latency vs level, by one of three methods, with an
    optional Pieron fit."""

    kind: Literal["latency"]
    method: Literal["first_spike", "threshold", "surprise"] = "first_spike"
    bin_ms: PositiveMs = 1.0
    threshold_sd: Annotated[float, Field(gt=0, le=10)] = 3.0
    threshold_bins: Annotated[int, Field(ge=1, le=20)] = 2
    surprise: Annotated[float, Field(gt=0, le=20)] = 3.0
    fit: Literal["none", "pieron"] = "none"


Panel = Annotated[Union[RasterPanel, PsthPanel, LevelResponsePanel, LatencyPanel],
                  Field(discriminator="kind")]

FIT_PARAMETERS = {"naka_rushton": 4, "pieron": 3}
