"""Figures you can trust in review: byte-stable outputs, provenance, manifest, source data,
atomic writes, baseline comparison and spec diffs."""

import hashlib
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from figspec.draw.raster import tick_positions

from figspec import pipeline
from figspec.spec.style import BUILTIN_STYLES
from figspec.draw.context import styled

from conftest import run_cli as figspec
from helpers import DEMO_SPEC, ROOT, SMALL_SPEC, SPECS, draw_now, write_spec

DEMOS = sorted(SPECS.glob("*.toml"))


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture(scope="module")
def two_renders(tmp_path_factory, demo_render):
    """Demo specs rendered twice: all of them once in this process (the session's render), and
    two of them (one with every panel kind family, one read through an optional reader) in a
    process of its own, as a user would run the command."""
    out = tmp_path_factory.mktemp("renders") / "b"
    specs = [str(SPECS / "unit_composite.toml"), str(SPECS / "nwb_session.toml")]
    result = subprocess.run([sys.executable, "-m", "figspec", "render", *specs, "-o", str(out)],
                            capture_output=True, text=True, cwd=ROOT)
    assert result.returncode == 0, result.stderr
    return demo_render[0], out


def test_two_processes_write_identical_bytes(two_renders):
    a, b = two_renders
    # every spec's own outputs; index.html lists a folder's figures, and the two folders hold different sets
    files = sorted(p.relative_to(b) for p in b.rglob("*") if p.is_file() and p.name != "index.html")
    assert {p.suffix for p in files} >= {".svg", ".pdf", ".png", ".csv", ".json", ".md"}
    assert len([f for f in files if f.suffix == ".png"]) == 2
    assert [f for f in files if sha(a / f) != sha(b / f)] == []


def test_manifest_lists_inputs_outputs_and_resolved_defaults(two_renders):
    a, _ = two_renders
    manifest = json.loads((a / "level_grid_data" / "manifest.json").read_text())
    inputs = {i["role"]: i for i in manifest["inputs"]}
    assert inputs["spec"]["sha256"] == sha(DEMO_SPEC)
    assert inputs["data:midbrain:spikes"]["sha256"] == sha(SPECS / "data" / "spikes.csv")
    assert inputs["data:midbrain:trials"]["sha256"] == sha(SPECS / "data" / "trials.csv")
    assert inputs["spec"]["path"] == "level_grid.toml"                  # relative to the spec's folder,
    assert inputs["data:midbrain:spikes"]["path"] == "data/spikes.csv"   # wherever the render ran
    assert inputs["style:house"]["path"] == "../styles/house.toml"       # the lab's, which extends ...
    assert inputs["style:default"]["path"] == "figspec:styles/default.toml"   # ... figspec's own
    assert inputs["style:default"]["sha256"] == sha(BUILTIN_STYLES / "default.toml")
    outputs = {o["path"]: o["sha256"] for o in manifest["outputs"]}
    assert set(outputs) >= {"level_grid.svg", "level_grid.pdf", "level_grid.png", "level_grid_data/rate.csv",
                            "level_grid_data/statistics.csv", "level_grid_data/legend.md"}
    assert all(outputs[p] == sha(a / p) for p in outputs)
    params = manifest["parameters"]
    assert params["spec"]["figure"]["width_mm"] == 183                 # from the style
    assert params["spec"]["figure"]["png_dpi"] == 300                  # a default nobody wrote
    assert params["panels_resolved"][1]["lock_y"] is True and params["panels_resolved"][0]["source"] == "midbrain"
    assert params["style"]["font"]["family"] == "DejaVu Sans"


def test_every_output_carries_provenance(two_renders):
    a, _ = two_renders
    spec_hash = sha(DEMO_SPEC).encode()
    for suffix in (".svg", ".pdf", ".png"):
        assert spec_hash in (a / f"level_grid{suffix}").read_bytes(), suffix


