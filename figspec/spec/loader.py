"""Read a spec file: TOML parse, model validation and cross checks, with located errors."""

from __future__ import annotations

import difflib
import hashlib
import json
import types
import typing
import warnings
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, TypeVar

import tomli
from pydantic import BaseModel, ValidationError

from figspec.errors import FigspecWarning, Loc, Problem, SpecError, toml_text
from figspec.spec.analysis import disagreements, with_analysis
from figspec.spec.keylines import index_key_lines, line_for
from figspec.spec.models import FigureFile, cross_check

M = TypeVar("M", bound=BaseModel)


@dataclass(frozen=True)
class LoadedSpec:
    """A validated spec with what is needed to point back into its file."""

    path: Path
    text: str
    model: FigureFile
    key_lines: dict[Loc, int] = field(repr=False)

    @property
    def folder(self) -> Path:
        return self.path.parent

    @property
    def sha256(self) -> str:
        return hashlib.sha256(self.text.encode()).hexdigest()

    def locate(self, problem: Problem) -> Problem:
        """Fill in this file and the line of the problem's key path."""
        return problem.located(str(self.path), line_for(self.key_lines, problem.loc))

    def error(self, problems: list[Problem], kind: type[SpecError] = SpecError) -> SpecError:
        return kind([self.locate(p) for p in problems])


def read_toml(path: Path) -> tuple[str, dict[str, Any]]:
    """Read and parse a TOML file; a missing file or bad syntax is a :class:`SpecError`."""
    try:
        text = path.read_text(encoding="utf-8-sig")        # an editor's byte-order mark is not TOML
    except FileNotFoundError:
        raise SpecError(Problem("file not found", file=str(path))) from None
    except (OSError, UnicodeDecodeError) as err:
        raise SpecError(Problem(f"cannot read the file: {err}", file=str(path))) from err
    if len(text) > MAX_SPEC_CHARS:
        raise SpecError(Problem(f"a spec file holds at most {MAX_SPEC_CHARS:,} characters; this one has "
                                f"{len(text):,}", file=str(path)))
    try:
        data = tomli.loads(text)
    except tomli.TOMLDecodeError as err:
        message = str(getattr(err, "msg", err)).split(" (at line")[0]
        line = getattr(err, "lineno", None)
        raise SpecError(Problem(f"not valid TOML: {message}", file=str(path), line=line)) from None
    except RecursionError:                         # tomli's own limit on nesting and dotted-key parts
        raise SpecError(Problem(f"tables, arrays or dotted keys nested too deeply for a spec (at most "
                                f"{MAX_DEPTH} levels)", file=str(path))) from None
    if depth(data) > MAX_DEPTH:
        raise SpecError(Problem(f"tables, arrays or dotted keys nested too deeply for a spec (at most "
                                f"{MAX_DEPTH} levels)", file=str(path)))
    return text, data


MAX_SPEC_CHARS = 1_000_000      # a spec is a page or two; a larger file is not one
MAX_DEPTH = 16                  # a spec's deepest key is about five levels down


def depth(value: Any) -> int:
    """How deeply tables and arrays nest in ``value`` (walked without recursion)."""
    deepest, stack = 0, [(value, 0)]
    while stack:
        item, level = stack.pop()
        deepest = max(deepest, level)
        if level > MAX_DEPTH:
            break
        children = item.values() if isinstance(item, dict) else item if isinstance(item, list) else ()
        stack.extend((child, level + 1) for child in children if isinstance(child, (dict, list)))
    return deepest


def strict_validate(model: type[M], data: dict[str, Any]) -> M:
    """Validate parsed TOML strictly: no string is read as a number or a boolean. It goes
    through pydantic's JSON mode, where strict validation still takes arrays for tuples."""
    return model.model_validate_json(json.dumps(data, default=str), strict=True)


def validate(model: type[M], data: dict[str, Any], path: Path, text: str) -> M:
    """Validate ``data`` against ``model``; every failure becomes a located :class:`Problem`."""
    lines = index_key_lines(text)
    dates = [Problem("a TOML date or time is not a value figspec reads", loc, str(value))
             for loc, value in _dates(data, ())]
    if dates:
        raise SpecError([p.located(str(path), line_for(lines, p.loc)) for p in dates])
    try:
        return strict_validate(model, data)
    except ValidationError as err:
        errors = _drop_type_misses(err.errors(include_url=False))
        problems = _merge_union_errors([problem_from_pydantic(model, e) for e in errors])
        raise SpecError([p.located(str(path), line_for(lines, p.loc)) for p in problems]) from None


