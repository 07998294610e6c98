"""Panel models, one per kind, joined in the discriminated union :data:`Panel`.

Rows of level-repeated panels (raster, psth) are levels; summary panels (level_response,
latency) draw one axes with level on x, one line per unit. A new kind is one model here and
one member of :data:`PANEL_MODELS`.
"""

from __future__ import annotations

from typing import Annotated, Literal, Union

from pydantic import Field, ValidationInfo, field_validator, model_validator

from figspec.spec.fields import MAX_BINS, Level, Magnitude, PositiveMs, Seed, Text, WindowMs
from figspec.spec.panel_base import PanelBase, Probability, Step, SummaryPanel, TimePanel

class RasterPanel(TimePanel):
    """``kind = "raster"``: one tick per spike, one line per trial presented.

    ``draw_as = "density"`` draws each level as an image of spike counts per cell (trials x
    time) instead, for rasters too dense for ticks to show; ``"auto"`` (the default) does so when
    a tick would be thinner than one pixel at ``png_dpi``. ``trials_shown = N`` draws ticks for a
    seeded random subset of N trials per level (and says so)."""

    kind: Literal["raster"]
    draw_as: Literal["auto", "ticks", "density"] = "auto"
    density_bins: tuple[Annotated[int, Field(ge=1, le=4000)], Annotated[int, Field(ge=1, le=4000)]] | None = None
    trials_shown: Annotated[int, Field(ge=1, le=100_000)] | None = None
    seed: Seed = 0

    @model_validator(mode="after")
    def _no_overlay(self) -> "RasterPanel":
        if self.arrange == "overlay":
            raise ValueError("rasters cannot be overlaid: arrange them in rows or columns")
        if self.units is not None and self.repeat != "unit":
            raise ValueError("a raster shows one unit per axes: with units = [...] set repeat = 'unit'")
        if self.trials_shown is not None and self.draw_as == "density":
            raise ValueError("trials_shown draws a subset of trials as ticks; a density image shows them all")
        if self.trials_shown is not None and self.conditions is not None:
            raise ValueError("trials_shown draws a subset of trials; with conditions every trial of each condition "
                             "is drawn (a subset would hide how many trials each block has)")
        if self.density_bins is not None and self.draw_as == "ticks":
            raise ValueError("density_bins is for draw_as = 'density' (or 'auto')")
        return self


class PsthPanel(TimePanel):
    """``kind = "psth"``: spikes binned in time over the trials presented, optionally smoothed,
    optionally averaged across ``units`` (population rate, mean +/- SEM)."""

    kind: Literal["psth"]
    bin_ms: PositiveMs | Literal["auto"] = 5.0
    bin_search_ms: WindowMs = (1.0, 50.0)
    measure: Literal["spikes_per_s", "spikes_per_trial", "count", "z_score"] = "spikes_per_s"
    normalise: Literal["none", "peak", "baseline"] = "none"
    baseline_ms: WindowMs | None = None
    smooth: Literal["none", "gaussian", "causal"] = "none"
    kernel_ms: PositiveMs | Literal["auto"] | None = None
    lock_y: bool = True
    y_max: Magnitude | None = None
    y_label: Text | None = None
    rate_bar: Magnitude | None = None

    @field_validator("bin_ms")
    @classmethod
    def _whole_bins(cls, bin_ms: float | str, info: ValidationInfo) -> float | str:
        window = info.data.get("window_ms")
        if window is not None and bin_ms != "auto":
            n = (window[1] - window[0]) / bin_ms
            if n > MAX_BINS:
                raise ValueError(f"{bin_ms:g}-ms bins give {n:.3g} bins over window_ms [{window[0]:g}, {window[1]:g}]; "
                                 f"at most {MAX_BINS} bins per histogram")
            if abs(n - round(n)) > 1e-6 * max(1.0, n):
                raise ValueError(f"window_ms [{window[0]:g}, {window[1]:g}] must hold a whole number "
                                 f"of bins ({n:.3g} bins of {bin_ms:g} ms)")
        return bin_ms

    @model_validator(mode="after")
    def _consistent(self) -> "PsthPanel":
        span = self.window_ms[1] - self.window_ms[0]
        if self.bin_ms == "auto" and self.bin_search_ms[0] <= 0:
            raise ValueError("bin_search_ms holds the narrowest and widest bin widths tried, in ms, > 0")
        if self.bin_ms == "auto" and span / self.bin_search_ms[0] > MAX_BINS:
            raise ValueError(f"bin_search_ms starts at {self.bin_search_ms[0]:g} ms, which gives "
                             f"{span / self.bin_search_ms[0]:.3g} bins over window_ms; at most {MAX_BINS} bins")
        if isinstance(self.kernel_ms, float) and self.kernel_ms > span:
            raise ValueError(f"kernel_ms ({self.kernel_ms:g} ms) is wider than window_ms ({span:g} ms)")
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
        if self.normalise != "none" and self.measure == "z_score":
            raise ValueError("z-scores are already relative to the baseline: normalise = 'none' with them")
        if self.normalise == "baseline" and self.window_ms[0] >= 0 and self.baseline_ms is None:
            raise ValueError("normalise = 'baseline' needs pre-stimulus bins: start window_ms before 0")
        if self.measure == "z_score" and self.window_ms[0] >= 0 and self.baseline_ms is None:
            raise ValueError("measure = 'z_score' needs pre-stimulus bins: start window_ms before 0")
        return self

    def windows(self) -> dict[str, tuple[float, float]]:
        return {"window_ms": self.window_ms} | ({"baseline_ms": self.baseline_ms} if self.baseline_ms else {})