def test_statistics_summary_and_legend(two_renders):
    a, _ = two_renders
    stats = pd.read_csv(a / "level_summary_data" / "statistics.csv")
    assert {"trials", "test", "fit", "latency"} <= set(stats["section"])
    p = stats[(stats["section"] == "test") & (stats["quantity"] == "p_corrected")]
    assert len(p) == 54 and p["value"].between(0, 1).all()      # 3 units x 9 levels, of level_response and latency
    legend = (a / "level_summary_data" / "legend.md").read_text()
    assert "Holm-corrected" in legend and "mean ± SEM" in legend and "+/-" not in legend and "n = 30 trials per level" in legend


def test_source_data_equals_what_is_drawn(two_renders):
    a, _ = two_renders
    spikes = pd.read_csv(a / "level_grid_data" / "spikes.csv")
    rate = pd.read_csv(a / "level_grid_data" / "rate.csv")
    resolved = pipeline.check(DEMO_SPEC)
    with styled(resolved.style):
        fig = draw_now(pipeline.draw(resolved, pipeline.compute(resolved)))
    raster_axes, rate_axes = fig.subfigs[0].axes, fig.subfigs[1].axes
    for ax_r, ax_h, level in zip(raster_axes, rate_axes, range(80, -1, -10)):
        [ticks] = [p for p in ax_r.patches if p.get_gid() == "raster"]
        drawn_x = np.sort(tick_positions(ticks))
        np.testing.assert_allclose(drawn_x, np.sort(spikes[spikes["level"] == level]["time_ms"].dropna()), rtol=1e-9)
        [stairs] = [p for p in ax_h.patches if p.get_gid() == "rate"]
        np.testing.assert_allclose(stairs.get_data().values, rate[rate["level"] == level]["rate"], rtol=1e-9)


def test_failed_render_leaves_earlier_outputs_untouched(tmp_path, monkeypatch):
    import errno

    import figspec.output.output_set as output_set

    out = tmp_path / "out"
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    pipeline.render(spec, out)
    before = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    calls = {"n": 0}

    def failing(path, mode="r", *args, **kwargs):
        calls["n"] += 1
        if calls["n"] == 3:                              # two files already staged
            raise OSError(errno.ENOSPC, "No space left on device")
        return open(path, mode, *args, **kwargs)

    monkeypatch.setattr(output_set, "open", failing, raising=False)
    spec.write_text(spec.read_text().replace("bin_ms = 10", "bin_ms = 20"))
    with pytest.raises(output_set.OutputError, match="the disk is full"):
        pipeline.render(spec, out)
    after = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert after == before                                # nothing replaced, no temporary file left
    assert not any(p.name.startswith(".") for p in out.iterdir())     # no staging folder left


