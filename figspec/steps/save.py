"""Step 5: the figure in every format, the source-data tables, the statistics table, the
legend text and the manifest, written as one set."""

from __future__ import annotations

import glob
from pathlib import Path
from typing import TYPE_CHECKING, Sequence

from figspec import __version__
from figspec.compute.describe import About
from figspec.output.names import output_stem
from figspec.output.files import figure_files, table_bytes
from figspec.output.output_set import write_set
from figspec.output.provenance import (build_inputs, code_sha256, input_files, parameters, provenance_line,
                                       versions)
from figspec.compute.conditions import split_legend, split_statistics
from figspec.output.report import legend_text, manifest, statistics_table
from figspec.registry import kind_of, no_comparison
from figspec.spec.layout import panel_letters
from figspec.steps.compute import Tables
from figspec.steps.resolve import Resolved

if TYPE_CHECKING:
    from matplotlib.figure import Figure

SOFTWARE = f"figspec {__version__}"


def input_paths(spec, style_sources) -> list[tuple[str, Path]]:
    """(role, path) of every file a figure is made from: the spec, each source's files, the style files."""
    files = [("spec", spec.path)]
    for name, src in spec.model.sources.items():
        files += [(f"data:{name}:{role}", spec.folder / path) for role, path in src.files().items()]
    return files + [(f"style:{source.path.stem}", source.path) for source in style_sources if source.prefix == ()]


def inputs(resolved: Resolved) -> list[dict]:
    """Every file the figure was made from, with hashes."""
    return input_files(input_paths(resolved.spec, resolved.style_sources), resolved.spec.folder)


def figures(resolved: Resolved, fig: "Figure", formats: Sequence[str], provenance: str = "") -> dict[str, bytes]:
    """``{format: bytes}`` of the drawn figure."""
    return figure_files(fig, resolved.style, formats, resolved.spec.model.figure.png_dpi, SOFTWARE, provenance)


def legend(resolved: Resolved, tables: Tables) -> str:
    """The legend text: each panel's sentence from its kind, naming it as the figure does."""
    model = resolved.spec.model
    letters = panel_letters(model.layout, list(model.panels))
    sentences = []
    for declared, panel in zip(model.panels, resolved.panels):
        about = About(letters.get(panel.name, panel.name), declared, model.levels.unit, model.levels.scale,
                      model.units.label)
        kind, table = kind_of(panel), tables.panels[panel.name]
        sentences.append(split_legend(kind.legend, panel, table, about, resolved.style.palette,
                                      kind.compare is not no_comparison)
                         if panel.conditions is not None else kind.legend(panel, table, about))
    sentences += [choice.sentence(name) for name, choice in unit_choices(resolved).items()]
    return legend_text(model.figure.title, sentences)


def unit_choices(resolved: Resolved) -> dict:
    """Per source whose units a per-unit table chose: the choice (rule, table, units kept)."""
    return {name: rec.unit_choice for name, rec in resolved.recordings.items() if rec.unit_choice is not None}


def removed(resolved: Resolved) -> dict[str, list]:
    """Per panel, what was left out on the way to its data: (rule, how many) for every trial
    selection rule of its source(s) and its own, and spikes outside every trial."""
    split = resolved.panel_conditions or {}
    return {p.name: [list(item) for item in (split[p.name][0].recording.removed if p.name in split
                                              else resolved.recording(p).removed)] for p in resolved.panels}


def statistics(resolved: Resolved, tables: Tables):
    rows = [row for p in resolved.panels for row in
            (split_statistics(kind_of(p).statistics, p, tables.panels[p.name]) if p.conditions is not None
             else kind_of(p).statistics(p, tables.panels[p.name]))]
    rows += [["removed", name, None, None, what, n, None, None, "left out before computing"]
             for name, items in removed(resolved).items() for what, n in items]
    return statistics_table(rows)


def save(resolved: Resolved, tables: Tables, fig: "Figure", outdir: str | Path,
         formats: Sequence[str] | None = None) -> list[Path]:
    """Write ``OUTDIR/<stem>.<format>`` and ``OUTDIR/<stem>_data/`` as one set (see
    :func:`figspec.output.output_set.write_set`); returns the paths written. Earlier outputs of
    the same spec that this render does not write (a format left out, a panel removed) go."""
    model = resolved.spec.model
    outdir = Path(outdir)
    stem = output_stem(resolved.spec.path)
    data_dir = outdir / f"{stem}_data"
    sources = inputs(resolved)
    files = figures(resolved, fig, formats or model.figure.formats, provenance_line(sources))
    payload = {outdir / f"{stem}.{fmt}": data for fmt, data in files.items()}
    for name, table in tables.for_export().items():
        payload[data_dir / f"{name}.csv"] = table_bytes(table)
    payload[data_dir / "statistics.csv"] = table_bytes(statistics(resolved, tables))
    payload[data_dir / "legend.md"] = legend(resolved, tables).encode()
    outputs = {p.relative_to(outdir).as_posix(): data for p, data in payload.items()}
    build = {"inputs": build_inputs(sources), "versions": versions(resolved.style), "code": code_sha256(),
             "formats": sorted(formats or model.figure.formats)}
    payload[data_dir / "manifest.json"] = manifest(sources, outputs,
                                                   {**parameters(model, resolved.panels, resolved.style),
                                                    "removed": removed(resolved),
                                                    "unit_choice": {name: choice.record() for name, choice
                                                                    in unit_choices(resolved).items()}}, build)
    owned = tuple(f"{glob.escape(stem)}{tail}" for tail in (".svg", ".pdf", ".png", ".tiff", ".eps", "_data/*"))
    return write_set(outdir, stem, payload, owned)
