"""Step 2: load the style and every data source, check what needs the data, and write back
into each panel what figspec decides (its source and unit, automatic widths)."""

from __future__ import annotations

import difflib
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from figspec.data.readers import load_source
from figspec.data.recording import Recording
from figspec.errors import DataError, Problem, UserError
from figspec.registry import kind_of
from figspec.spec.loader import LoadedSpec
from figspec.spec.models import source_name
from figspec.spec.panel_base import PanelBase
from figspec.spec.style import Style
from figspec.spec.style_files import ResolvedStyle, resolve_style


@dataclass(frozen=True)
class Resolved:
    """A spec whose data is loaded and whose panels are complete: each names its source and
    unit, and every automatic choice is replaced by the value chosen."""

    spec: LoadedSpec
    recordings: dict[str, Recording]
    panels: tuple[PanelBase, ...]
    style: Style
    style_sources: tuple = ()

    def recording(self, panel: PanelBase) -> Recording:
        return self.recordings[panel.source]


def _located(spec: LoadedSpec, err: UserError) -> UserError:
    return type(err)([spec.locate(p) for p in err.problems])


def resolve(spec: LoadedSpec, style: str | None = None) -> Resolved:
    """The resolved spec (``style`` overrides the spec's own style)."""
    resolved_style = load_style(spec, style)
    if spec.model.figure.width_mm is None:     # the style's default width
        figure = spec.model.figure.model_copy(update={"width_mm": resolved_style.style.figure.width_mm})
        spec = replace(spec, model=spec.model.model_copy(update={"figure": figure}))
    recordings = load_recordings(spec)
    panels = [complete_panel(spec, recordings, i) for i in range(len(spec.model.panels))]
    problems = [p for _, found in panels for p in found]
    if problems:
        raise spec.error(problems, DataError)
    return Resolved(spec=spec, recordings=recordings, panels=tuple(p for p, _ in panels),
                    style=resolved_style.style, style_sources=resolved_style.sources)


def load_style(spec: LoadedSpec, style: str | None) -> ResolvedStyle:
    name, folder = (style, Path.cwd()) if style else (spec.model.figure.style, spec.folder)
    try:
        return resolve_style(name, folder, spec.model.style, spec.path, spec.text)
    except UserError as err:
        raise _located(spec, err) from None


def load_recordings(spec: LoadedSpec) -> dict[str, Recording]:
    recordings = {}
    for name, src in spec.model.sources.items():
        try:
            recordings[name] = load_source(src, spec.folder, ("sources", name))
        except UserError as err:
            raise _located(spec, err) from None
    return recordings


def complete_panel(spec: LoadedSpec, recordings: dict[str, Recording], i: int) -> tuple[PanelBase, list[Problem]]:
    """(the panel with its source, unit and automatic choices filled in; its data problems)."""
    panel = spec.model.panels[i]
    src = source_name(spec.model, panel)
    rec = recordings[src]
    unit, problems = _unit(panel, rec, src)
    panel = panel.model_copy(update={"source": src, "unit": unit})
    problems += _level_problems(panel, rec, src) + _window_problems(panel, rec)
    kind = kind_of(panel)
    if not problems:
        problems += kind.check(rec, panel, spec.model.levels)
    if not problems:
        try:
            panel = kind.resolve(rec, panel, spec.model.levels)
        except UserError as err:
            problems += err.problems
    return panel, [replace(p, loc=("panels", i) + p.loc) for p in problems]


def _unit(panel: PanelBase, rec: Recording, src: str) -> tuple[str | None, list[Problem]]:
    if panel.units is not None:
        return None, [p for j, name in enumerate(panel.units) for p in _unit_problems(name, rec, src, ("units", j))]
    if panel.unit is None and len(rec.units) == 1:
        return rec.units[0], []
    if panel.unit is None:
        return None, [Problem(f"source {src!r} holds several units: name one with 'unit' "
                              f"(units: {', '.join(rec.units)})")]
    return panel.unit, _unit_problems(panel.unit, rec, src, ("unit",))


def _unit_problems(unit: str, rec: Recording, src: str, loc: tuple) -> list[Problem]:
    if unit in rec.units:
        return []
    close = difflib.get_close_matches(unit, rec.units, n=1)
    hint = f"; did you mean {close[0]!r}?" if close else f"; units: {', '.join(rec.units)}"
    return [Problem(f"no such unit in source {src!r}{hint}", loc, repr(unit))]


def _level_problems(panel: PanelBase, rec: Recording, src: str) -> list[Problem]:
    missing = sorted(set(panel.levels or ()) - set(rec.levels.tolist()))
    if not missing:
        return []
    return [Problem(f"levels not presented in source {src!r} (presented: {', '.join(f'{v:g}' for v in rec.levels)})",
                    ("levels",), ", ".join(f"{v:g}" for v in missing))]


def _window_problems(panel: PanelBase, rec: Recording) -> list[Problem]:
    """Windows must lie within one trial: inside the shortest gap between stimulus onsets."""
    onsets = np.sort(rec.trials["onset_s"].to_numpy(dtype=float))
    gaps = np.diff(onsets)
    if onsets.size < 2 or not np.any(gaps > 0):
        return []
    gap_ms = float(np.min(gaps[gaps > 0]) * 1e3)
    return [Problem(f"reaches outside the trial: stimulus onsets are only {gap_ms:.0f} ms apart, so spikes "
                    "there belong to the next or previous trial", (key,), f"[{window[0]:g}, {window[1]:g}]")
            for key, window in panel.windows().items() if window[1] > gap_ms or window[0] < -gap_ms]
