"""Step 2: load the style and every data source, check what needs the data, and write back
into each panel what figspec decides (its source and unit, automatic widths)."""

from __future__ import annotations

import difflib
import warnings
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from figspec.data.conditions import split_conditions
from figspec.data.keep import select_trials
from figspec.data.pooling import pool, pooled_name
from figspec.data.readers import load_source
from figspec.data.recording import Recording
from figspec.errors import DataError, FigspecWarning, Problem, UserError, toml_text
from figspec.registry import kind_of
from figspec.spec.fields import MAX_AXES, MAX_PIXELS
from figspec.spec.layout import panel_box_mm
from figspec.spec.loader import LoadedSpec
from figspec.spec.models import sham_levels, source_name
from figspec.spec.panel_base import PanelBase
from figspec.spec.style import Style
from figspec.spec.style_files import ResolvedStyle, resolve_style


@dataclass(frozen=True)
class Resolved:
    """A spec whose data is loaded and whose panels are complete: each names its source and
    unit, and every automatic choice is replaced by the value chosen. ``panel_recordings``
    holds each panel's data: its source's (or its pooled sources'), less the trials its own
    selection leaves out."""

    spec: LoadedSpec
    recordings: dict[str, Recording]
    panels: tuple[PanelBase, ...]
    style: Style
    style_sources: tuple = ()
    panel_recordings: dict[str, Recording] | None = None
    scale: float = 1.0               # the page's scale when drawn in another style than the spec's
    panel_conditions: dict | None = None     # panel name -> its conditions (data.conditions.Condition), if split

    def recording(self, panel: PanelBase) -> Recording:
        if self.panel_recordings is not None and panel.name in self.panel_recordings:
            return self.panel_recordings[panel.name]
        return self.recordings[panel.source]


def _located(spec: LoadedSpec, err: UserError) -> UserError:
    return type(err)([spec.locate(p) for p in err.problems])


def resolve(spec: LoadedSpec, style: str | None = None, frames: dict | None = None) -> Resolved:
    """The resolved spec (``style`` overrides the spec's own style; ``frames`` gives sources'
    tables as DataFrames instead of files: source name -> (spikes, trials))."""
    resolved_style = load_style(spec, style)
    scale, own = 1.0, None
    if style and style != spec.model.figure.style:
        own = load_style(spec, None).style
        scale = reflow_scale(spec, own, resolved_style.style)
        resolved_style = replace(resolved_style, style=resolved_style.style.with_sizes_of(own, scale))
    figure = spec.model.figure
    if scale != 1.0:                  # the spec's own page (its width, or its style's), scaled
        own_width = figure.width_mm or own.figure.width_mm
        figure = figure.model_copy(update={"width_mm": min(own_width * scale, 2000.0),
                                           "height_mm": min(figure.height_mm * scale, 2000.0)})
    elif figure.width_mm is None:     # the style's default width
        figure = figure.model_copy(update={"width_mm": resolved_style.style.figure.width_mm})
    spec = replace(spec, model=spec.model.model_copy(update={"figure": figure}))
    recordings = load_recordings(spec, frames or {})
    unknown = [name for name in spec.model.units.names
               if not any(name in rec.units or name in {u.split("/")[-1] for u in rec.units} for rec in recordings.values())]
    if unknown:
        raise spec.error([Problem(f"no unit of this name in any source (units: "
                                  f"{', '.join(sorted({u for r in recordings.values() for u in r.all_units}))})",
                                  ("units", "names", name), toml_text(name)) for name in unknown], DataError)
    done = [complete_panel(spec, recordings, i) for i in range(len(spec.model.panels))]
    problems = [p for _, _, found in done for p in found]
    if problems:
        raise spec.error(problems, DataError)
    conditions = {}
    for i, (p, rec, _) in enumerate(done):
        if p.conditions is not None:
            conditions[p.name], found = split_conditions(rec, p.conditions, p.levels, p.name)
            problems += [replace(f, loc=("panels", i) + f.loc) for f in found]
    if problems:
        raise spec.error(problems, DataError)
    problems = figure_limits(spec.model, [(p, rec) for p, rec, _ in done])
    if problems:
        raise spec.error(problems)
    warn_repeated_colours([p for p, _, _ in done], resolved_style.style)
    fig = spec.model.figure
    done = [(kind_of(p).fit_page(rec, p, (*panel_box_mm(fig.width_mm, fig.height_mm, spec.model.layout,
                                                        list(spec.model.panels), i),
                                          fig.png_dpi, resolved_style.style.raster.tick_height)), rec, found)
            for i, (p, rec, found) in enumerate(done)]
    return Resolved(spec=spec, recordings=recordings, panels=tuple(p for p, _, _ in done),
                    style=resolved_style.style, style_sources=resolved_style.sources,
                    panel_recordings={p.name: rec for p, rec, _ in done}, scale=scale,
                    panel_conditions=conditions)


