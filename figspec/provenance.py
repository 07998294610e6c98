"""What a figure was made from and with: input files with their hashes, and every resolved
parameter (for the manifest and the provenance line in each figure file)."""

from __future__ import annotations

import hashlib
from pathlib import Path
from typing import TYPE_CHECKING

import pandas as pd

from figspec import __version__

if TYPE_CHECKING:
    from figspec.pipeline import Resolved


def inputs(resolved: Resolved) -> list[dict]:
    """Every file the figure was made from, with its role and sha256."""
    spec = resolved.spec
    rows = [{"role": "spec", "path": _shown_path(spec.path.resolve()), "sha256": _file_sha(spec.path)}]
    for name, src in spec.model.sources.items():
        for role, rel in (("spikes", src.spikes), ("trials", src.trials)):
            if rel is not None:
                path = (spec.folder / rel).resolve()
                rows.append({"role": f"data:{name}:{role}", "path": _shown_path(path), "sha256": _file_sha(path)})
    for source in resolved.style_sources:
        if source.prefix == ():
            rows.append({"role": "style", "path": _shown_path(source.path), "sha256": _file_sha(source.path)})
    return rows


def _shown_path(path: Path) -> str:
    """A path as the manifest shows it: figspec's own files by name (not where figspec is
    installed), others relative to the working folder when below it."""
    from figspec.spec.style import PACKAGE_STYLES, SOURCE_STYLES

    for root in (SOURCE_STYLES, PACKAGE_STYLES):
        if path.is_relative_to(root):
            return "figspec:styles/" + path.relative_to(root).as_posix()
    cwd = Path.cwd().resolve()
    return path.relative_to(cwd).as_posix() if path.is_relative_to(cwd) else str(path)


def _file_sha(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def parameters(resolved: Resolved) -> dict:
    """Every parameter the figure was made with, defaults included, and the versions that
    shape the output bytes."""
    import matplotlib
    import numpy

    model = resolved.spec.model
    return {
        "spec": model.model_dump(mode="json"),
        "panels_resolved": [p.model_dump(mode="json") for p in resolved.panels],
        "style": resolved.style.model_dump(mode="json"),
        "versions": {"figspec": __version__, "matplotlib": matplotlib.__version__,
                     "numpy": numpy.__version__, "pandas": pd.__version__},
    }
