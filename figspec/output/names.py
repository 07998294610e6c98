"""The names of a spec's outputs: ``<stem>.<format>`` and ``<stem>_data/`` in the output folder,
where ``<stem>`` is the spec's file name without ``.toml``. Two specs rendered into one folder
must not share a stem, and a stem must make ordinary file names."""

from __future__ import annotations

from pathlib import Path
from typing import Sequence

from figspec.errors import Problem, UserError

STAGING_PREFIX = ".figspec-"        # figspec's own hidden files in an output folder start so


def output_stem(spec: str | Path) -> str:
    """The stem a spec's outputs are named by (``fig2.v1.toml`` -> ``fig2.v1``)."""
    name = Path(spec).name
    stem = name[: -len(".toml")] if name.lower().endswith(".toml") else Path(spec).stem
    return stem


def stem_problems(specs: Sequence[Path]) -> list[Problem]:
    """Spec file names that would make hidden or empty output names, and specs that would
    write the same outputs in one folder."""
    problems = []
    seen: dict[str, Path] = {}
    for spec in specs:
        stem = output_stem(spec)
        if not stem or stem.startswith(".") or stem != stem.strip():
            problems.append(Problem("a spec's file name names its outputs: start it with a letter or digit "
                                    f"(e.g. fig2.toml)", file=str(spec), got=repr(Path(spec).name)))
            continue
        first = seen.get(stem.lower())         # case-insensitive file systems (macOS, Windows) too
        if first is not None and first.resolve() != Path(spec).resolve():
            problems.append(Problem(f"writes the same outputs ({stem}.*, {stem}_data/) as {first}: rename one "
                                    "of them or render them into different folders", file=str(spec)))
        seen.setdefault(stem.lower(), Path(spec))
    return problems


def check_stems(specs: Sequence[Path]) -> None:
    problems = stem_problems(specs)
    if problems:
        raise UserError(problems)