def reflow_scale(spec: LoadedSpec, own: Style, style: Style) -> float:
    """How much a spec drawn in another style than its own is scaled as a whole: by the ratio
    of the two styles' body text, so the page, its text, lines and gaps grow (or shrink)
    together and the layout the spec was made with stays as it was. A style whose width is a
    limit (a journal column) cannot take a page that would be wider: that is an error saying so."""
    scale = style.font.body_pt / own.font.body_pt
    width = spec.model.figure.width_mm or own.figure.width_mm
    if style.figure.width_is_a_limit and width * scale > style.figure.width_mm * 1.01:
        raise spec.error([Problem(
            f"this spec cannot be drawn in the style named on the command line: keeping its layout at "
            f"{style.font.body_pt:g}-pt text needs a page {width * scale:.0f} mm wide, but that style prints at most "
            f"{style.figure.width_mm:g} mm wide (make a spec for that width: fewer panels side by side)",
            ("figure", "width_mm") if spec.model.figure.width_mm else ("figure", "style"))])
    return scale


def load_style(spec: LoadedSpec, style: str | None) -> ResolvedStyle:
    name, folder = (style, Path.cwd()) if style else (spec.model.figure.style, spec.folder)
    try:
        return resolve_style(name, folder, spec.model.style, spec.path, spec.text)
    except UserError as err:
        if style:                        # named on the command line, not by the spec
            raise type(err)([replace(p, loc=(), message=f"--style {style}: {p.message}") if p.file is None else p
                             for p in err.problems]) from None
        raise pulled_in(spec, _located(spec, err), ("figure", "style"), f"style {name!r}") from None


def pulled_in(spec: LoadedSpec, err: UserError, loc: tuple, what: str) -> UserError:
    """``err`` with one more line at the spec key that pulled in the file(s) it is about."""
    if all(p.file == str(spec.path) for p in err.problems):
        return err
    files = sorted({p.file for p in err.problems if p.file != str(spec.path)})
    return type(err)(err.problems + [spec.locate(Problem(f"{what} is read from {' and '.join(files)}: see the "
                                                         "problem(s) above", loc))])


def load_recordings(spec: LoadedSpec, frames: dict) -> dict[str, Recording]:
    """Every source's recording, reading only the units and selection columns the panels use."""
    model = spec.model
    recordings = {}
    for name, src in model.sources.items():
        users = [p for p in model.panels if name in _sources_of(model, p)]
        units = None if any(p.unit is None and p.units in (None, "all") for p in users) else \
            {u.split("/", 1)[-1] for p in users for u in p.unit_names()}
        where = {c for p in users for c in p.keep.where} | {p.conditions.column for p in users if p.conditions}
        try:
            recordings[name] = load_source(src, spec.folder, ("sources", name), units, where, frames.get(name))
        except UserError as err:
            raise _located(spec, _condition_columns(spec.model, name, err)) from None
    return recordings


def _condition_columns(model, name: str, err: UserError) -> UserError:
    """A condition column the trial table lacks is the panel's mistake: its problem names the
    panel's ``conditions.column`` rather than the source's selection it was read with."""
    problems = []
    for p in err.problems:
        column = p.loc[4] if p.loc[:4] == ("sources", name, "keep", "where") and len(p.loc) == 5 else None
        users = [i for i, q in enumerate(model.panels) if q.conditions is not None and q.conditions.column == column
                 and name in _sources_of(model, q)] if column not in model.sources[name].keep.where else []
        problems.append(replace(p, loc=("panels", users[0], "conditions", "column")) if users else p)
    return type(err)(problems)


def _sources_of(model, panel) -> list[str]:
    named = source_name(model, panel)
    return [named] if isinstance(named, str) else list(named or [])