class LevelResponsePanel(SummaryPanel):
    """``kind = "level_response"``: evoked response vs level, with a test against baseline and an
    optional Naka-Rushton fit."""

    kind: Literal["level_response"]
    measure: Literal["spikes_per_s", "count"] = "spikes_per_s"
    subtract_baseline: bool = False
    error: Literal["sem", "bootstrap"] = "sem"
    test: Literal["wilcoxon", "none"] = "wilcoxon"
    zero_differences: Literal["drop", "keep", "split"] = "drop"
    alpha: Probability = 0.05
    fit: Literal["none", "naka_rushton"] = "none"

    def fitted_model(self) -> str | None:
        return None if self.fit == "none" else self.fit

    @model_validator(mode="after")
    def _equal_windows(self) -> "LevelResponsePanel":
        lengths = (self.response_ms[1] - self.response_ms[0], self.baseline_ms[1] - self.baseline_ms[0])
        compared = self.test != "none" or self.subtract_baseline
        if compared and self.measure == "count" and abs(lengths[0] - lengths[1]) > 1e-9:
            raise ValueError(f"measure = 'count' compares spike counts, so response_ms and baseline_ms must be "
                             f"equally long (got {lengths[0]:g} and {lengths[1]:g} ms); 'spikes_per_s' compares "
                             "rates and allows windows of any lengths")
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
    fit_levels: Literal["responsive", "all"] = "responsive"
    zero_differences: Literal["drop", "keep", "split"] = "drop"
    alpha: Probability = 0.05

    @model_validator(mode="after")
    def _baseline_bins(self) -> "LatencyPanel":
        span = max(self.response_ms[1], self.baseline_ms[1]) - min(self.response_ms[0], self.baseline_ms[0])
        if span / self.bin_ms > MAX_BINS:
            raise ValueError(f"{self.bin_ms:g}-ms bins give {span / self.bin_ms:.3g} bins over baseline_ms and "
                             f"response_ms; at most {MAX_BINS} bins per histogram")
        bins = (self.baseline_ms[1] - self.baseline_ms[0]) / self.bin_ms
        if self.method == "threshold" and bins < 2 - 1e-9:
            raise ValueError(f"the threshold method estimates the baseline SD from its bins: baseline_ms must hold "
                             f"at least two bins of bin_ms (got {bins:.3g} bins of {self.bin_ms:g} ms)")
        return self

    def fitted_model(self) -> str | None:
        return None if self.fit == "none" else self.fit


