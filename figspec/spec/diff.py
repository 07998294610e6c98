"""What changed between two versions of a spec, key by key."""

from __future__ import annotations

from typing import Any

from figspec.errors import format_key_path


def flatten(data: Any, loc: tuple = ()) -> dict[str, Any]:
    """``{key path: value}`` for every leaf of a parsed TOML document."""
    if isinstance(data, dict):
        out: dict[str, Any] = {}
        for key, value in data.items():
            out.update(flatten(value, loc + (key,)))
        return out
    if isinstance(data, list) and data and all(isinstance(v, dict) for v in data):
        out = {}
        for i, value in enumerate(data):
            out.update(flatten(value, loc + (i,)))
        return out
    return {format_key_path(loc): data}


def key_changes(old: dict[str, Any], new: dict[str, Any]) -> list[str]:
    """Lines such as ``changed panels[1].bin_ms: 5 -> 6``, ``added ...``, ``removed ...``."""
    a, b = flatten(old), flatten(new)
    lines = []
    for key in sorted(set(a) | set(b)):
        if key not in a:
            lines.append(f"added   {key} = {b[key]!r}")
        elif key not in b:
            lines.append(f"removed {key} (was {a[key]!r})")
        elif a[key] != b[key]:
            lines.append(f"changed {key}: {a[key]!r} -> {b[key]!r}")
    return lines
