"""Map TOML key paths to the line that sets them.

Neither tomllib nor tomli reports key positions, so this small indexer reads the text line by
line, tracking table headers (``[a.b]``), arrays of tables (``[[panels]]``, counted) and
(dotted) keys. It understands what specs use; anything it cannot place falls back to the
nearest enclosing table it did place.
"""

from __future__ import annotations

from figspec.errors import Loc


def _split_key(text: str) -> tuple[str, ...]:
    """Split a (possibly dotted, possibly quoted) TOML key into parts."""
    parts, buf, quote = [], "", ""
    for ch in text.strip():
        if quote:
            if ch == quote:
                quote = ""
            else:
                buf += ch
        elif ch in "\"'":
            quote = ch
        elif ch == ".":
            parts.append(buf.strip())
            buf = ""
        else:
            buf += ch
    parts.append(buf.strip())
    return tuple(p for p in parts if p)


def _code_part(line: str) -> str:
    """The line without its comment and with string contents blanked out."""
    out, quote = [], ""
    for ch in line:
        if quote:
            out.append(ch if ch == quote else "_")
            if ch == quote:
                quote = ""
        elif ch in "\"'":
            quote = ch
            out.append(ch)
        elif ch == "#":
            break
        else:
            out.append(ch)
    return "".join(out)


def index_key_lines(text: str) -> dict[Loc, int]:
    """Return ``{key path: 1-based line}`` for every table header and key in ``text``."""
    lines: dict[Loc, int] = {}
    array_counts: dict[tuple[str, ...], int] = {}
    table: Loc = ()
    depth = 0  # open brackets of a multi-line value
    array: dict = {}  # the multi-line array being read: its key path, next element, whether one may start
    for number, raw in enumerate(text.splitlines(), start=1):
        code = _code_part(raw).strip()
        if depth > 0:
            depth = _elements(code, depth, array, lines, number)
            continue
        if not code:
            continue
        if code.startswith("[["):
            path = _split_key(raw.strip()[2: raw.strip().index("]]")])
            array_counts[path] = array_counts.get(path, -1) + 1
            table = _with_indices(path, array_counts)
            lines.setdefault(table, number)
            lines.setdefault(table[:-1], number)
        elif code.startswith("["):
            path = _split_key(raw.strip()[1: raw.strip().index("]")])
            table = _with_indices(path, array_counts)
            lines.setdefault(table, number)
        elif "=" in code:
            # _code_part keeps every character's position, so the key's span in ``code`` is
            # its span in the stripped raw line (whose quoted key names are intact).
            key_text = raw.strip()[: len(code.split("=", 1)[0])]
            lines.setdefault(table + _split_key(key_text), number)
            value = code.split("=", 1)[1]
            array = {"loc": table + _split_key(key_text), "index": 0, "start": False}
            depth = _elements(value, 0, array, lines, number)
    return lines


def _elements(code: str, depth: int, array: dict, lines: dict[Loc, int], number: int) -> int:
    """Read one line of a value: track bracket depth and note the line of every element of the
    outer array that starts on it (``window_ms[1]`` on its own line of a multi-line array)."""
    for ch in code:
        outer = depth == 1 and array.get("outer") == "["
        if ch in "[{":
            if outer and array["start"]:
                lines.setdefault(array["loc"] + (array["index"],), number)
                array["start"] = False
            depth += 1
            if depth == 1:
                array["outer"], array["start"] = ch, ch == "["
        elif ch in "]}":
            depth -= 1
        elif ch == "," and outer:
            array["index"] += 1
            array["start"] = True
        elif outer and array["start"] and not ch.isspace():
            lines.setdefault(array["loc"] + (array["index"],), number)
            array["start"] = False
    return max(depth, 0)


def _with_indices(path: tuple[str, ...], array_counts: dict[tuple[str, ...], int]) -> Loc:
    """Insert the current index after every prefix that is an array of tables."""
    out: list[str | int] = []
    for i, part in enumerate(path):
        out.append(part)
        prefix = path[: i + 1]
        if prefix in array_counts and i < len(path) - 1:
            out.append(array_counts[prefix])
    if path in array_counts:
        out.append(array_counts[path])
    return tuple(out)


def line_for(lines: dict[Loc, int], loc: Loc) -> int | None:
    """The line of ``loc``, else of its nearest ancestor that has one."""
    for cut in range(len(loc), -1, -1):
        if loc[:cut] in lines:
            return lines[loc[:cut]]
    return None
