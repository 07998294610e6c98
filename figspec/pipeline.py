"""The render pipeline: load -> resolve -> compute -> draw -> save, each a step of its own
(``figspec/steps/``), chained here. Every step returns something a test or a notebook can
stop at and inspect.

    resolved = resolve(load("specs/fig2.toml"))
    tables = compute(resolved)          # the tables drawn and exported as source data
    fig = draw(resolved, tables)        # a matplotlib Figure, drawn in the spec's style
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

from figspec.errors import DataError, Problem
from figspec.registry import kind_of
from figspec.spec.journals import Profile
from figspec.steps import journal
from figspec.steps.compute import Tables, compute
from figspec.steps.draw import draw
from figspec.steps.load import load
from figspec.steps.resolve import Resolved, resolve
from figspec.steps.save import figures, save

__all__ = ["Rendered", "Resolved", "Tables", "check", "compute", "draw", "journal_check", "load", "notes",
           "render", "render_in_memory", "resolve", "save"]


@dataclass(frozen=True)
class Rendered:
    """What a render wrote, and the journal check's findings when a profile was checked."""

    files: list[Path]
    profile: Profile | None = None
    findings: tuple = ()
    layout: tuple = ()               # the layout check's findings (figspec.output.layout_check)


def check(path: str | Path, style: str | None = None) -> Resolved:
    """Validate a spec and resolve its data without drawing anything. A style font that is not
    installed is a warning here already (matplotlib is imported for that only when the style
    names a font other than the one it ships)."""
    resolved = resolve(load(path), style)
    if resolved.style.font.family != "DejaVu Sans":
        from figspec.draw.context import check_fonts

        check_fonts(resolved.style)
    return resolved


def notes(resolved: Resolved) -> list[str]:
    """Things a reviewer should know that are not errors (printed by ``check`` and ``render``)."""
    return [f"{resolved.spec.path}: panels[{i}] ({panel.name}): {note}"
            for i, panel in enumerate(resolved.panels) for note in kind_of(panel).notes(panel)]


def render(path: str | Path, outdir: str | Path, formats: Sequence[str] | None = None,
           resolved: Resolved | None = None, profile: str | None = None) -> Rendered:
    """Load, resolve, compute, draw and save one spec; check it against the journal ``profile``
    (or the spec's ``figure.journal``) when there is one. Pass ``resolved`` to skip loading
    again what :func:`check` already loaded."""
    resolved = resolved or check(path)
    # a spec drawn for another medium (scaled to another style's text) is not checked against
    # the journal its own style is for, unless a profile is named for this render
    target = journal.profile(resolved, profile) if profile or resolved.scale == 1.0 else None
    tables = compute(resolved)
    fig = draw(resolved, tables)
    written = save(resolved, tables, fig, outdir, formats)
    layout = tuple(journal.layout_findings(resolved, fig))
    if target is None:
        return Rendered(written, layout=layout)
    files = {p.suffix[1:]: p.read_bytes() for p in written if p.suffix in (".svg", ".pdf", ".png")}
    return Rendered(written, target, tuple(journal.findings(resolved, fig, files, target)), layout)


def journal_check(resolved: Resolved, profile: str | None = None) -> Rendered:
    """Draw a spec in memory (every format, PDF always) and check it against a journal
    profile, writing nothing."""
    target = journal.profile(resolved, profile)
    if target is None:
        raise DataError(resolved.spec.locate(Problem("no journal profile: name one after --journal or set "
                                                     "figure.journal", ("figure", "journal"))))
    fig = draw(resolved, compute(resolved))
    formats = resolved.spec.model.figure.formats
    files = figures(resolved, fig, dict.fromkeys([*formats, "pdf"]))
    return Rendered([], target, tuple(journal.findings(resolved, fig, files, target, formats)))


def render_in_memory(resolved: Resolved, formats: Sequence[str] = ("png",)) -> tuple[dict[str, bytes], Tables]:
    """Draw a resolved spec and return its files (format -> bytes) and tables, writing nothing."""
    tables = compute(resolved)
    return figures(resolved, draw(resolved, tables), formats), tables
