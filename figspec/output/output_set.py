"""Write a spec's outputs as one set, so that an interrupted render never leaves a mix.

A render first writes every file of the set into a hidden staging folder beside the outputs
(``OUTDIR/.figspec-<stem>.<host>.<pid>.staging/``). Only when all are there does it write the
folder's ``COMMITTED`` list (one rename), then moves the files into place, the manifest last,
and removes the folder. So at any moment either no ``COMMITTED`` exists and every visible output
is the previous render's, or a complete new set waits in the staging folder; the next figspec
command that writes into the folder (:func:`recover`) finishes such a move and deletes any
staging folder left unfinished. Files are created with the ordinary permissions (the umask
decides), and every file-system failure is a user error naming the path, exit 2.
"""

from __future__ import annotations

import errno
import json
import os
import re
import shutil
import socket
from pathlib import Path

from figspec.errors import Problem, UserError
from figspec.output.names import STAGING_PREFIX

COMMITTED = "COMMITTED"
_STAGING = re.compile(re.escape(STAGING_PREFIX) + r"(?P<stem>.+)\.(?P<host>[^.]+)\.(?P<pid>\d+)\.staging$")
_OLD_TEMP = re.compile(r"^\..+\.[a-z0-9_]{8}\.tmp$")       # temporary files of figspec 0.x renders


class OutputError(UserError, OSError):
    """The output folder cannot be written (not a folder, no permission, disk full)."""


def _host() -> str:
    return re.sub(r"[^A-Za-z0-9_-]", "_", socket.gethostname()) or "host"


def output_problem(err: OSError, path: Path) -> OutputError:
    reason = {errno.ENOSPC: "the disk is full", errno.EDQUOT: "the disk quota is exceeded",
              errno.EACCES: "no permission to write here", errno.EPERM: "no permission to write here",
              errno.EROFS: "the file system is read-only", errno.ENOTDIR: "a file stands where a folder is needed",
              errno.EEXIST: "a file stands where a folder is needed"}.get(err.errno, err.strerror or str(err))
    return OutputError(Problem(f"cannot write the outputs: {reason}", file=str(path)))


def output_folder(path: Path) -> None:
    """Make the output folder (and its parents), or say in one user error why it cannot be."""
    try:
        path.mkdir(parents=True, exist_ok=True)
    except FileExistsError as err:
        raise output_problem(err, path) from None
    except OSError as err:
        raise output_problem(err, path) from None
    if not path.is_dir():
        raise OutputError(Problem("cannot write the outputs: this is a file, not a folder", file=str(path)))


def refuse_links(path: Path, root: Path) -> None:
    """An error when ``path``, or any folder between ``root`` (which the user named, and may be a
    link) and ``path``, is a symbolic link: figspec would write where it points."""
    path, root = Path(path), Path(root)
    try:
        parts = path.relative_to(root).parts
    except ValueError:
        parts = (path.name,)
        root = path.parent
    here = root
    for part in parts:
        here = here / part
        if here.is_symlink():
            raise OutputError(Problem("a symbolic link stands where figspec writes its own file; figspec never "
                                      "writes through a link: remove it or choose another output folder",
                                      file=str(here)))


def listed_outputs(outdir: Path, stem: str) -> set[str]:
    """The outputs the previous render's manifest lists (paths relative to ``outdir``, inside the
    spec's own names): the only files a re-render may remove. A user's own file beside them, or
    inside ``<stem>_data/``, is never listed and so never touched."""
    manifest = outdir / f"{stem}_data" / "manifest.json"
    if manifest.is_symlink() or not manifest.is_file():
        return set()
    try:
        listed = {str(item["path"]) for item in json.loads(manifest.read_text(encoding="utf-8"))["outputs"]}
    except (ValueError, KeyError, TypeError, OSError, UnicodeDecodeError):
        return set()
    own = re.compile(re.escape(stem) + r"(\.[a-z]+|_data/[^/]+)$")
    return {name for name in listed if own.fullmatch(name) and ".." not in name.split("/")} | \
        {f"{stem}_data/manifest.json"}


