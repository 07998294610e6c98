"""The one table of panel kinds: kind -> everything figspec knows about it.

An entry names the kind's parameter model, its compute function ``(recording, panel, levels)
-> table or {part: table}``, its draw function ``(target, tables, panel, draw context)``, its
default labels ``(panel, tables, levels) -> Labels`` and whether it draws ``rows`` (one axes
per level or unit: ``target`` is ``{group: axes}``) or a ``single`` axes. Optional hooks, each
with a generic default, say the rest: data limits for shared scales, the write-back of
automatic choices, data checks, ``check`` notes, statistics rows, the legend sentence and how
to read categorical colours for the colour-vision check. Nothing outside the kind's own
modules and this table branches on a kind's name, and nothing registers itself on import.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Literal

from figspec.compute import (latency, level_response, population_heatmap, population_response, psth, raster,
                             unit_distribution)
from figspec.compute.describe import generic_legend, trial_rows
from figspec.draw import latency as latency_art
from figspec.draw import population_heatmap as population_heatmap_art
from figspec.draw import population_response as population_response_art
from figspec.draw import level_response as level_response_art
from figspec.draw import psth as psth_art
from figspec.draw import raster as raster_art
from figspec.draw import unit_distribution as unit_distribution_art
from figspec.draw.colours import marked_categories
from figspec.spec.panels import (LatencyPanel, LevelResponsePanel, PopulationHeatmapPanel, PopulationResponsePanel,
                                 PsthPanel, RasterPanel, UnitDistributionPanel)


def unchanged(rec, panel, levels):
    """Default write-back: the panel needs nothing filled in from the data."""
    return panel


def no_problems(rec, panel, levels) -> list:
    """Default data check: nothing beyond the checks every panel gets."""
    return []


def no_notes(panel) -> list[str]:
    return []


def any_page(rec, panel, box):
    """Default page fit: the panel is drawn the same whatever the page's size and resolution."""
    return panel


def no_limits(panel, tables) -> dict:
    """Default data limits: nothing to share."""
    return {}


def no_comparison(conditions, panel, levels, tables):
    """Default test between conditions: none (the kind draws them side by side only)."""
    return None


@dataclass(frozen=True)
class PanelKind:
    model: type
    compute: Callable
    draw: Callable
    labels: Callable
    layout: Literal["rows", "single"]
    limits: Callable = no_limits
    resolve: Callable = unchanged
    fit_page: Callable = any_page
    check: Callable = no_problems
    notes: Callable = no_notes
    statistics: Callable = trial_rows
    legend: Callable = generic_legend
    categories: Callable = marked_categories
    split: Callable | None = None            # (conditions, panel, levels) -> tables; default: stacked per condition
    compare: Callable = no_comparison        # (conditions, panel, levels, tables) -> tests table (TEST_COLUMNS)


PANEL_KINDS: dict[str, PanelKind] = {
    "raster": PanelKind(RasterPanel, raster.compute, raster_art.draw, raster_art.labels, "rows",
                        limits=raster_art.limits, legend=raster.legend, fit_page=raster.fit_page,
                        split=raster.split),
    "psth": PanelKind(PsthPanel, psth.compute, psth_art.draw, psth_art.labels, "rows", limits=psth_art.limits,
                      resolve=psth.resolve, notes=psth.notes, statistics=psth.statistics, legend=psth.legend),
    "level_response": PanelKind(LevelResponsePanel, level_response.compute, level_response_art.draw,
                                level_response_art.labels, "single", limits=level_response_art.limits,
                                check=level_response.check, statistics=level_response.statistics,
                                legend=level_response.legend, compare=level_response.compare),
    "latency": PanelKind(LatencyPanel, latency.compute, latency_art.draw, latency_art.labels, "single",
                         limits=latency_art.limits, check=latency.check, statistics=latency.statistics,
                         legend=latency.legend, compare=latency.compare),
    "population_heatmap": PanelKind(PopulationHeatmapPanel, population_heatmap.compute, population_heatmap_art.draw,
                                    population_heatmap_art.labels, "single", check=population_heatmap.check,
                                    statistics=population_heatmap.statistics, legend=population_heatmap.legend),
    "population_response": PanelKind(PopulationResponsePanel, population_response.compute,
                                     population_response_art.draw, population_response_art.labels, "single",
                                     limits=population_response_art.limits, check=population_response.check,
                                     statistics=population_response.statistics, legend=population_response.legend,
                                     split=population_response.split, compare=population_response.compare),
    "unit_distribution": PanelKind(UnitDistributionPanel, unit_distribution.compute, unit_distribution_art.draw,
                                   unit_distribution_art.labels, "single", check=unit_distribution.check,
                                   statistics=unit_distribution.statistics, legend=unit_distribution.legend,
                                   split=unit_distribution.split, compare=unit_distribution.compare),
}


def kind_of(panel) -> PanelKind:
    return PANEL_KINDS[panel.kind]

