"""The review page and the index page in a real browser (Debian's chromium, headless): the
page loads with no console error, every image decodes, and a screenshot shows the figures. The
screenshots are kept under FIGSPEC_ARTEFACTS (default: tests/artefacts/, not committed)."""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from PIL import Image

from helpers import ROOT, copy_project

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium); "
                                                         ".ci/run installs it where it can")
ARTEFACTS = Path(os.environ.get("FIGSPEC_ARTEFACTS", ROOT / "tests" / "artefacts"))
# the flags a closed machine needs: no sandbox as root, no GPU, no background connections
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--hide-scrollbars"]

PROBE = """<script>
window.__problems = [];
window.addEventListener("error", function (e) {
  var t = e.target || {};
  window.__problems.push("error: " + (e.message || ("resource " + (t.src || t.href || t.tagName))));
}, true);
["error", "warn"].forEach(function (level) {
  var original = console[level];
  console[level] = function () { window.__problems.push("console." + level + ": " +
    Array.prototype.join.call(arguments, " ")); original.apply(console, arguments); };
});
window.addEventListener("load", function () {
  var images = Array.prototype.slice.call(document.images);
  var out = { images: images.length,
              decoded: images.filter(function (i) { return i.complete && i.naturalWidth > 0; }).length,
              problems: window.__problems };
  var pre = document.createElement("pre");
  pre.id = "figspec-probe";
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
</script>
"""


def _chromium(*args: str, profile: Path) -> subprocess.CompletedProcess:
    return subprocess.run([CHROMIUM, *FLAGS, f"--user-data-dir={profile}", *args], capture_output=True,
                          text=True, timeout=120)


def probe(page: Path, tmp_path: Path) -> dict:
    """Load a copy of ``page`` (beside it, so its links resolve) with a probe script first in
    its head; return the probe's findings: images, decoded images, errors and console output."""
    copy = page.with_name(f".probe-{page.name}")
    copy.write_text(page.read_text(encoding="utf-8").replace("<head>", "<head>\n" + PROBE, 1), encoding="utf-8")
    try:
        ran = _chromium("--virtual-time-budget=10000", "--dump-dom", copy.as_uri(), profile=tmp_path / "dom")
    finally:
        copy.unlink()
    found = re.search(r'<pre id="figspec-probe">(.*?)</pre>', ran.stdout, re.S)
    assert found, ran.stderr[-2000:]
    import html

    return json.loads(html.unescape(found.group(1)))


def screenshot(page: Path, name: str, tmp_path: Path, size=(1400, 2000)) -> Image.Image:
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    target = ARTEFACTS / name
    ran = _chromium(f"--window-size={size[0]},{size[1]}", f"--screenshot={target}", page.as_uri(),
                    profile=tmp_path / "shot")
    assert target.is_file(), ran.stderr[-2000:]
    return Image.open(target).convert("RGB")


def _ink_rows(image: Image.Image) -> int:
    """Rows of the screenshot with anything but white on them."""
    import numpy as np

    pixels = np.asarray(image, dtype=np.int16)
    return int((np.abs(pixels - 255).sum(axis=2) > 30).any(axis=1).sum())


def test_the_probe_finds_a_broken_image(tmp_path):
    page = tmp_path / "broken.html"
    page.write_text("<!DOCTYPE html><html><head><title>x</title></head><body><img src=\"missing.png\">"
                    "<script>console.error('boom')</script></body></html>")
    found = probe(page, tmp_path)
    assert found["images"] == 1 and found["decoded"] == 0
    assert any("boom" in p for p in found["problems"]) and any("missing.png" in p for p in found["problems"])


def test_a_changed_bin_width_on_the_review_page(tmp_path, cli):
    specs = copy_project(tmp_path)
    spec = specs / "level_grid.toml"
    old = tmp_path / "old" / "level_grid.toml"          # an old copy kept elsewhere: data still beside spec
    old.parent.mkdir()
    old.write_text(spec.read_text())
    spec.write_text(spec.read_text().replace("bin_ms = 5", "bin_ms = 10"))
    ran = cli("diff", spec, "--old", old, "-o", tmp_path / "review", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    page = tmp_path / "review" / "level_grid_diff" / "review.html"
    text = page.read_text()
    assert "changed panels[1].bin_ms: 5 -&gt; 10" in text
    assert "rows added" in text and "rows removed" in text and "Difference" in text
    found = probe(page, tmp_path)
    assert found == {"images": 3, "decoded": 3, "problems": []}
    shot = screenshot(page, "review_bin_width.png", tmp_path)
    assert _ink_rows(shot) > 600              # the figures fill the page, not a blank or an error page


def test_the_index_page_of_a_render(tmp_path, cli):
    specs = copy_project(tmp_path)
    ran = cli("render", specs / "level_grid.toml", specs / "level_summary.toml",
              "-o", tmp_path / "figures", "--format", "png,pdf", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    page = tmp_path / "figures" / "index.html"
    found = probe(page, tmp_path)
    assert found == {"images": 2, "decoded": 2, "problems": []}
    assert _ink_rows(screenshot(page, "index.png", tmp_path)) > 600


def test_the_live_preview_page_polls_without_errors(tmp_path):
    pytest.importorskip("watchfiles")
    from figspec.build import BuildOptions
    from figspec.preview import Preview

    spec = copy_project(tmp_path) / "level_grid.toml"
    out = tmp_path / "preview"
    Preview(spec, BuildOptions(str(out), ("png",), None, None, False, True), lambda line: None).render()
    found = probe(out / "index.html", tmp_path)          # ten seconds of virtual time: ten polls of preview.js
    assert found == {"images": 1, "decoded": 1, "problems": []}


def test_the_compare_review_page(tmp_path, cli):
    from helpers import SMALL_SPEC, write_spec

    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    assert cli("snapshot", spec, "--dir", tmp_path / "base").returncode == 0
    spec.write_text(spec.read_text().replace("bin_ms = 10", "bin_ms = 8"))
    ran = cli("compare", spec, "--dir", tmp_path / "base", "-o", tmp_path / "cmp")
    assert ran.returncode == 3
    page = tmp_path / "cmp" / "review.html"
    text = page.read_text()
    assert "1 changed, 0 unchanged" in text and "Old: baseline" in text and "tolerance RMS 1" in text
    assert probe(page, tmp_path) == {"images": 3, "decoded": 3, "problems": []}