def _dates(value: Any, loc: Loc) -> list[tuple[Loc, Any]]:
    """Key paths of every TOML date, time or date-time in parsed ``value``."""
    import datetime

    if isinstance(value, (datetime.date, datetime.time)):
        return [(loc, value)]
    if isinstance(value, dict):
        return [found for key, item in value.items() for found in _dates(item, loc + (key,))]
    if isinstance(value, list):
        return [found for i, item in enumerate(value) for found in _dates(item, loc + (i,))]
    return []


_TYPE_MISSES = {"string_type", "int_type", "float_type", "bool_type", "list_type", "tuple_type", "dict_type",
                "model_type", "literal_error", "int_parsing", "float_parsing", "bool_parsing"}


def _drop_type_misses(errors: list[dict]) -> list[dict]:
    """When a union member that takes a table (``{ min = 0, max = 5 }``, ``{ math = "..." }``)
    found what is wrong inside the table, the other members' "not a number" / "not a string"
    complaints about that same table are noise: keep only the table's own errors."""
    tables = [e["loc"][:-1] for e in errors if e["type"] not in _TYPE_MISSES]

    def noise(e: dict) -> bool:
        if e["type"] not in _TYPE_MISSES or not isinstance(e.get("input"), dict):
            return False
        base = e["loc"][:-1]
        return any(len(t) >= len(base) and t[:len(base)] == base for t in tables)

    kept = [e for e in errors if not noise(e)]
    return kept or errors


def _merge_union_errors(problems: list[Problem]) -> list[Problem]:
    """One problem per key path: a value that fits no member of a union of plain types (a
    number or 'auto') gives one error per member, joined here with "or"."""
    merged: dict[Loc, Problem] = {}
    for problem in problems:
        first = merged.get(problem.loc)
        if first is None:
            merged[problem.loc] = problem
        elif problem.message not in first.message:
            merged[problem.loc] = replace(first, message=f"{first.message}, or {problem.message[0].lower()}"
                                                         f"{problem.message[1:]}")
    return list(merged.values())


def load_spec(path: str | Path) -> LoadedSpec:
    """Load, validate and cross-check one spec file."""
    path = Path(path)
    text, data = read_toml(path)
    model = validate(FigureFile, with_analysis(data), path, text)
    spec = LoadedSpec(path=path, text=text, model=model, key_lines=index_key_lines(text))
    problems = cross_check(model)
    if problems:
        raise spec.error(problems)
    for note in disagreements(model.panels):
        warnings.warn(note, FigspecWarning, stacklevel=2)
    return spec


# --- translating pydantic errors -------------------------------------------------------------

def _unwrap(tp: Any) -> Any:
    """Strip Annotated and Optional wrappers."""
    while True:
        origin = typing.get_origin(tp)
        if origin is typing.Annotated:
            tp = typing.get_args(tp)[0]
        elif origin in (typing.Union, types.UnionType):
            args = [a for a in typing.get_args(tp) if a is not type(None)]
            if len(args) == 1:
                tp = args[0]
            else:
                return tp
        else:
            return tp


TAG_KEYS = ("kind", "format")   # the keys that pick a member of a union of models


def _members(tp: Any) -> list[type[BaseModel]]:
    """The models of a union (each possibly wrapped in Annotated), or the model itself."""
    args = typing.get_args(tp) if typing.get_origin(tp) in (typing.Union, types.UnionType) else (tp,)
    out = []
    for member in args:
        while typing.get_origin(member) is typing.Annotated:
            member = typing.get_args(member)[0]
        if isinstance(member, type) and issubclass(member, BaseModel):
            out.append(member)
    return out


def _tag(model: type[BaseModel]) -> tuple[str, tuple] | None:
    """(tag key, tag values) of a union member model, e.g. ("kind", ("raster",))."""
    for key in TAG_KEYS:
        if key in model.model_fields:
            return key, typing.get_args(model.model_fields[key].annotation)
    return None


def _tagged_member(tp: Any, tag: Any) -> type[BaseModel] | None:
    """The member of a tagged union whose tag literal equals ``tag`` (pydantic puts the tag in
    error locations; the user never wrote it as a key)."""
    for member in _members(tp):
        found = _tag(member)
        if found is not None and tag in found[1]:
            return member
    return None