def test_compare_passes_unchanged_and_catches_a_2_ms_bin_change(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    assert figspec("snapshot", spec, "--dir", tmp_path / "base").returncode == 0
    same = figspec("compare", spec, "--dir", tmp_path / "base", "-o", tmp_path / "cmp")
    assert same.returncode == 0 and "fig: unchanged (RMS" in same.stdout
    spec.write_text(spec.read_text().replace("bin_ms = 10", "bin_ms = 8"))
    differs = figspec("compare", spec, "--dir", tmp_path / "base", "-o", tmp_path / "cmp")
    assert differs.returncode == 3 and "fig: CHANGED (RMS" in differs.stdout
    assert {"fig.new.png", "fig.baseline.png", "fig.difference.png", "summary.txt"} <= \
        {p.name for p in (tmp_path / "cmp").iterdir()}


def test_diff_against_a_git_revision_reports_the_key_change(tmp_path):
    specs = tmp_path / "specs"
    specs.mkdir()
    spec = write_spec(specs, SMALL_SPEC, "fig.toml")
    git = lambda *a: subprocess.run(["git", *a], cwd=tmp_path, capture_output=True, text=True, check=True)  # noqa: E731
    git("init", "-q")
    git("-c", "user.name=t", "-c", "user.email=t@example.org", "add", ".")
    git("-c", "user.name=t", "-c", "user.email=t@example.org", "commit", "-qm", "figures")
    spec.write_text(spec.read_text().replace("bin_ms = 10", "bin_ms = 8"))
    result = figspec("diff", spec, "--rev", "HEAD", "-o", tmp_path / "d")
    assert result.returncode == 0, result.stderr
    assert "changed panels[1].bin_ms: 10 -> 8" in result.stdout
    assert "table rate: 50 rows added (of 50)" in result.stdout    # 2 levels x 20 bins -> 2 x 25: no bin
    assert "table rate: 40 rows removed (of 40)" in result.stdout  # has both its edges in both versions
    assert "data files: " in result.stdout and "spikes.csv" in result.stdout
    folder = tmp_path / "d" / "fig_diff"
    assert {"old.png", "new.png", "side_by_side.png", "difference.png", "summary.txt", "review.html"} <= \
        {p.name for p in folder.iterdir()}
    assert not list(specs.glob(".*.toml"))                        # the revision's copy was removed


def test_compare_clears_its_own_files_of_earlier_runs(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    assert figspec("snapshot", spec, "--dir", tmp_path / "base").returncode == 0
    results = tmp_path / "cmp"
    results.mkdir()
    for stale in ("gone.new.png", "gone.baseline.png", "gone.difference.png"):
        (results / stale).write_bytes(b"from an earlier run")
    (results / "notes.txt").write_text("the user's own file")
    assert figspec("compare", spec, "--dir", tmp_path / "base", "-o", results).returncode == 0
    assert sorted(p.name for p in results.iterdir()) == ["fig.baseline.png", "fig.new.png", "notes.txt", "review.html",
                                                         "summary.txt"]


def test_every_command_shows_examples_and_defaults(capsys):
    from figspec.cli import run

    for command in ("render", "check", "snapshot", "compare", "diff", "schema", "draft", "watch"):
        with pytest.raises(SystemExit):
            run([command, "--help"])
        text = capsys.readouterr().out
        assert "examples:\n  figspec " + command in text
    with pytest.raises(SystemExit):
        run(["compare", "--help"])
    assert "(default: 1.0)" in " ".join(capsys.readouterr().out.split())      # wrapped at any width


def test_diff_blames_a_broken_old_version_on_the_old_file(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    old = tmp_path / "kept" / "fig.toml"
    old.parent.mkdir()
    old.write_text(SMALL_SPEC.replace("bin_ms = 10", "bin_ms = -1"))
    result = figspec("diff", spec, "--old", old, "-o", tmp_path / "d")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert result.stderr.startswith(f"{old} (old version):") and "bin_ms" in result.stderr
    assert not list(tmp_path.glob(".*.toml"))                     # the copy beside the spec was removed


def test_diff_of_a_resized_figure_says_which_side_is_which(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    (tmp_path / "kept").mkdir()
    old = write_spec(tmp_path / "kept", SMALL_SPEC, "fig.toml")
    spec.write_text(spec.read_text().replace("height_mm = 120", "height_mm = 60", 1))
    result = figspec("diff", spec, "--old", old, "-o", tmp_path / "d")
    assert result.returncode == 0, result.stderr
    assert "px (old) and " in result.stdout and "px (new)" in result.stdout
    assert "changed figure.height_mm: 120 -> 60" in result.stdout


def test_diff_names_a_missing_spec_without_a_traceback(tmp_path):
    spec = write_spec(tmp_path, SMALL_SPEC, "fig.toml")
    for args in ((spec, "--old", tmp_path / "nope.toml"), (tmp_path / "nope.toml", "--old", spec)):
        result = figspec("diff", *args, "-o", tmp_path / "d")
        assert result.returncode == 2 and "Traceback" not in result.stderr
        assert result.stderr.startswith(f"{tmp_path / 'nope.toml'}: spec file not found")