class PopulationHeatmapPanel(PanelBase):
    """``kind = "population_heatmap"``: one row per unit, time on x, each unit's rate as colour:
    z-scored against the unit's own baseline (``scale = "z_score"``) or as a fraction of its own
    peak (``"peak"``), averaged over the panel's ``levels`` (every level presented when not set;
    each level weighs the same). Rows are sorted by ``sort_by``: the median first-spike latency in
    ``response_ms``, the time of the rate's peak in ``response_ms``, the unit's name, or a column of
    the source's per-unit table (``sort_by = "table"`` with ``sort_column``), or a parameter of each
    unit's own Naka-Rushton fit to its response in ``response_ms`` (``sort_by = "fit"`` with
    ``sort_parameter``; units whose fit failed come last, and poorly constrained ones are noted)."""

    kind: Literal["population_heatmap"]
    units: Annotated[list[str], Field(min_length=2)] | Literal["all"] = "all"
    window_ms: WindowMs = (-50.0, 150.0)
    bin_ms: PositiveMs = 5.0
    scale: Literal["z_score", "peak"] = "z_score"
    baseline_ms: WindowMs | None = None
    response_ms: WindowMs = (0.0, 50.0)
    sort_by: Literal["latency", "peak_time", "name", "table", "fit"] = "latency"
    sort_column: str | None = None
    sort_parameter: Literal["L50", "n", "Rmax", "R0"] | None = None
    colour_limit: Magnitude | None = None
    y_label: Text | None = None

    @model_validator(mode="after")
    def _heatmap(self) -> "PopulationHeatmapPanel":
        n = (self.window_ms[1] - self.window_ms[0]) / self.bin_ms
        if n > MAX_BINS or abs(n - round(n)) > 1e-6 * max(1.0, n):
            raise ValueError(f"window_ms [{self.window_ms[0]:g}, {self.window_ms[1]:g}] must hold a whole number "
                             f"of bins, at most {MAX_BINS} ({n:.3g} bins of {self.bin_ms:g} ms)")
        baseline = self.baseline_ms or (self.window_ms[0], 0.0)
        if self.scale == "z_score" and not (self.window_ms[0] <= baseline[0] and baseline[1] <= 0.0
                                            and (baseline[1] - baseline[0]) >= 2 * self.bin_ms - 1e-9):
            raise ValueError(f"scale = 'z_score' needs a baseline of at least two bins inside window_ms, ending by "
                             f"onset (0 ms): got baseline {list(baseline)} with {self.bin_ms:g}-ms bins")
        if not (self.window_ms[0] <= self.response_ms[0] < self.response_ms[1] <= self.window_ms[1]):
            raise ValueError(f"response_ms must lie inside window_ms, got {list(self.response_ms)}")
        if (self.sort_by == "table") != (self.sort_column is not None):
            raise ValueError("sort_by = 'table' sorts by a column of the per-unit table: name it with sort_column "
                             "(and set sort_column only with sort_by = 'table')")
        if (self.sort_by == "fit") != (self.sort_parameter is not None):
            raise ValueError("sort_by = 'fit' sorts by a parameter of each unit's Naka-Rushton fit: name it with "
                             "sort_parameter (L50, n, Rmax or R0), and set sort_parameter only with sort_by = 'fit'")
        if self.unit is not None:
            raise ValueError("a population heatmap shows several units: use units = [...] or units = 'all'")
        if self.conditions is not None:
            raise ValueError("a heatmap shows one condition (its colour is already the rate): draw one heatmap per "
                             "condition, each with keep.where")
        return self

    def fitted_model(self) -> str | None:
        return "naka_rushton" if self.sort_by == "fit" else None

    def windows(self) -> dict[str, tuple[float, float]]:
        return {"window_ms": self.window_ms, "response_ms": self.response_ms} | (
            {"baseline_ms": self.baseline_ms} if self.baseline_ms else {})


class PopulationResponsePanel(SummaryPanel):
    """``kind = "population_response"``: the response vs level of many units at once. Each unit's
    mean evoked rate per level (less its baseline rate with ``subtract_baseline``) is divided by
    its own maximum over the levels (``normalise = "max"``) or by the maximum of its own
    Naka-Rushton fit (``"fit_max"``, R0 + Rmax); the population point per level is the mean ± SEM
    across units (``summary = "mean_sem"``) or the median and interquartile range
    (``"median_iqr"``), with a Naka-Rushton fit to the population points (``fit``). Units whose
    own fit fails (with ``fit_max``) are left out (``failed_fits = "leave_out"``) or normalised
    to their maximum instead (``"use_max"``), and counted either way."""

    kind: Literal["population_response"]
    units: Annotated[list[str], Field(min_length=2)] | Literal["all"] = "all"
    measure: Literal["spikes_per_s"] = "spikes_per_s"
    subtract_baseline: bool = True
    normalise: Literal["max", "fit_max"] = "max"
    summary: Literal["mean_sem", "median_iqr"] = "mean_sem"
    fit: Literal["none", "naka_rushton"] = "naka_rushton"
    failed_fits: Literal["leave_out", "use_max"] = "leave_out"
    alpha: Probability = 0.05           # significance of the paired tests between conditions, after correction

    @model_validator(mode="after")
    def _population(self) -> "PopulationResponsePanel":
        if self.normalise == "fit_max" and self.fit == "none":
            raise ValueError("normalise = 'fit_max' divides by each unit's fitted maximum: set fit = 'naka_rushton'")
        if self.unit is not None:
            raise ValueError("a population response shows several units: use units = [...] or units = 'all'")
        if self.small_multiples:
            raise ValueError("a population response is one curve across units: small_multiples is for "
                             "level_response and latency")
        return self

    def colours_units(self) -> bool:
        return False                 # units are thin grey lines or points of one colour

    def fitted_model(self) -> str | None:
        return None if self.fit == "none" else self.fit