def complete_panel(spec: LoadedSpec, recordings: dict[str, Recording], i: int):
    """(the panel with its source, unit and automatic choices filled in; its recording; its
    data problems, with key paths from the spec's root)."""
    panel = spec.model.panels[i]
    src = source_name(spec.model, panel)
    rec, problems = _panel_recording(panel, recordings, src)
    unit, units, found = _units(panel, rec, recordings, src)
    problems += found
    panel = panel.model_copy(update={"source": src, "unit": unit, "units": units})
    if not problems:
        problems += _level_problems(panel, rec, src) + extent_problems(panel, rec)
    if not problems:
        warn_empty_windows(panel, rec)
    kind = kind_of(panel)
    if not problems:
        problems += kind.check(rec, panel, spec.model.levels)
    if not problems:
        try:
            panel = kind.resolve(rec, panel, spec.model.levels)
        except UserError as err:
            problems += err.problems
    return panel, rec, [replace(p, loc=("panels", i) + p.loc) for p in problems]


def _panel_recording(panel: PanelBase, recordings: dict[str, Recording], src) -> tuple[Recording, list[Problem]]:
    rec = pool({s: recordings[s] for s in src}, ("source",)) if isinstance(src, list) else recordings[src]
    if panel.keep.empty:
        return rec, []
    keys = ["trial"]
    try:
        keep, removed = select_trials(rec.trials, keys, panel.keep, ("keep",))
    except UserError as err:
        return rec, err.problems
    return rec.keep_trials(keep, tuple((f"panel {panel.name}: {what}", n) for what, n in removed)), []


def _units(panel: PanelBase, rec: Recording, recordings: dict, src) -> tuple:
    """(unit, units, problems) with names as the panel's recording knows them."""
    pooled = isinstance(src, list)
    if panel.units == "all":
        return None, list(rec.units), []
    if panel.units is not None:
        names, problems = [], []
        for j, name in enumerate(panel.units):
            full, found = _unit_name(name, rec, recordings, src, pooled, ("units", j))
            names.append(full or name)
            problems += found
        return None, names, problems
    if panel.unit is None and len(rec.units) == 1:
        return rec.units[0], None, []
    if panel.unit is None:
        return None, None, [Problem(f"source {src!r} holds several units: name one with 'unit' "
                                    f"(units: {', '.join(rec.units)})")]
    full, problems = _unit_name(panel.unit, rec, recordings, src, pooled, ("unit",))
    return full or panel.unit, None, problems


def _unit_name(name: str, rec: Recording, recordings: dict, src, pooled: bool, loc: tuple):
    if pooled:
        full, holders = pooled_name(name, {s: recordings[s] for s in src})
        if full is not None:
            return full, []
        if len(holders) > 1:
            return None, [Problem(f"several pooled sources have this unit: name one of {', '.join(holders)}",
                                  loc, toml_text(name))]
    elif name in rec.units:
        return name, []
    choice = rec.unit_choice
    if choice is not None and name in rec.all_units:
        return None, [Problem(f"unit {name!r} is left out by the unit rule of source {src!r} ({choice.rule}); "
                              f"units kept: {', '.join(choice.kept[:12])}", loc, toml_text(name))]
    close = difflib.get_close_matches(name, rec.all_units, n=1)
    hint = f"; did you mean {close[0]!r}?" if close else f"; units: {', '.join(rec.all_units)}"
    return None, [Problem(f"no such unit in source {src!r}{hint}", loc, toml_text(name))]


def _level_problems(panel: PanelBase, rec: Recording, src) -> list[Problem]:
    missing = sorted(set(panel.levels or ()) - set(rec.levels.tolist()))
    if not missing:
        return []
    return [Problem(f"levels not presented in source {src!r} (presented: {', '.join(f'{v:g}' for v in rec.levels)})",
                    ("levels",), ", ".join(f"{v:g}" for v in missing))]


def warn_empty_windows(panel: PanelBase, rec: Recording) -> None:
    """A unit with spikes of which none falls in any of the panel's windows, in any trial, is
    most likely read with the wrong time unit or clock (a silent unit has no spikes at all)."""
    import warnings

    from figspec.errors import FigspecWarning

    windows = list(panel.windows().values())
    for unit in panel.unit_names():
        if unit not in rec.units:
            continue
        pairs = np.flatnonzero(rec.pair_unit == rec.units.index(unit))
        if pairs.size == 0:
            continue
        ticks = rec.ticks[rec.offsets[pairs[0]]:rec.offsets[pairs[-1] + 1]]      # a unit's pairs are contiguous
        if ticks.size == 0:
            continue
        inside = np.zeros(ticks.size, dtype=bool)
        for start, stop in windows:
            inside |= (ticks >= rec.to_ticks(start)) & (ticks < rec.to_ticks(stop))
        if not inside.any():
            warnings.warn(f"panel {panel.name!r}: none of the {ticks.size} spikes of unit {unit} falls in "
                          f"{' or '.join(f'[{a:g}, {b:g}) ms' for a, b in windows)} of any trial: is the "
                          "source's time_unit right, and are spikes and trial events on the same clock?",
                          FigspecWarning, stacklevel=2)


