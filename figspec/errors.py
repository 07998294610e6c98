"""User-facing and internal errors.

A *user* error is a bad spec or bad data: the CLI prints each :class:`Problem` on one line
(``FILE:LINE: key.path: what is wrong (got X)``) and exits 2 without a traceback. Anything else
is an internal error (exit 1).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
import json
from typing import Any, Iterable

Loc = tuple[str | int, ...]


def format_key_path(loc: Loc) -> str:
    """Render a key path as ``panels[1].bin_ms`` (a key that is not a bare TOML key is quoted,
    as in the file: ``sources."rig.1"``)."""
    import re

    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            text = str(part) if re.fullmatch(r"[A-Za-z0-9_-]+", str(part)) else json.dumps(str(part), ensure_ascii=False)
            out += ("." if out else "") + text
    return out


def toml_text(value: Any) -> str:
    """``value`` written as it would be in TOML (strings in double quotes, true/false, arrays
    in brackets, tables in braces), so messages show the user's own notation."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, float):
        return {float("inf"): "inf", float("-inf"): "-inf"}.get(value, "nan" if value != value else f"{value:g}")
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_text(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {toml_text(v)}" for k, v in value.items()) + " }"
    return str(value)


GOT_CHARS = 300        # the most of a found value an error line shows: an excerpt, never a whole file's line


def one_line(text: str) -> str:
    """``text`` with every line break and other control character written as ``\\n``/``\\uXXXX``,
    so one problem is one line of output whatever the data held."""
    out = []
    for c in str(text):
        if c == "\n":
            out.append("\\n")
        elif c == "\t":
            out.append(" ")
        elif ord(c) < 32 or 0x7f <= ord(c) < 0xa0 or c in "\u2028\u2029":
            out.append(f"\\u{ord(c):04x}")
        else:
            out.append(c)
    return "".join(out)


def excerpt(text: str, limit: int) -> str:
    """At most ``limit`` characters of ``text`` on one line, cut with "..." when longer."""
    text = one_line(text)
    return text if len(text) <= limit else text[:limit - 3] + "..."


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a spec or its data.

    Parameters
    ----------
    message : what is wrong or what was expected.
    loc : key path in the spec, e.g. ``("panels", 1, "bin_ms")``.
    got : what was found, already formatted for the reader.
    file : the spec file (filled in by the spec layer when known).
    line : 1-based line in ``file`` (filled in when the key can be located).
    """

    message: str
    loc: Loc = ()
    got: str | None = None
    file: str | None = None
    line: int | None = None

    def format(self) -> str:
        head = ""
        if self.file:
            head = self.file + (f":{self.line}" if self.line else "") + ": "
        key = format_key_path(self.loc)
        text = head + (f"{key}: " if key else "") + self.message
        if self.got is not None:
            text += f" (got {excerpt(self.got, GOT_CHARS)})"
        return one_line(text)

    def located(self, file: str, line: int | None) -> "Problem":
        return replace(self, file=self.file or file, line=self.line or line)


class FigspecError(Exception):
    """Base class of every error figspec raises on purpose."""


class UserError(FigspecError, ValueError):
    """A bad spec or bad data: reported without a traceback, exit code 2."""

    def __init__(self, problems: Problem | Iterable[Problem]):
        self.problems: list[Problem] = (
            [problems] if isinstance(problems, Problem) else list(problems)
        )
        super().__init__("\n".join(p.format() for p in self.problems))


class SpecError(UserError):
    """The spec (or a style file) is malformed or inconsistent."""


class DataError(UserError):
    """A data source is missing, unreadable or does not fit the spec."""


class FigspecWarning(UserWarning):
    """Something the scientist should know about the figure (printed by the CLI)."""
