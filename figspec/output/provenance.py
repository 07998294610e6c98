"""What a figure was made from and with: input files with their hashes, and every resolved
parameter (for the manifest and the provenance line in each figure file)."""

from __future__ import annotations

import hashlib
import platform
from pathlib import Path
from typing import Any, Iterable


from figspec import __version__
from figspec.optional import deferred
from figspec.spec.style import BUILTIN_STYLES

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas


def input_files(files: Iterable[tuple[str, Path]], base: Path | None = None) -> list[dict]:
    """``[{"role", "path", "sha256"}]`` of every (role, file) a figure was made from, paths
    relative to ``base`` (the spec's folder) so the manifest is the same wherever the render ran."""
    return [{"role": role, "path": shown_path(Path(path).resolve(), base), "sha256": file_sha256(Path(path))}
            for role, path in files]


def provenance_line(inputs: list[dict]) -> str:
    """The line written into every figure file: figspec's version and each input's hash."""
    return f"figspec {__version__}; " + "; ".join(f"{i['role']} sha256:{i['sha256']}" for i in inputs)


def shown_path(path: Path, base: Path | None = None) -> str:
    """A path as the manifest shows it: figspec's own files by name (not where figspec is
    installed), others relative to ``base`` (the spec's folder; ``..`` where needed), else to
    the working folder when below it."""
    import os

    if path.is_relative_to(BUILTIN_STYLES):
        return "figspec:styles/" + path.relative_to(BUILTIN_STYLES).as_posix()
    if base is not None:
        try:
            return Path(os.path.relpath(path, Path(base).resolve())).as_posix()
        except ValueError:                           # another drive (Windows)
            return str(path)
    cwd = Path.cwd().resolve()
    return path.relative_to(cwd).as_posix() if path.is_relative_to(cwd) else str(path)


def file_sha256(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def parameters(spec: Any, panels: Iterable[Any], style: Any) -> dict:
    """Every parameter the figure was made with (the spec as written, each panel as resolved:
    defaults and automatic choices filled in, the style), and the versions that shape the
    output bytes."""
    return {
        "spec": spec.model_dump(mode="json"),
        "panels_resolved": [p.model_dump(mode="json") for p in panels],
        "style": style.model_dump(mode="json"),
        "versions": versions(style),
    }


def versions(style=None) -> dict[str, str]:
    """figspec's version and those of everything that shapes the output bytes: Python, the
    libraries (from the installed packages' metadata), the FreeType that matplotlib renders text
    with, and the font file the style's family resolves to (its name and a hash), when a style
    is given."""
    from importlib.metadata import version

    import matplotlib.ft2font as ft2font

    found = {"figspec": __version__, "python": platform.python_version(),
             **{name: version(name) for name in ("matplotlib", "numpy", "pandas", "scipy", "pyarrow", "pillow")},
             "freetype": getattr(ft2font, "__freetype_version__", "unknown")}
    if style is not None:                          # the font file the style's family resolves to
        from matplotlib import font_manager

        try:
            path = Path(font_manager.findfont(font_manager.FontProperties(family=style.font.family),
                                              fallback_to_default=True))
            found["font"] = f"{path.name} sha256:{file_sha256(path)[:16]}"
        except (OSError, ValueError):
            found["font"] = "unknown"
    return found


def code_sha256() -> str:
    """sha256 of figspec's own modules and built-in styles: an edited install (a developer's,
    an editable one) rebuilds what it may draw differently, although its version is the same."""
    package = Path(__file__).resolve().parents[1]
    digest = hashlib.sha256()
    for path in sorted(package.rglob("*.py")) + sorted(BUILTIN_STYLES.rglob("*.toml")):
        digest.update(path.relative_to(package).as_posix().encode() + b"\0" + path.read_bytes())
    return digest.hexdigest()


def build_inputs(inputs: list[dict]) -> dict[str, str]:
    """``{role: sha256}`` of a figure's inputs: the part of the build record incremental builds compare."""
    return {i["role"]: i["sha256"] for i in inputs}
