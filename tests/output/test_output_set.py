"""A spec's outputs are replaced as a whole set or not at all, with ordinary permissions, and
file-system failures are user errors (exit 2)."""

from __future__ import annotations

import errno
import json
import os
from pathlib import Path

import pytest

from figspec.output import output_set
from figspec.output.output_set import COMMITTED, OutputError, recover, set_state, write_set
from helpers import DEMO_SPEC


def _manifest(payload: dict[Path, bytes], outdir: Path) -> bytes:
    import hashlib

    return json.dumps({"outputs": [{"path": p.relative_to(outdir).as_posix(),
                                    "sha256": hashlib.sha256(d).hexdigest()} for p, d in payload.items()]}).encode()


def _set(outdir: Path, text: bytes) -> dict[Path, bytes]:
    payload = {outdir / "fig.png": b"png " + text, outdir / "fig_data" / "rate.csv": b"csv " + text}
    payload[outdir / "fig_data" / "manifest.json"] = _manifest(payload, outdir)
    return payload


OWNED = ("fig.svg", "fig.pdf", "fig.png", "fig_data/*")


def _contents(outdir: Path) -> dict[str, bytes]:
    return {p.relative_to(outdir).as_posix(): p.read_bytes() for p in sorted(outdir.rglob("*")) if p.is_file()}


def test_a_render_replaces_the_whole_set_and_leaves_no_staging(tmp_path):
    write_set(tmp_path, "fig", _set(tmp_path, b"old"), OWNED)
    write_set(tmp_path, "fig", _set(tmp_path, b"new"), OWNED)
    assert set_state(tmp_path, "fig") == "complete"
    assert _contents(tmp_path)["fig.png"] == b"png new"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fig.png", "fig_data"]


def test_outputs_the_render_no_longer_writes_are_removed(tmp_path):
    old = {tmp_path / "fig.png": b"png", tmp_path / "fig.svg": b"svg", tmp_path / "fig_data" / "gone.csv": b"x"}
    old[tmp_path / "fig_data" / "manifest.json"] = _manifest(old, tmp_path)     # a render's manifest lists all
    write_set(tmp_path, "fig", old, OWNED)
    (tmp_path / "other.png").write_bytes(b"another spec's figure")
    (tmp_path / "fig_data" / "notes.txt").write_bytes(b"the lab's own file, listed by no manifest")
    write_set(tmp_path, "fig", _set(tmp_path, b"new"), OWNED)
    assert sorted(_contents(tmp_path)) == ["fig.png", "fig_data/manifest.json", "fig_data/notes.txt",
                                           "fig_data/rate.csv", "other.png"]


def test_a_failure_while_staging_keeps_the_old_set(tmp_path, monkeypatch):
    write_set(tmp_path, "fig", _set(tmp_path, b"old"), OWNED)
    before = _contents(tmp_path)
    real_open = open
    calls = []

    def failing_open(path, mode="r", *args, **kwargs):
        if "w" in mode and ".staging" in str(path):
            calls.append(path)
            if len(calls) == 2:
                raise OSError(errno.ENOSPC, "No space left on device")
        return real_open(path, mode, *args, **kwargs)

    monkeypatch.setattr("builtins.open", failing_open)
    with pytest.raises(OutputError, match="the disk is full"):
        write_set(tmp_path, "fig", _set(tmp_path, b"new"), OWNED)
    monkeypatch.undo()
    assert _contents(tmp_path) == before and set_state(tmp_path, "fig") == "complete"


def test_a_render_stopped_while_moving_is_finished_by_the_next(tmp_path, monkeypatch):
    """A kill between the renames: the committed staging folder holds the whole new set, and
    the next command that writes into the folder moves the rest into place."""
    write_set(tmp_path, "fig", _set(tmp_path, b"old"), OWNED)
    real_replace, moved = os.replace, []

    def dying_replace(src, dst):
        if Path(dst).parent == tmp_path or Path(dst).parent.name == "fig_data":
            moved.append(dst)
            if len(moved) == 2:                      # the figure moved, the table not yet
                raise KeyboardInterrupt
        return real_replace(src, dst)

    monkeypatch.setattr(os, "replace", dying_replace)
    with pytest.raises(KeyboardInterrupt):
        write_set(tmp_path, "fig", _set(tmp_path, b"new"), OWNED)
    monkeypatch.undo()
    staging = [p for p in tmp_path.iterdir() if p.name.endswith(".staging")]
    assert len(staging) == 1 and (staging[0] / COMMITTED).is_file()
    assert set_state(tmp_path, "fig") == "stale"          # the manifest is still the old one
    monkeypatch.setattr(output_set, "_alive", lambda host, pid: False)
    assert recover(tmp_path) == ["finished the interrupted render of fig"]
    assert set_state(tmp_path, "fig") == "complete" and _contents(tmp_path)["fig_data/rate.csv"] == b"csv new"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fig.png", "fig_data"]


def test_an_unfinished_staging_folder_of_a_dead_render_is_removed(tmp_path):
    write_set(tmp_path, "fig", _set(tmp_path, b"old"), OWNED)
    dead = tmp_path / f".figspec-fig.{output_set._host()}.999999999.staging"
    (dead / "fig_data").mkdir(parents=True)
    (dead / "fig.png").write_bytes(b"half")
    (tmp_path / ".fig.png.ab12cd34.tmp").write_bytes(b"a temporary file of an earlier figspec")
    assert recover(tmp_path) == ["removed an unfinished render of fig"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fig.png", "fig_data"]
    assert _contents(tmp_path)["fig.png"] == b"png old"


def test_a_staging_folder_of_a_live_render_is_left_alone(tmp_path):
    live = tmp_path / f".figspec-other.{output_set._host()}.{os.getppid()}.staging"
    live.mkdir()
    assert recover(tmp_path) == [] and live.is_dir()


@pytest.mark.parametrize("umask", [0o022, 0o002, 0o077])
def test_permissions_follow_the_umask(tmp_path, umask):
    old = os.umask(umask)
    try:
        write_set(tmp_path, "fig", _set(tmp_path, b"x"), OWNED)
    finally:
        os.umask(old)
    for path in (tmp_path / "fig.png", tmp_path / "fig_data" / "manifest.json"):
        assert path.stat().st_mode & 0o777 == 0o666 & ~umask
    assert (tmp_path / "fig_data").stat().st_mode & 0o777 == 0o777 & ~umask


def test_an_output_folder_that_is_a_file_is_a_user_error(tmp_path):
    target = tmp_path / "figures"
    target.write_text("not a folder")
    with pytest.raises(OutputError, match="a file stands where a folder is needed"):
        write_set(target, "fig", _set(target, b"x"), OWNED)


def test_no_permission_is_a_user_error(tmp_path, monkeypatch):
    def refuse(self, *args, **kwargs):
        raise PermissionError(errno.EACCES, "Permission denied", str(self))

    monkeypatch.setattr(Path, "mkdir", refuse)
    with pytest.raises(OutputError, match="no permission to write here"):
        write_set(tmp_path / "figures", "fig", {tmp_path / "figures" / "fig.png": b"x"}, OWNED)


def test_cli_output_folder_problems_exit_2(tmp_path, cli):
    target = tmp_path / "figures"
    target.write_text("not a folder")
    result = cli("render", DEMO_SPEC, "-o", target, "--format", "png")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert f"{target}: cannot write the outputs: a file stands where a folder is needed" in result.stderr
