"""The render pipeline as named steps: load -> resolve -> compute -> draw -> save.

Each step returns something a test or a notebook can stop at and inspect; ``render`` and
``check`` chain them. Validation happens inside ``load`` (model and cross checks) and
``resolve`` (checks that need the data).
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
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
from figspec.spec.models import PanelBase, source_name
from figspec.spec.style import Style, load_style

if TYPE_CHECKING:
    from matplotlib.figure import Figure


@dataclass(frozen=True)
class Resolved:
    """A spec whose data is loaded and whose panels name their unit and source explicitly."""

    spec: LoadedSpec
    recordings: dict[str, Recording]
    panels: tuple[PanelBase, ...]
    style: Style

    def recording(self, panel: PanelBase) -> Recording:
        return self.recordings[panel.source]


@dataclass(frozen=True)
class Tables:
    """Computed tables: one per panel, and each panel's stimulus windows."""

    panels: dict[str, pd.DataFrame]
    stimulus: dict[str, pd.DataFrame]

    def for_export(self) -> dict[str, pd.DataFrame]:
        """The tables written as source data: each panel's, and the stimulus windows."""
        stim = pd.concat(list(self.stimulus.values()), ignore_index=True).drop_duplicates(ignore_index=True)
        return {**self.panels, "stimulus": stim}


def load(path: str | Path) -> LoadedSpec:
    """Step 1: read and validate the spec file."""
    return load_spec(path)


def resolve(spec: LoadedSpec) -> Resolved:
    """Step 2: load the style and every data source; check what needs the data."""
    model = spec.model
    try:
        style = load_style(model.figure.style, spec.folder)
    except UserError as err:
        raise type(err)([spec.locate(p) for p in err.problems]) from None
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
        if unit is None and len(rec.units) == 1:
            unit = rec.units[0]
        elif unit is None:
            problems.append(Problem(f"source {src!r} holds several units: name one with 'unit' "
                                    f"(units: {', '.join(rec.units)})", ("panels", i)))
        elif unit not in rec.units:
            close = difflib.get_close_matches(unit, rec.units, n=1)
            hint = f"; did you mean {close[0]!r}?" if close else f"; units: {', '.join(rec.units)}"
            problems.append(Problem(f"no such unit in source {src!r}{hint}", ("panels", i, "unit"), repr(unit)))
        if panel.levels is not None:
            missing = sorted(set(panel.levels) - set(rec.levels.tolist()))
            if missing:
                problems.append(Problem(f"levels not presented in source {src!r} "
                                        f"(presented: {', '.join(f'{v:g}' for v in rec.levels)})",
                                        ("panels", i, "levels"), ", ".join(f"{v:g}" for v in missing)))
        panels.append(panel.model_copy(update={"source": src, "unit": unit}))
    if problems:
        raise spec.error(problems, DataError)
    return Resolved(spec=spec, recordings=recordings, panels=tuple(panels), style=style)


def compute(resolved: Resolved) -> Tables:
    """Step 3: every panel's table (pure functions from the registry) and stimulus windows."""
    stimulus = resolved.spec.model.stimulus
    panels, stim = {}, {}
    for panel in resolved.panels:
        rec = resolved.recording(panel)
        panels[panel.name] = PANEL_KINDS[panel.kind].compute(rec, panel)
        table = stimulus_table(rec, panel.unit, stimulus)
        if panel.levels is not None:
            table = table[table["level"].isin(panel.levels)].reset_index(drop=True)
        stim[panel.name] = table
    return Tables(panels=panels, stimulus=stim)


def row_levels(resolved: Resolved, tables: Tables) -> list[float]:
    """The levels of the grid's rows, top to bottom."""
    levels = sorted({float(v) for t in tables.panels.values() for v in t["level"].unique()})
    return levels[::-1] if resolved.spec.model.levels.order == "high_at_top" else levels


def draw(resolved: Resolved, tables: Tables) -> "Figure":
    """Step 4: lay out the grid and draw every panel from its table (call inside ``styled``)."""
    from figspec.draw.labels import label_grid
    from figspec.draw.layout import new_grid
    from figspec.draw.psth import rate_label
    from figspec.draw.shading import level_opacity, shade_stimulus

    model = resolved.spec.model
    levels = row_levels(resolved, tables)
    fig, axes = new_grid(model.figure, len(levels), len(resolved.panels))
    row_of = {level: r for r, level in enumerate(levels)}
    all_levels = np.asarray(levels)
    titles, x_labels = [], []
    for c, panel in enumerate(resolved.panels):
        kind = PANEL_KINDS[panel.kind]
        table = tables.panels[panel.name]
        present = {float(v) for v in table["level"].unique()}
        by_level = {level: axes[row_of[level], c] for level in present}
        for level, ax in ((lv, axes[row_of[lv], c]) for lv in levels if lv not in present):
            ax.set_axis_off()
        for _, window in tables.stimulus[panel.name].iterrows():
            level = float(window["level"])
            alpha = float(level_opacity(level, all_levels, model.stimulus.opacity))
            shade_stimulus(by_level[level], window, alpha, resolved.style)
        kind.draw(by_level, table, panel, resolved.style)
        titles.append(panel.title if panel.title is not None else kind.default_title)
        x_labels.append(panel.x_label or "")
        if panel.kind == "psth" and c > 0:
            axes[len(levels) // 2, c].set_ylabel(rate_label(table, panel))
    counts = _trial_counts(tables, levels)
    row_labels = [f"{model.levels.label(level)}\nn = {counts[level]}" for level in levels]
    label_grid(axes, row_labels, titles, x_labels)
    return fig


def _trial_counts(tables: Tables, levels: list[float]) -> dict[float, str]:
    """Trials presented per level, as text ("30", or "28-30" when panels differ)."""
    out = {}
    stim = pd.concat(list(tables.stimulus.values()), ignore_index=True)
    for level in levels:
        n = sorted(set(stim.loc[stim["level"] == level, "n_trials"].astype(int)))
        out[level] = str(n[0]) if len(n) == 1 else f"{n[0]}-{n[-1]}"
    return out


def save(resolved: Resolved, tables: Tables, fig: "Figure", outdir: str | Path,
         formats: Sequence[str] | None = None) -> list[Path]:
    """Step 5: write the figure in every format and the source-data tables."""
    from figspec.output.files import save_all

    model = resolved.spec.model
    stem = Path(outdir) / resolved.spec.path.stem
    return save_all(fig, stem, formats or model.figure.formats, model.figure.png_dpi,
                    f"figspec {__version__}", tables.for_export())


def check(path: str | Path) -> Resolved:
    """Validate a spec and resolve its data without drawing anything."""
    return resolve(load(path))


def render(path: str | Path, outdir: str | Path, formats: Sequence[str] | None = None) -> list[Path]:
    """Load, resolve, compute, draw and save one spec; returns the files written."""
    from figspec.draw.context import styled

    resolved = resolve(load(path))
    tables = compute(resolved)
    with styled(resolved.style):
        fig = draw(resolved, tables)
        return save(resolved, tables, fig, outdir, formats)
