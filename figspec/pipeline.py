"""The render pipeline as named steps: load -> resolve -> compute -> draw -> save.

Each step returns something a test or a notebook can stop at and inspect; ``render`` and
``check`` chain them. Validation happens inside ``load`` (model and cross checks) and
``resolve`` (checks that need the data).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, replace
from pathlib import Path
from typing import TYPE_CHECKING, Sequence

import numpy as np
import pandas as pd

from figspec import __version__
from figspec.compute.stimulus import stimulus_table
from figspec.data.recording import Recording
from figspec.data.sources import load_source
from figspec.errors import DataError, Problem, UserError
from figspec.registry import PANEL_KINDS
from figspec.spec.loader import LoadedSpec, load_spec
from figspec.spec.models import source_name
from figspec.spec.panels import FIT_PARAMETERS, PanelBase
from figspec.spec.style import Style
from figspec.spec.style_files import resolve_style

if TYPE_CHECKING:
    from matplotlib.figure import Figure


@dataclass(frozen=True)
class Resolved:
    """A spec whose data is loaded and whose panels name their unit and source explicitly."""

    spec: LoadedSpec
    recordings: dict[str, Recording]
    panels: tuple[PanelBase, ...]
    style: Style
    style_sources: tuple = ()

    def recording(self, panel: PanelBase) -> Recording:
        return self.recordings[panel.source]


@dataclass(frozen=True)
class Tables:
    """Computed tables: one per panel, and each panel's stimulus windows."""

    panels: dict[str, pd.DataFrame | dict[str, pd.DataFrame]]
    stimulus: dict[str, pd.DataFrame]

    def for_export(self) -> dict[str, pd.DataFrame]:
        """The tables written as source data: each panel's (``<panel>`` or ``<panel>_<part>``),
        and the stimulus windows of the level-repeated panels."""
        out: dict[str, pd.DataFrame] = {}
        for name, table in self.panels.items():
            if isinstance(table, dict):
                out.update({f"{name}_{part}": t for part, t in table.items()})
            else:
                out[name] = table
        if self.stimulus:
            frames = list(self.stimulus.values())
            out["stimulus"] = pd.concat(frames, ignore_index=True).drop_duplicates(ignore_index=True)
        return out


def load(path: str | Path) -> LoadedSpec:
    """Step 1: read and validate the spec file."""
    return load_spec(path)


def resolve(spec: LoadedSpec, style: str | None = None) -> Resolved:
    """Step 2: load the style (``style`` overrides the spec's) and every data source; check
    what needs the data."""
    try:
        name, folder = (style, Path.cwd()) if style else (spec.model.figure.style, spec.folder)
        resolved_style = resolve_style(name, folder, spec.model.style, spec.path, spec.text)
    except UserError as err:
        raise type(err)([spec.locate(p) for p in err.problems]) from None
    style = resolved_style.style
    if spec.model.figure.width_mm is None:     # the style's default width
        figure = spec.model.figure.model_copy(update={"width_mm": style.figure.width_mm})
        spec = replace(spec, model=spec.model.model_copy(update={"figure": figure}))
    model = spec.model
    recordings: dict[str, Recording] = {}
    for name, src in model.sources.items():
        try:
            recordings[name] = load_source(src, spec.folder, ("sources", name))
        except UserError as err:
            raise type(err)([spec.locate(p) for p in err.problems]) from None
    problems: list[Problem] = []
    panels = []
    for i, panel in enumerate(model.panels):
        src = source_name(model, panel)
        rec = recordings[src]
        unit = panel.unit
        many = getattr(panel, "units", None)
        if many is not None:
            for j, name in enumerate(many):
                problems += _unit_problems(name, rec, src, ("panels", i, "units", j))
        elif unit is None and len(rec.units) == 1:
            unit = rec.units[0]
        elif unit is None:
            problems.append(Problem(f"source {src!r} holds several units: name one with 'unit' "
                                    f"(units: {', '.join(rec.units)})", ("panels", i)))
        else:
            problems += _unit_problems(unit, rec, src, ("panels", i, "unit"))
        shown = rec.levels if panel.levels is None else np.asarray(panel.levels, dtype=float)
        if panel.levels is not None:
            missing = sorted(set(panel.levels) - set(rec.levels.tolist()))
            if missing:
                problems.append(Problem(f"levels not presented in source {src!r} "
                                        f"(presented: {', '.join(f'{v:g}' for v in rec.levels)})",
                                        ("panels", i, "levels"), ", ".join(f"{v:g}" for v in missing)))
        fit = getattr(panel, "fit", "none")
        if fit != "none" and len(shown) < FIT_PARAMETERS[fit]:
            problems.append(Problem(f"a {fit} fit has {FIT_PARAMETERS[fit]} parameters but the panel shows "
                                    f"only {len(shown)} levels", ("panels", i, "fit"), repr(fit)))
        if getattr(panel, "level_axis", "linear") == "log" and np.any(shown <= 0):
            problems.append(Problem("a logarithmic level axis needs every level > 0",
                                    ("panels", i, "level_axis"), f"levels from {shown.min():g}"))
        problems += _window_problems(panel, rec, i)
        panels.append(panel.model_copy(update={"source": src, "unit": unit}))
    if problems:
        raise spec.error(problems, DataError)
    return Resolved(spec=spec, recordings=recordings, panels=tuple(panels), style=style,
                    style_sources=resolved_style.sources)


