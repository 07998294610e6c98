"""``figspec watch``: a save re-renders, a bad save prints the usual one-line error and keeps the
last good figure, and the index page's reload counter moves on each render."""

from __future__ import annotations

import re
import threading
import time
from pathlib import Path

import pytest

from figspec.build import BuildOptions
from helpers import copy_project

pytest.importorskip("watchfiles")


def _wait_for(condition, seconds=60.0):
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        if condition():
            return True
        time.sleep(0.1)
    return False


def _counter(folder: Path) -> int:
    found = re.search(r"= (\d+);", (folder / "preview.js").read_text()) if (folder / "preview.js").is_file() else None
    return int(found.group(1)) if found else 0


def test_saves_re_render_and_a_bad_save_keeps_the_last_good_figure(tmp_path):
    from figspec.preview import Preview

    specs = copy_project(tmp_path)
    spec = specs / "level_grid.toml"
    spec.write_text(spec.read_text().replace('formats = ["svg", "pdf", "png"]', 'formats = ["png"]'))
    out = tmp_path / "preview"
    lines: list[str] = []
    preview = Preview(spec, BuildOptions(str(out), ("png",), None, None, False, True), lines.append)
    assert preview.render()
    assert {spec.resolve(), (specs / "data" / "spikes.csv").resolve(),
            (tmp_path / "styles" / "house.toml").resolve()} <= preview.files
    first = (out / "level_grid.png").read_bytes()
    assert "window.figspecPreview" in (out / "preview.js").read_text()
    assert "<script>" in (out / "index.html").read_text()          # the page reloads itself

    stop = threading.Event()
    worker = threading.Thread(target=preview.watch, args=(stop, 50), daemon=True)
    worker.start()
    try:
        time.sleep(0.5)
        spec.write_text(spec.read_text().replace("bin_ms = 5", "bin_ms = -5"))          # a bad save
        assert _wait_for(lambda: _counter(out) == 2)
        assert any(re.match(r".*level_grid\.toml:\d+: panels\[1\]\.bin_ms: ", line) for line in lines), lines
        assert (out / "level_grid.png").read_bytes() == first                         # kept
        assert "bin_ms" in (out / "index.html").read_text()                           # shown on the page
        spec.write_text(spec.read_text().replace("bin_ms = -5", "bin_ms = 10"))         # fixed
        assert _wait_for(lambda: _counter(out) == 3)
        assert (out / "level_grid.png").read_bytes() != first
        house = tmp_path / "styles" / "house.toml"                                    # the style is watched too
        house.write_text(house.read_text() + "\n")
        assert _wait_for(lambda: _counter(out) == 4)
    finally:
        stop.set()
        worker.join(10)
    assert not worker.is_alive()


def test_watch_without_the_extra_names_the_install(monkeypatch, cli, tmp_path):
    import sys

    monkeypatch.setitem(sys.modules, "watchfiles", None)       # import watchfiles now fails
    ran = cli("watch", copy_project(tmp_path) / "level_grid.toml")
    assert ran.returncode == 2 and "figspec[preview]" in ran.stderr


def test_watching_a_spec_in_a_missing_folder_is_refused(tmp_path, cli):
    ran = cli("watch", tmp_path / "nope" / "fig.toml", "-o", tmp_path / "out")
    assert ran.returncode == 2 and "nothing to watch" in ran.stderr