def extent_problems(panel: PanelBase, rec: Recording) -> list[Problem]:
    """A window must lie within what was recorded of every trial the panel shows."""
    unit_index = [rec.units.index(u) for u in panel.unit_names() if u in rec.units]
    shown = np.unique(rec.pair_trial[np.isin(rec.pair_unit, unit_index)])
    if panel.levels is not None:
        shown = shown[np.isin(rec.trials["level"][shown], panel.levels)]
    lo = rec.trials["extent_lo_ms"][shown]
    hi = rec.trials["extent_hi_ms"][shown]
    problems = []
    for key, (start, stop) in panel.windows().items():
        short = (lo > start) | (hi < stop)
        if short.any():
            problems.append(Problem(
                f"reaches past what was recorded of {int(short.sum())} of {shown.size} trials shown (recorded "
                f"from {np.max(lo):g} to {np.min(hi):g} ms around the alignment event in every trial)",
                (key,), f"[{start:g}, {stop:g}]"))
    return problems


def axes_count(panel: PanelBase, rec: Recording) -> int:
    """How many axes a panel draws: one per level or unit it repeats over, else one."""
    if getattr(panel, "small_multiples", False):
        return len(panel.unit_names())
    if getattr(panel, "arrange", "overlay") == "overlay":
        return 1
    if getattr(panel, "repeat", "level") == "unit":
        return len(panel.units or ())
    return len(panel.levels) if panel.levels is not None else len(rec.levels)


def warn_repeated_colours(panels: list[PanelBase], style: Style) -> None:
    """A panel that tells units apart by colour and shows more units than the palette has colours
    repeats colours (told apart by marker shape, see draw.colours.unit_markers): said before drawing."""
    size = len(style.palette.units)
    for i, p in enumerate(panels):
        by_colour = p.colours_units()
        if by_colour and len(p.unit_names()) > size:
            warnings.warn(f"panels[{i}] ({p.name}) shows {len(p.unit_names())} units but the style's palette has {size} "
                          f"colours: units {size + 1}-{len(p.unit_names())} repeat colours"
                          + (" and differ by marker shape" if not hasattr(p, "arrange") else " (lines differ only by colour)")
                          + "; consider fewer units per panel", FigspecWarning, stacklevel=2)


def figure_limits(model, panels: list[tuple[PanelBase, Recording]]) -> list[Problem]:
    """Limits that keep a figure renderable: its PNG's pixels and its number of axes."""
    problems = []
    fig = model.figure
    pixels = (fig.width_mm / 25.4 * fig.png_dpi) * (fig.height_mm / 25.4 * fig.png_dpi)
    if "png" in fig.formats and pixels > MAX_PIXELS:
        problems.append(Problem(f"{fig.width_mm:g} x {fig.height_mm:g} mm at {fig.png_dpi} dpi is {pixels / 1e6:.0f} "
                                f"million pixels; at most {MAX_PIXELS / 1e6:.0f} million (lower png_dpi or the size)",
                                ("figure", "png_dpi"), str(fig.png_dpi)))
    if model.stimulus.opacity_scale == "log":
        shown = np.concatenate([np.asarray(p.levels if p.levels is not None else rec.levels, dtype=float)
                                for p, rec in panels])
        shown = shown[~np.isin(shown, np.asarray(sorted(sham_levels(model)), dtype=float))]   # drawn unshaded
        if shown.size and shown.min() <= 0:
            problems.append(Problem(f"a logarithmic opacity scale needs levels > 0, but a panel shows level "
                                    f"{shown.min():g}: use opacity_scale = 'linear', or leave that level out with "
                                    "a panel's 'levels'", ("stimulus", "opacity_scale"), "'log'"))
    total = sum(axes_count(p, rec) for p, rec in panels)
    if total > MAX_AXES:
        problems.append(Problem(f"the panels draw {total} axes; at most {MAX_AXES} per figure (split the figure, "
                                "or show fewer levels with 'levels')", ("panels",)))
    return problems
