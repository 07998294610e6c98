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
    for number, raw in enumerate(text.splitlines(), start=1):
        code = _code_part(raw).strip()
        if depth > 0:
            depth += code.count("[") - code.count("]")
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
            depth = max(0, value.count("[") - value.count("]"))
    return lines


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