def write_set(outdir: Path, stem: str, payload: dict[Path, bytes], owned: tuple[str, ...] = ()) -> list[Path]:
    """Write ``payload`` (absolute paths inside ``outdir`` -> bytes) as one set. Files the
    previous render's manifest lists (and ``owned`` glob patterns, relative to ``outdir``, allow)
    that the set does not hold any more are stale outputs of the same spec and are removed with
    the switch; nothing else is. A symbolic link where a file of the set goes (or its
    ``<stem>_data`` folder) is an error: figspec never writes or deletes through one. The last
    path of ``payload`` is moved last (the manifest)."""
    outdir = Path(outdir)
    output_folder(outdir)
    recover(outdir)
    staging = outdir / f"{STAGING_PREFIX}{stem}.{_host()}.{os.getpid()}.staging"
    relative = [p.relative_to(outdir) for p in payload]
    for rel in relative:
        refuse_links(outdir / rel, outdir)
    try:
        shutil.rmtree(staging, ignore_errors=True)
        staging.mkdir()
        for rel, data in zip(relative, payload.values()):
            target = staging / rel
            target.parent.mkdir(parents=True, exist_ok=True)
            with open(target, "wb") as handle:            # mode 0666 less the umask, as any new file
                handle.write(data)
        allowed = {p.relative_to(outdir).as_posix() for pattern in owned for p in outdir.glob(pattern)
                   if p.is_file() and not p.is_symlink()}
        stale = sorted((listed_outputs(outdir, stem) & allowed) - {r.as_posix() for r in relative})
        listing = staging / f"{COMMITTED}.writing"
        listing.write_text(json.dumps({"move": [r.as_posix() for r in relative], "remove": stale}))
        os.replace(listing, staging / COMMITTED)          # from here on the new set wins
    except OSError as err:
        shutil.rmtree(staging, ignore_errors=True)
        raise output_problem(err, outdir) from None
    except BaseException:
        shutil.rmtree(staging, ignore_errors=True)
        raise
    try:
        _finish(staging, outdir)
    except OutputError:
        raise
    except OSError as err:
        raise output_problem(err, outdir) from None
    return list(payload)


def _finish(staging: Path, outdir: Path) -> None:
    """Move a committed staging folder's files into place (any already moved are skipped),
    remove the stale ones, then the folder."""
    listing = json.loads((staging / COMMITTED).read_text())
    for name in listing["remove"]:
        if not (outdir / name).parent.is_symlink():
            (outdir / name).unlink(missing_ok=True)
    for name in listing["move"]:
        source = staging / name
        if source.exists():
            refuse_links(outdir / name, outdir)
            (outdir / name).parent.mkdir(parents=True, exist_ok=True)
            os.replace(source, outdir / name)
    shutil.rmtree(staging, ignore_errors=True)


def _alive(host: str, pid: int) -> bool:
    if host != _host():
        return True                      # another machine's render: leave it to that machine
    if pid == os.getpid():
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def recover(outdir: Path) -> list[str]:
    """Finish or discard what interrupted renders left in ``outdir``: a committed set is moved
    into place, an unfinished one deleted, and old temporary files removed. Returns what was
    done, one line each (for the build summary)."""
    done = []
    if not outdir.is_dir():
        return done
    for entry in sorted(outdir.iterdir()):
        found = _STAGING.match(entry.name)
        if found and entry.is_dir() and not _alive(found["host"], int(found["pid"])):
            if (entry / COMMITTED).is_file():
                _finish(entry, outdir)
                done.append(f"finished the interrupted render of {found['stem']}")
            else:
                shutil.rmtree(entry, ignore_errors=True)
                done.append(f"removed an unfinished render of {found['stem']}")
        elif _OLD_TEMP.match(entry.name) and entry.is_file():
            entry.unlink(missing_ok=True)
    for folder in outdir.glob("*_data"):
        for entry in folder.glob(".*.tmp"):
            if _OLD_TEMP.match(entry.name):
                entry.unlink(missing_ok=True)
    return done


def set_state(outdir: Path, stem: str) -> str:
    """``complete`` when ``<stem>_data/manifest.json`` lists every output with its hash and
    they all match, ``stale`` when any differs or is missing, ``missing`` without a manifest."""
    import hashlib

    manifest = Path(outdir) / f"{stem}_data" / "manifest.json"
    if not manifest.is_file():
        return "missing"
    try:
        outputs = json.loads(manifest.read_text())["outputs"]
    except (ValueError, KeyError):
        return "stale"
    for item in outputs:
        path = Path(outdir) / item["path"]
        if not path.is_file() or hashlib.sha256(path.read_bytes()).hexdigest() != item["sha256"]:
            return "stale"
    return "complete"
