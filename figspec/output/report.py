"""Per-figure reports: the statistics table (CSV), the legend text (Markdown) and the
manifest (JSON) with hashes and every resolved parameter. Each panel kind supplies its own
rows and sentence (see the registry); this module only puts them together."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import Any, Iterable


from figspec.compute.describe import STAT_COLUMNS
from figspec.optional import deferred

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def statistics_table(rows: Iterable[list]) -> pd.DataFrame:
    """One long table per figure (columns ``STAT_COLUMNS``): trials per level and unit, tests
    with statistics and p-values, latencies, fit parameters with CIs."""
    return pd.DataFrame(list(rows), columns=STAT_COLUMNS)


def legend_text(title: str, sentences: Iterable[str]) -> str:
    """The legend snippet: the figure title in bold, then one line per panel."""
    return "\n".join([f"**{title or 'Figure'}.**", *sentences]) + "\n"


def manifest(inputs: list[dict], outputs: dict[str, bytes], parameters: dict[str, Any],
             build: dict[str, Any] | None = None) -> bytes:
    """The manifest as stable JSON bytes: inputs and outputs with sizes and sha256, the
    resolved parameters, and the build record incremental builds compare."""
    body = {
        "build": build or {},
        "inputs": inputs,
        "outputs": [{"path": name, "bytes": len(data), "sha256": sha256(data)} for name, data in sorted(outputs.items())],
        "parameters": parameters,
    }
    return (json.dumps(body, indent=2, sort_keys=True, default=_json_default) + "\n").encode()


def _json_default(value: Any) -> Any:
    if isinstance(value, Path):
        return str(value)
    if isinstance(value, tuple):
        return list(value)
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")