def _unit_problems(unit: str, rec: Recording, src: str, loc: tuple) -> list[Problem]:
    if unit in rec.units:
        return []
    close = difflib.get_close_matches(unit, rec.units, n=1)
    hint = f"; did you mean {close[0]!r}?" if close else f"; units: {', '.join(rec.units)}"
    return [Problem(f"no such unit in source {src!r}{hint}", loc, repr(unit))]


def _window_problems(panel: PanelBase, rec: Recording, i: int) -> list[Problem]:
    """Windows must lie within one trial: inside the shortest gap between stimulus onsets."""
    onsets = np.sort(rec.trials["onset_s"].to_numpy(dtype=float))
    if onsets.size < 2 or not np.any(np.diff(onsets) > 0):
        return []
    gap_ms = float(np.min(np.diff(onsets)[np.diff(onsets) > 0]) * 1e3)
    problems = []
    for key in ("window_ms", "response_ms", "baseline_ms"):
        window = getattr(panel, key, None)
        if window is not None and (window[1] > gap_ms or window[0] < -gap_ms):
            problems.append(Problem(f"reaches outside the trial: stimulus onsets are only {gap_ms:.0f} ms "
                                    "apart, so spikes there belong to the next or previous trial",
                                    ("panels", i, key), f"[{window[0]:g}, {window[1]:g}]"))
    return problems


def compute(resolved: Resolved) -> Tables:
    """Step 3: every panel's table (pure functions from the registry) and, for panels with time
    on x, the stimulus windows of the levels (and units) they show."""
    model = resolved.spec.model
    panels, stim = {}, {}
    for i, panel in enumerate(resolved.panels):
        rec = resolved.recording(panel)
        kind = PANEL_KINDS[panel.kind]
        try:
            panels[panel.name] = kind.compute(rec, panel, model.levels)
        except UserError as err:
            raise type(err)([resolved.spec.locate(replace(p, loc=("panels", i) + p.loc))
                             for p in err.problems]) from None
        if kind.layout != "rows":
            continue
        units = panel.units if getattr(panel, "units", None) and panel.repeat == "unit" else \
            [(getattr(panel, "units", None) or [panel.unit])[0]]
        table = pd.concat([stimulus_table(rec, u, model.stimulus) for u in units], ignore_index=True)
        if panel.levels is not None:
            table = table[table["level"].isin(panel.levels)].reset_index(drop=True)
        stim[panel.name] = table
    return Tables(panels=panels, stimulus=stim)


def notes(resolved: Resolved) -> list[str]:
    """Things a reviewer should know that are not errors (printed by ``check`` and ``render``)."""
    out = []
    for i, panel in enumerate(resolved.panels):
        if panel.kind == "psth" and not panel.lock_y and panel.arrange != "overlay":
            out.append(f"{resolved.spec.path}: panels[{i}] ({panel.name}): lock_y = false, so its rows do "
                       "not share one y scale: compare heights only within a row")
    return out


def _plan(resolved: Resolved, tables: Tables, panel: PanelBase):
    """The groups (levels or units) a time panel repeats over, in display order, and their labels."""
    from figspec.draw.compose import PanelPlan

    model = resolved.spec.model
    kind = PANEL_KINDS[panel.kind]
    table = tables.panels[panel.name]
    title = panel.title if panel.title is not None else kind.default_title
    if kind.layout != "rows":
        return PanelPlan(panel, table, None, kind.draw, title, [], [])
    stim = tables.stimulus[panel.name]
    counts = model.layout is None or model.layout.trial_counts
    groups: list = []
    labels: list[str] = []
    if panel.arrange != "overlay":
        if panel.repeat == "level":
            groups = sorted({float(v) for v in table["level"]},
                            reverse=model.levels.order == "high_at_top" and panel.arrange == "rows")
            n = stim.groupby("level")["n_trials"].first()
            labels = [model.levels.label(g) + (f"\nn = {int(n[g])}" if counts else "") for g in groups]
        else:
            groups = list(panel.units)
            n = stim.groupby("unit")["n_trials"].first()
            labels = [g + (f"\nn = {int(n[g])}" if counts else "") for g in groups]
    y_label = None
    if panel.kind == "psth":
        from figspec.draw.psth import rate_label

        y_label = rate_label(table, panel)
    return PanelPlan(panel, table, stim, kind.draw, title, groups, labels, y_label)


def draw(resolved: Resolved, tables: Tables) -> "Figure":
    """Step 4: lay out the panels and draw each from its table (call inside ``styled``)."""
    from figspec.draw.compose import compose
    from figspec.draw.context import DrawContext, check_fonts

    check_fonts(resolved.style)
    model = resolved.spec.model
    ctx = DrawContext(style=resolved.style, levels=model.levels)
    return compose(model, [_plan(resolved, tables, p) for p in resolved.panels], ctx)


