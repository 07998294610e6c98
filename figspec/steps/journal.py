"""The journal check of a drawn figure: its profile (named on the command line or in
``figure.journal``) and the findings."""

from __future__ import annotations

from dataclasses import replace

from figspec.draw.context import styled
from figspec.errors import UserError
from figspec.output.journal_check import format_findings, journal_check
from figspec.output.layout_check import layout_check
from figspec.registry import kind_of
from figspec.spec.journals import Profile, load_profile
from figspec.steps.resolve import Resolved, pulled_in


def profile(resolved: Resolved, name: str | None) -> Profile | None:
    """The profile ``name`` (else the spec's ``figure.journal``), or None when neither names one."""
    if name:                          # named on the command line: not the spec's mistake
        try:
            return load_profile(name, resolved.spec.folder)
        except UserError as err:
            raise type(err)([replace(p, loc=(), message=f"--profile {name}: {p.message}") if p.loc == ("figure", "journal")
                             else p for p in err.problems]) from None
    name = resolved.spec.model.figure.journal
    if name is None:
        return None
    try:
        return load_profile(name, resolved.spec.folder)
    except UserError as err:
        located = type(err)([resolved.spec.locate(p) for p in err.problems])
        raise pulled_in(resolved.spec, located, ("figure", "journal"), f"journal profile {name!r}") from None


def layout_findings(resolved: Resolved, fig) -> list:
    """The layout check's findings on the drawn figure, in its style."""
    with styled(resolved.style):
        return layout_check(fig)


def findings(resolved: Resolved, fig, files: dict[str, bytes], target: Profile, written=None) -> list:
    """Every finding of ``target`` on the drawn figure and its files; ``written``: the formats a
    render writes (by default those of ``files``; a check draws the PDF though no render writes it)."""
    readers = {p.name: kind_of(p).categories for p in resolved.panels}
    with styled(resolved.style):
        found = journal_check(fig, files, target, readers)
    return found + format_findings(list(files if written is None else written), resolved.spec.model.figure.png_dpi,
                                   target)
