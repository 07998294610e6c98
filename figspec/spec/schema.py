"""The JSON Schema (draft-07) of a spec file, generated from the models, so editors built on the
taplo toolkit (e.g. VS Code's Even Better TOML) complete and check keys. The schema ships in the
package (``figspec/schema/spec.schema.json``); ``figspec schema`` writes it anew and a test fails
when the shipped file is out of date with the models.

pydantic writes draft 2020-12 with keywords some editors' validators skip or read poorly; the
schema is rewritten here in the draft-07 vocabulary they all read: a panel (or source) model is
chosen by its ``kind`` (``format``) with ``if``/``then``, so a mistake is reported at its key
instead of as "not valid under any of the schemas listed in oneOf"; fixed-length pairs use the
array form of ``items``; and every key gets a description naming its unit and default (from the
model's own field description when it has one, else from its name, type and default)."""

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
    schema = draft_07(schema)
    return {"$schema": "http://json-schema.org/draft-07/schema#",
            "$id": "https://figspec.invalid/schema/spec.schema.json",
            "title": "figspec figure spec", **schema}


UNITS = {"_ms": "ms", "_mm": "mm", "_pt": "points", "_hz": "Hz", "_um": "µm", "_s": "s", "_dpi": "dots per inch",
         "_us": "µs"}


def draft_07(schema: dict[str, Any]) -> dict[str, Any]:
    """``schema`` (pydantic's draft 2020-12) in draft-07 terms, with if/then unions and a
    description on every property."""
    defs = schema.pop("$defs", {})
    text = json.dumps(schema | {"definitions": defs}).replace('"#/$defs/', '"#/definitions/')
    out = json.loads(text)
    _walk(out, out["definitions"])
    return out


def _walk(node: Any, defs: dict[str, Any]) -> None:
    if isinstance(node, list):
        for item in node:
            _walk(item, defs)
        return
    if not isinstance(node, dict):
        return
    if "prefixItems" in node:                       # a fixed-length pair: the array form of items
        node["items"] = node.pop("prefixItems")
        node["additionalItems"] = False
    if "oneOf" in node and all("$ref" in o for o in node["oneOf"]):
        _chosen_by_key(node, defs)
    for key, child in list(node.get("properties", {}).items()):
        if isinstance(child, dict):
            _describe(key, child, defs)
    for child in node.values():
        _walk(child, defs)


def _chosen_by_key(node: dict[str, Any], defs: dict[str, Any]) -> None:
    """Replace a ``oneOf`` of models told apart by ``kind`` (panels) or ``format`` (sources, CSV
    when absent) by if/then: each model applies exactly when its tag is given."""
    refs = [o["$ref"] for o in node.pop("oneOf")]
    node.pop("discriminator", None)
    models = [defs[r.rsplit("/", 1)[-1]] for r in refs]
    key = "kind" if all("kind" in m.get("properties", {}) for m in models) else "format"
    tags = []
    rules: list[dict[str, Any]] = []
    for ref, model in zip(refs, models):
        prop = model["properties"][key]
        values = [prop["const"]] if "const" in prop else prop.get("enum", [])
        tags += values
        for value in values:
            rules.append({"if": {"properties": {key: {"const": value}}, "required": [key]}, "then": {"$ref": ref}})
        if key == "format" and key not in model.get("required", []):      # the default format: no key at all
            rules.append({"if": {"not": {"required": [key]}}, "then": {"$ref": ref}})
    node["type"] = "object"
    node["properties"] = {key: {"enum": tags, "description": f"which model the table follows: one of "
                                                             f"{', '.join(map(str, tags))}"}}
    if key == "kind":
        node["required"] = [key]
    node["allOf"] = rules


TYPE_WORDS = {"number": "a number", "integer": "a whole number", "boolean": "true or false", "string": "text",
              "array": "a list", "object": "a table"}


def _kinds(prop: dict[str, Any]) -> list[str]:
    """What a property takes, in words: its types and fixed values."""
    words = []
    for option in prop.get("anyOf", [prop]):
        if "const" in option:
            words.append(json.dumps(option["const"]))
        elif "enum" in option:
            words += [json.dumps(v) for v in option["enum"]]
        elif option.get("type") == "array" and isinstance(option.get("items", option.get("prefixItems")), list):
            pair = option.get("items", option.get("prefixItems"))
            words.append(f"a pair [{', '.join(TYPE_WORDS.get(i.get('type'), 'a value') for i in pair)}]")
        elif option.get("type") in TYPE_WORDS:
            words.append(TYPE_WORDS[option["type"]])
        elif "$ref" in option:
            words.append("a table")
    return list(dict.fromkeys(w for w in words if w != '"null"' and w != "null"))


def _describe(key: str, prop: dict[str, Any], defs: dict[str, Any]) -> None:
    """A description naming what the key holds, its unit and default, where pydantic gave none."""
    if prop.get("description") and "default" in prop.get("description", "").lower():
        return
    text = prop.get("description") or key.replace("_", " ").capitalize()
    unit = next((u for suffix, u in UNITS.items() if key.endswith(suffix)), None)
    if unit and "(" not in text:
        text += f", in {unit}"
    kinds = _kinds(prop)
    if kinds:
        text += ": " + " or ".join(kinds[:8]) + (" ..." if len(kinds) > 8 else "")
    ref = prop.get("$ref") or next((o["$ref"] for o in prop.get("anyOf", []) if "$ref" in o), None)
    if ref and not prop.get("description"):
        doc = defs.get(ref.rsplit("/", 1)[-1], {}).get("description", "")
        if doc:
            text += ". " + doc.split("\n\n")[0].replace("\n", " ")
    if "default" in prop:
        text += f". Default: {json.dumps(prop['default'], ensure_ascii=False)}"
    elif key in _required_somewhere(defs):
        text += ". Required"
    prop["description"] = text


def _required_somewhere(defs: dict[str, Any]) -> set[str]:
    return {k for model in defs.values() for k in model.get("required", [])}


def schema_text() -> str:
    return json.dumps(spec_schema(), indent=2, sort_keys=True, ensure_ascii=False) + "\n"