def _union_tags(tp: Any) -> tuple[str, list[str]]:
    key, tags = "kind", []
    for member in _members(_unwrap(tp)):
        found = _tag(member)
        if found is not None:
            key, tags = found[0], tags + list(found[1])
    return key, tags


def walk_loc(root: type[BaseModel], loc: Loc) -> tuple[Loc, type[BaseModel] | None, Any]:
    """Follow a pydantic error location through the model types.

    Returns the key path as the user wrote it (union tags removed), the last model passed
    through (whose keys are the valid siblings of the final key) and the type at the end.
    """
    tp: Any = root
    parent: type[BaseModel] | None = None
    path: list[str | int] = []
    for item in loc:
        tp = _unwrap(tp)
        member = _tagged_member(tp, item) if isinstance(item, str) else None
        if member is None and isinstance(item, str):          # an untagged union names its member's class
            member = next((m for m in _members(tp) if m.__name__ == item), None)
        if member is not None:
            tp = member
            continue
        if isinstance(tp, type) and issubclass(tp, BaseModel):
            parent = tp
            path.append(item)
            info = tp.model_fields.get(str(item))
            tp = info.annotation if info is not None else None
        elif typing.get_origin(tp) in (list, tuple):
            path.append(item)
            args = typing.get_args(tp)
            tp = args[0] if args else None
        elif typing.get_origin(tp) is dict:
            path.append(item)
            tp = typing.get_args(tp)[1]
        else:
            # a union of plain types reports the member tried (e.g. 'int'): not a user key
            if isinstance(item, str) and typing.get_origin(tp) in (typing.Union, types.UnionType):
                continue
            path.append(item)
            tp = None
    return tuple(path), parent, tp


def _brief(value: Any) -> str:
    if isinstance(value, (list, tuple)) and len(value) > 6:
        return f"an array of {len(value)} items"
    if isinstance(value, dict) and len(value) > 3:
        return f"a table of {len(value)} keys"
    text = toml_text(value)
    return text if len(text) <= 60 else text[:57] + "..."


# pydantic speaks of Python and JSON; the spec is TOML
_WORDS = (("a valid dictionary", "a table"), ("an object", "a table"), ("a valid list", "an array"),
          ("a valid tuple", "an array"), ("a valid array", "an array"), ("Input should be", "should be"),
          ("List should have", "should have"), ("Tuple should have", "should have"),
          (" after validation", ""), ("a valid string", "a string (in quotes)"),
          ("String should have", "should have"), ("should be a valid number", "should be a number"),
          ("should be a valid integer", "should be a whole number"), ("should be a valid boolean",
                                                                         "should be true or false"))


def plain_message(message: str) -> str:
    for old, new in _WORDS:
        message = message.replace(old, new)
    return message


def problem_from_pydantic(root: type[BaseModel], error: dict[str, Any]) -> Problem:
    """Turn one pydantic error into a :class:`Problem` with the user's key path."""
    path, parent, tp = walk_loc(root, tuple(error["loc"]))
    kind = error["type"]
    if kind == "extra_forbidden":
        key = str(path[-1]) if path else ""
        allowed = sorted(parent.model_fields) if parent is not None else []
        close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.5)
        hint = f"; did you mean {close[0]!r}?" if close else f"; allowed keys: {', '.join(allowed)}"
        return Problem(f"unknown key{hint}", path)
    if kind == "union_tag_invalid":
        key, tags = _union_tags(tp)
        got = error.get("ctx", {}).get("tag", "")
        close = difflib.get_close_matches(str(got), tags, n=1, cutoff=0.5)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        return Problem(f"{key} must be one of {', '.join(map(repr, tags))}{hint}", path + (key,), toml_text(got))
    if kind == "union_tag_not_found":
        key, tags = _union_tags(tp)
        return Problem(f"missing key {key!r} (one of {', '.join(map(repr, tags))})", path)
    if kind == "missing":
        return Problem("missing required key", path)
    message = error["msg"]
    for prefix in ("Value error, ", "Assertion failed, "):
        message = message.removeprefix(prefix)
    message = plain_message(message)
    if kind == "too_long" and isinstance(error.get("input"), (list, tuple)):
        limit = error.get("ctx", {}).get("max_length")
        return Problem(f"at most {limit} items", path, str(len(error["input"])))
    got = None if kind.startswith("value_error") or isinstance(error.get("input"), dict) else _brief(error.get("input"))
    return Problem(message, path, got)