def save(resolved: Resolved, tables: Tables, fig: "Figure", outdir: str | Path,
         formats: Sequence[str] | None = None) -> list[Path]:
    """Step 5: write the figure in every format, the source-data tables, the statistics
    summary, the legend snippet and the manifest, as one set (see ``output.files.write_all``)."""
    from figspec.output.files import figure_bytes, table_bytes, write_all
    from figspec.output.report import legend_snippet, manifest, statistics_summary
    from figspec.provenance import inputs, parameters

    model = resolved.spec.model
    outdir = Path(outdir)
    stem = outdir / resolved.spec.path.stem
    data_dir = outdir / f"{stem.name}_data"
    sources = inputs(resolved)
    provenance = f"figspec {__version__}; " + "; ".join(f"{i['role']} sha256:{i['sha256']}" for i in sources)
    payload: dict[Path, bytes] = {}
    for fmt in formats or model.figure.formats:
        payload[stem.with_suffix(f".{fmt}")] = figure_bytes(fig, fmt, model.figure.png_dpi,
                                                            f"figspec {__version__}", provenance)
    for name, table in tables.for_export().items():
        payload[data_dir / f"{name}.csv"] = table_bytes(table)
    payload[data_dir / "statistics.csv"] = table_bytes(statistics_summary(list(resolved.panels), tables.panels))
    payload[data_dir / "legend.md"] = legend_snippet(model.figure.title, list(resolved.panels), tables.panels,
                                                     model.levels.unit).encode()
    outputs = {p.relative_to(outdir).as_posix(): data for p, data in payload.items()}
    payload[data_dir / "manifest.json"] = manifest(sources, outputs, parameters(resolved))
    return write_all(payload)


def check(path: str | Path, style: str | None = None) -> Resolved:
    """Validate a spec and resolve its data without drawing anything."""
    return resolve(load(path), style)


@dataclass(frozen=True)
class Rendered:
    """What a render wrote, and the preflight findings when a profile was checked."""

    files: list[Path]
    profile: object | None = None
    findings: tuple = ()


def _profile(resolved: Resolved, name: str | None):
    from figspec.spec.profile import load_profile

    name = name or resolved.spec.model.figure.profile
    if name is None:
        return None
    try:
        return load_profile(name, resolved.spec.folder)
    except UserError as err:
        raise type(err)([resolved.spec.locate(p) for p in err.problems]) from None


def render(path: str | Path, outdir: str | Path, formats: Sequence[str] | None = None,
           resolved: Resolved | None = None, profile: str | None = None) -> Rendered:
    """Load, resolve, compute, draw and save one spec; preflight it against ``profile`` (or the
    spec's ``figure.profile``) when there is one. Pass ``resolved`` to skip loading again what
    :func:`check` already loaded."""
    from figspec.draw.context import styled

    resolved = resolved or resolve(load(path))
    target = _profile(resolved, profile)
    tables = compute(resolved)
    with styled(resolved.style):
        fig = draw(resolved, tables)
        written = save(resolved, tables, fig, outdir, formats)
        if target is None:
            return Rendered(written)
        files = {p.suffix[1:]: p.read_bytes() for p in written if p.suffix in (".svg", ".pdf", ".png")}
        return Rendered(written, target, tuple(_preflight(fig, files, target)))


def preflight(resolved: Resolved, profile: str | None = None) -> Rendered:
    """Draw and render a spec in memory (every format, PDF always) and check it against a
    profile, writing nothing."""
    from figspec.draw.context import styled
    from figspec.output.files import figure_bytes

    target = _profile(resolved, profile)
    if target is None:
        raise DataError(resolved.spec.locate(Problem("no preflight profile: name one after --preflight or "
                                                     "set figure.profile", ("figure", "profile"))))
    model = resolved.spec.model
    with styled(resolved.style):
        fig = draw(resolved, compute(resolved))
        files = {fmt: figure_bytes(fig, fmt, model.figure.png_dpi, f"figspec {__version__}")
                 for fmt in dict.fromkeys(list(model.figure.formats) + ["pdf"])}
        return Rendered([], target, tuple(_preflight(fig, files, target)))


def _preflight(fig, files, profile):
    from figspec.output.preflight import preflight as run

    return run(fig, files, profile)


def render_in_memory(resolved: Resolved, formats: Sequence[str] = ("png",)) -> tuple[dict[str, bytes], Tables]:
    """Draw a resolved spec and return its files (format -> bytes) and tables, writing nothing."""
    from figspec.draw.context import styled
    from figspec.output.files import figure_bytes

    model = resolved.spec.model
    tables = compute(resolved)
    with styled(resolved.style):
        fig = draw(resolved, tables)
        files = {fmt: figure_bytes(fig, fmt, model.figure.png_dpi, f"figspec {__version__}") for fmt in formats}
    return files, tables