class UnitDistributionPanel(SummaryPanel):
    """``kind = "unit_distribution"``: one per-unit quantity across units, as points (one per unit)
    with the median and interquartile range, grouped by source (session) with ``group_by =
    "source"``. Quantities come from each unit's own response-level analysis (as
    ``level_response`` computes it, with ``response_ms``, ``baseline_ms``, ``subtract_baseline``):
    the Naka-Rushton parameters ``L50``, ``n``, ``Rmax``, ``R0``, or ``threshold`` (the lowest
    level whose corrected test against baseline is significant); or from each unit's first-spike
    latencies (as ``latency`` computes them): ``latency``, the median at ``at_level``, or the
    Pieron parameters ``t0``, ``k``, ``beta``. ``view = "cumulative"`` draws each group's
    cumulative distribution (the fraction of units at or below each value) instead of points.
    Units whose fit is poorly
    constrained are drawn open and counted (``poorly_constrained = "apart"``), left out and
    counted (``"leave_out"``), or drawn as the others (``"include"``); units whose fit failed have no
    value and are counted. With two sources, ``test = "mann_whitney"`` compares them (two-sided
    Mann-Whitney U) with the rank-biserial correlation as effect size and its bootstrap interval.
    With ``group_by = "condition"`` the groups are the panel's ``conditions`` (each unit's value
    in each condition), compared by the paired two-sided Wilcoxon signed-rank test across the
    units with a value in both, with the matched-pairs rank-biserial correlation."""

    kind: Literal["unit_distribution"]
    units: Annotated[list[str], Field(min_length=2)] | Literal["all"] = "all"
    quantity: Literal["L50", "n", "Rmax", "R0", "threshold", "latency", "t0", "k", "beta"] = "L50"
    at_level: Level | None = None
    view: Literal["strip", "cumulative"] = "strip"
    group_by: Literal["none", "source", "condition"] = "none"
    poorly_constrained: Literal["apart", "leave_out", "include"] = "apart"
    test: Literal["mann_whitney", "none"] = "none"
    subtract_baseline: bool = False
    measure: Literal["spikes_per_s"] = "spikes_per_s"
    zero_differences: Literal["drop", "keep", "split"] = "drop"
    alpha: Probability = 0.05

    @model_validator(mode="after")
    def _groups(self) -> "UnitDistributionPanel":
        if self.test != "none" and self.group_by == "none":
            raise ValueError("a test compares groups: set group_by = 'source' (two pooled sources)")
        if (self.group_by == "condition") != (self.conditions is not None):
            raise ValueError("group_by = 'condition' groups the units' values by the panel's conditions: set both "
                             "(conditions = { column = ... } and group_by = 'condition')")
        if self.group_by == "condition" and self.test != "none":
            raise ValueError("conditions are compared within units (paired Wilcoxon signed-rank), set by "
                             "conditions.test; test = 'mann_whitney' compares independent groups (sources)")
        if self.small_multiples:
            raise ValueError("a distribution is one axes across units: small_multiples is for level_response "
                             "and latency")
        if (self.quantity == "latency") != (self.at_level is not None):
            raise ValueError("quantity = 'latency' is the median first-spike latency at one level: set at_level "
                             "(and at_level only with it)")
        if self.unit is not None:
            raise ValueError("a distribution across units shows several units: use units = [...] or units = 'all'")
        return self

    def colours_units(self) -> bool:
        return False                 # units are thin grey lines or points of one colour

    def fitted_model(self) -> str | None:
        if self.quantity in ("threshold", "latency"):
            return None
        return "pieron" if self.quantity in ("t0", "k", "beta") else "naka_rushton"


PANEL_MODELS = (RasterPanel, PsthPanel, LevelResponsePanel, LatencyPanel, PopulationHeatmapPanel,
                PopulationResponsePanel, UnitDistributionPanel)

Panel = Annotated[Union[PANEL_MODELS], Field(discriminator="kind")]

FIT_PARAMETERS = {"naka_rushton": 4, "pieron": 3}
