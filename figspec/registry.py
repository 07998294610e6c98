"""The one table of panel kinds: kind -> parameter model, compute function, draw function.

Adding a kind: a model in spec/panels.py (and in the ``Panel`` union), a compute function
``(recording, panel, levels) -> table or {name: table}``, a draw function
``(target, table(s), panel, draw context)``, one line here, one test file. ``rows`` kinds get
one axes per level (``target`` is ``{level: axes}``); ``single`` kinds get one axes. Nothing
registers itself on import.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Literal

from figspec.compute.psth import psth_table
from figspec.compute.raster import raster_table
from figspec.compute.summary import latency_tables, level_response_tables
from figspec.draw.psth import draw_psth
from figspec.draw.raster import draw_raster
from figspec.draw.summary import draw_latency, draw_level_response
from figspec.spec.panels import LatencyPanel, LevelResponsePanel, PsthPanel, RasterPanel


@dataclass(frozen=True)
class PanelKind:
    model: type
    compute: Callable
    draw: Callable
    layout: Literal["rows", "single"]
    default_title: str


PANEL_KINDS: dict[str, PanelKind] = {
    "raster": PanelKind(RasterPanel, lambda rec, panel, levels: raster_table(rec, panel), draw_raster,
                        "rows", "Spikes"),
    "psth": PanelKind(PsthPanel, lambda rec, panel, levels: psth_table(rec, panel), draw_psth,
                      "rows", "Firing rate"),
    "level_response": PanelKind(LevelResponsePanel, level_response_tables, draw_level_response,
                                "single", "Response vs level"),
    "latency": PanelKind(LatencyPanel, latency_tables, draw_latency, "single", "Latency vs level"),
}
