"""The one table of panel kinds: kind -> parameter model, compute function, draw function.

Adding a kind: a model in spec/models.py (and in the ``Panel`` union), a compute function
returning a tidy table, a draw function taking (axes by level, table, panel, style), one line
here, one test file. Nothing registers itself on import.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from figspec.compute.psth import psth_table
from figspec.compute.raster import raster_table
from figspec.draw.psth import draw_psth
from figspec.draw.raster import draw_raster
from figspec.spec.models import PsthPanel, RasterPanel


@dataclass(frozen=True)
class PanelKind:
    model: type
    compute: Callable
    draw: Callable
    default_title: str


PANEL_KINDS: dict[str, PanelKind] = {
    "raster": PanelKind(RasterPanel, raster_table, draw_raster, "Spikes"),
    "psth": PanelKind(PsthPanel, psth_table, draw_psth, "Firing rate"),
}
