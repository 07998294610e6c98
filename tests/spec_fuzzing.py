"""Hypothesis strategies for fuzzing the spec loader and ``check``: valid specs with values
replaced, keys removed or added, and raw text cut or changed. Used by tests/test_fuzz.py (a
fixed number of examples) and bench/fuzz_check.py (minutes)."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import tomli
from hypothesis import strategies as st

CORPUS = Path(__file__).resolve().parent / "bad_inputs"
BASE = (CORPUS / "specs" / "bin_inf.toml").read_text(encoding="utf-8").replace("bin_ms = inf", "bin_ms = 10")
BASE = BASE.replace('"../data/', f'"{CORPUS / "data"}/')
BASE_DATA = tomli.loads(BASE)

KEYS = ["title", "bin_ms", "window_ms", "kind", "unit", "units", "levels", "per_trial", "clock", "time_unit",
        "start_ms", "stop_ms", "x_step", "y_step", "x_ticks", "style", "journal", "png_dpi", "width_mm", "name",
        "smooth", "kernel_ms", "measure", "fit", "scale", "arrange", "repeat", "span", "cell", "keep", "math",
        "extends", "format", "delimiter", "tick_us", "onset", "align", "seed", "resamples", "opacity", "colormap"]


def _text(draw_from=st.text(max_size=40)) -> st.SearchStrategy[str]:
    return st.one_of(draw_from, st.sampled_from(["", "$", "$x$", "auto", "u1", "psth", "raster", "session", "s",
                                                 "ms", "house", "nature", "\x07", "a\u202eb", "..", "/", "\ufffe"]))


scalars = st.one_of(
    st.integers(min_value=-2**70, max_value=2**70),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0, 1, -1, 0.5, 1e-300, 1e300, 150, 10, 2**63]),
    st.booleans(),
    _text(),
)
values = st.recursive(scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=5),
    st.dictionaries(st.sampled_from(KEYS), inner, max_size=4)), max_leaves=12)


def toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value)          # a JSON string is a TOML basic string
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{json.dumps(k)} = {toml_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(type(value))


def toml_document(data: dict[str, Any]) -> str:
    """A TOML document for ``data`` (tables, arrays of tables and inline values)."""
    lines: list[str] = []

    def table(prefix: str, body: dict[str, Any]) -> None:
        plain = {k: v for k, v in body.items() if not isinstance(v, dict) and not _tables(v)}
        for key, value in plain.items():
            lines.append(f"{json.dumps(key)} = {toml_value(value)}")
        for key, value in body.items():
            name = f"{prefix}.{json.dumps(key)}" if prefix else json.dumps(key)
            if isinstance(value, dict):
                lines.append(f"\n[{name}]")
                table(name, value)
            elif _tables(value):
                for item in value:
                    lines.append(f"\n[[{name}]]")
                    table(name, item)

    table("", data)
    return "\n".join(lines) + "\n"


def _tables(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def _paths(data: Any, prefix: tuple = ()) -> list[tuple]:
    out = [prefix] if prefix else []
    if isinstance(data, dict):
        for key, value in data.items():
            out += _paths(value, prefix + (key,))
    elif isinstance(data, list):
        for i, value in enumerate(data):
            out += _paths(value, prefix + (i,))
    return out


PATHS = _paths(BASE_DATA)


@st.composite
def mutated_specs(draw) -> str:
    """The base spec with a few values replaced, keys deleted or added, as TOML text."""
    data = json.loads(json.dumps(BASE_DATA))
    for _ in range(draw(st.integers(1, 4))):
        path = draw(st.sampled_from(PATHS))
        parent = data
        try:
            for part in path[:-1]:
                parent = parent[part]
            action = draw(st.sampled_from(["replace", "replace", "delete", "add"]))
            if action == "replace":
                parent[path[-1]] = draw(values)
            elif action == "delete" and isinstance(parent, dict):
                parent.pop(path[-1], None)
            elif isinstance(parent, dict):
                parent[draw(st.sampled_from(KEYS))] = draw(values)
        except (KeyError, IndexError, TypeError):
            continue
    return toml_document(data)


@st.composite
def damaged_text(draw) -> str:
    """The base spec's text with a slice cut out, repeated or replaced by random characters."""
    text = BASE
    start = draw(st.integers(0, len(text)))
    stop = draw(st.integers(start, min(len(text), start + 40)))
    insert = draw(st.one_of(st.just(""), st.text(max_size=10), st.sampled_from(["[", "]", "=", '"', "\n", "[[", "#"]),
                            st.just(text[start:stop] * 2)))
    return text[:start] + insert + text[stop:]


specs = st.one_of(mutated_specs(), damaged_text())


# ---- data files: the corpus' small spike and trial tables with bytes and fields damaged --------

SPIKES = (CORPUS / "data" / "spikes.csv").read_bytes()
TRIALS = (CORPUS / "data" / "trials.csv").read_bytes()
EXTREMES = [b"", b"nan", b"inf", b"-inf", b"1e308", b"-1e308", b"1e-320", b"9223372036854775808", b"-0",
            b"0x10", b"1,5", b'"', b'""', b"\x00", b"\xff\xfe", b"\r", b"\n", b"u1\nu2", b" u1 ", b"NULL",
            b"a" * 2000]


@st.composite
def damaged_bytes(draw, data: bytes) -> bytes:
    """``data`` with one to three changes: bytes flipped, a slice cut, repeated or replaced, a
    field replaced by an extreme value, or a line duplicated or dropped."""
    for _ in range(draw(st.integers(1, 3))):
        how = draw(st.sampled_from(["flip", "cut", "repeat", "insert", "field", "line_twice", "line_gone"]))
        start = draw(st.integers(0, max(0, len(data) - 1)))
        stop = draw(st.integers(start, min(len(data), start + 60)))
        if how == "flip" and data:
            data = data[:start] + bytes([data[start] ^ draw(st.integers(1, 255))]) + data[start + 1:]
        elif how == "cut":
            data = data[:start] + data[stop:]
        elif how == "repeat":
            data = data[:stop] + data[start:stop] * draw(st.integers(1, 50)) + data[stop:]
        elif how == "insert":
            data = data[:start] + draw(st.binary(max_size=12)) + data[start:]
        elif how == "field":
            fields = data.split(b",")
            if fields:
                fields[draw(st.integers(0, len(fields) - 1))] = draw(st.sampled_from(EXTREMES))
                data = b",".join(fields)
        else:
            lines = data.split(b"\n")
            i = draw(st.integers(0, len(lines) - 1))
            lines = lines[:i] + ([lines[i]] * 2 if how == "line_twice" else []) + lines[i + 1:]
            data = b"\n".join(lines)
    return data


DATA_SPEC = BASE.replace(f'"{CORPUS / "data"}/spikes.csv"', '"spikes.csv"').replace(
    f'"{CORPUS / "data"}/trials.csv"', '"trials.csv"')

data_cases = st.tuples(st.one_of(damaged_bytes(SPIKES), st.just(SPIKES)),
                       st.one_of(damaged_bytes(TRIALS), st.just(TRIALS)))
