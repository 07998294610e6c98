"""The JSON Schema (draft 2020-12) of a spec file, generated from the models, so editors built
on the taplo toolkit (e.g. VS Code's Even Better TOML) complete and check keys. The schema ships
in the package (``figspec/schema/spec.schema.json``); ``figspec schema`` writes it anew and a test
fails when the shipped file is out of date with the models."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

SHIPPED = Path(__file__).resolve().parents[1] / "schema" / "spec.schema.json"


def spec_schema() -> dict[str, Any]:
    """The schema of :class:`figspec.spec.models.FigureFile` as a JSON-compatible dict."""
    from figspec.spec.models import FigureFile

    schema = FigureFile.model_json_schema()
    # A source without ``format`` is CSV (figspec's discriminator says so); in JSON Schema terms
    # every other format must name itself, or a CSV source would also match it.
    for name, model in schema.get("$defs", {}).items():
        if name.endswith("Source") and name != "CsvSource" and "format" in model.get("properties", {}):
            model["required"] = sorted(set(model.get("required", [])) | {"format"})
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "$id": "https://figspec.invalid/schema/spec.schema.json",
            "title": "figspec figure spec", **schema}


def schema_text() -> str:
    return json.dumps(spec_schema(), indent=2, sort_keys=True, ensure_ascii=False) + "\n"
