"""Resolve a house style: a chain of style files (``extends``) and a spec's inline ``[style]``
overrides, merged key by key, validated once, every error pointing at the file that set the key.

Resolution is a pure function of the files: it reads them and returns a :class:`Style`; applying
it to matplotlib happens only inside :func:`figspec.draw.context.styled`.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from figspec.errors import Loc, Problem, SpecError, toml_text
from figspec.spec.keylines import index_key_lines, line_for
from figspec.spec.style import Style, style_path


@dataclass(frozen=True)
class StyleSource:
    """One place style keys came from: a style file, or a spec's ``[style]`` table (``prefix``
    is where the keys sit in that file)."""

    path: Path
    text: str
    data: dict[str, Any]
    prefix: Loc = ()
    key_lines: dict[Loc, int] = field(default_factory=dict, repr=False)

    def line(self, loc: Loc) -> int | None:
        return line_for(self.key_lines, self.prefix + loc)


@dataclass(frozen=True)
class ResolvedStyle:
    style: Style
    sources: tuple[StyleSource, ...]

    @property
    def sha256(self) -> str:
        digest = hashlib.sha256()
        for source in self.sources:
            digest.update(str(source.prefix).encode() + source.text.encode())
        return digest.hexdigest()


def read_chain(name: str, folder: Path | None, seen: tuple[Path, ...] = ()) -> list[StyleSource]:
    """The style files from the root of the ``extends`` chain down to ``name``."""
    from figspec.spec.loader import read_toml

    path = style_path(name, folder).resolve()
    if path in seen:
        circle = seen[seen.index(path):]
        problems = []
        for here, there in zip(circle, circle[1:] + (path,)):
            text = here.read_text(encoding="utf-8-sig")
            problems.append(Problem(f"styles extend each other in a circle: this file extends {there.name}",
                                    ("extends",), file=str(here), line=line_for(index_key_lines(text), ("extends",))))
        raise SpecError(problems)
    text, data = read_toml(path)
    source = StyleSource(path, text, data, (), index_key_lines(text))
    parent = data.get("extends")
    if parent is None:
        return [source]
    if not isinstance(parent, str):
        raise SpecError(Problem("extends names a style", ("extends",), toml_text(parent), file=str(path),
                                line=source.line(("extends",))))
    return read_chain(parent, path.parent, seen + (path,)) + [source]


def merge(sources: list[StyleSource]) -> tuple[dict[str, Any], dict[Loc, StyleSource]]:
    """Merge tables key by key, later sources winning; remember which source set each key."""
    merged: dict[str, Any] = {}
    origin: dict[Loc, StyleSource] = {}

    def walk(target: dict, data: dict, loc: Loc, source: StyleSource) -> None:
        for key, value in data.items():
            if key == "extends" and not loc:
                continue
            here = loc + (key,)
            origin[here] = source
            if isinstance(value, dict) and isinstance(target.get(key), dict):
                walk(target[key], value, here, source)
            else:
                target[key] = _copy(value)

    for source in sources:
        walk(merged, source.data, (), source)
    return merged, origin


def _copy(value: Any) -> Any:
    return {k: _copy(v) for k, v in value.items()} if isinstance(value, dict) else value


def resolve_style(name: str, folder: Path | None, inline: dict[str, Any] | None = None,
                  spec_path: Path | None = None, spec_text: str = "") -> ResolvedStyle:
    """The style ``name`` (looked up from ``folder``) with a spec's inline overrides applied."""
    from figspec.spec.loader import problem_from_pydantic, strict_validate

    sources = read_chain(name, folder)
    if inline:
        sources.append(StyleSource(spec_path or Path("spec"), spec_text, inline, ("style",),
                                   index_key_lines(spec_text)))
    merged, origin = merge(sources)
    try:
        style = strict_validate(Style, merged)
    except ValidationError as err:
        problems = []
        for error in err.errors(include_url=False):
            problem = problem_from_pydantic(Style, error)
            source = next((origin[problem.loc[:cut]] for cut in range(len(problem.loc), 0, -1)
                           if problem.loc[:cut] in origin), sources[-1])
            problems.append(Problem(problem.message, source.prefix + problem.loc, problem.got,
                                    str(source.path), source.line(problem.loc)))
        raise SpecError(problems) from None
    return ResolvedStyle(style, tuple(sources))
