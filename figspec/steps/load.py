"""Step 1: read and validate a spec file (TOML, models, cross checks)."""

from __future__ import annotations

from pathlib import Path

from figspec.spec.loader import LoadedSpec, load_spec


def load(path: str | Path) -> LoadedSpec:
    """The validated spec; a bad one raises a located :class:`~figspec.errors.SpecError`."""
    return load_spec(path)
