"""Writing one file the way every figspec command does: never through a symbolic link, never half.

A file is written to a new temporary file in its own folder (created with ``O_CREAT | O_EXCL``,
so a name planted in advance is never opened) and renamed over the target; a rename replaces a
link rather than writing where it points, but figspec refuses a link where it would write anyway,
and any link between the folder the user named and the file, so nothing outside figspec's own
files is touched. Every failure (a file where a folder should be, a missing folder, no
permission, a full disk) is one user error naming the path, with the temporary file removed.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from figspec.errors import Problem
from figspec.output.output_set import OutputError, output_problem, refuse_links


def write_bytes(path: str | Path, data: bytes, root: str | Path | None = None, make_parents: bool = True) -> Path:
    """Write ``data`` to ``path`` whole (temporary file, then rename), refusing links from ``root``
    (default: the file's folder) down. ``make_parents``: create missing folders; otherwise a
    missing folder is an error."""
    path = Path(path)
    root = Path(root) if root is not None else path.parent
    if path.is_dir() and not path.is_symlink():
        raise OutputError(Problem("is a folder; name a file to write", file=str(path)))
    refuse_links(path, root)
    parent = path.parent
    if not parent.exists() and not make_parents:
        raise OutputError(Problem(f"cannot write here: the folder {parent} does not exist", file=str(path)))
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise output_problem(err, parent) from None
    if not parent.is_dir():
        raise OutputError(Problem("cannot write here: a file stands where a folder is needed", file=str(parent)))
    refuse_links(path, root)                      # again: a folder made just now by someone else
    temporary = None
    try:
        fd, temporary = tempfile.mkstemp(dir=parent, prefix=f".{path.name}.", suffix=".tmp")
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        os.chmod(temporary, 0o666 & ~UMASK)    # as an ordinary new file (mkstemp makes it 0600)
        os.replace(temporary, path)
        temporary = None
    except OSError as err:
        raise output_problem(err, path) from None
    finally:
        if temporary is not None:
            Path(temporary).unlink(missing_ok=True)
    return path


def write_text(path: str | Path, text: str, root: str | Path | None = None, make_parents: bool = True) -> Path:
    return write_bytes(path, text.encode("utf-8"), root, make_parents)


def _read_umask() -> int:
    mask = os.umask(0)                            # read once, at import: os.umask only sets and returns
    os.umask(mask)
    return mask


UMASK = _read_umask()
