"""Builds of many specs: skipping what is up to date (and saying why the rest is rebuilt),
worker processes and a Dask cluster giving byte-identical outputs, per-spec reports, the
closing table and the exit status."""

from __future__ import annotations

import io
from pathlib import Path

import pytest

from figspec.build import BuildOptions, Progress, SpecResult, build, summary_table, worst
from helpers import SMALL_SPEC, write_spec


def _specs(folder: Path, n: int = 2) -> list[Path]:
    return [write_spec(folder, SMALL_SPEC.replace('title = "t"', f'title = "figure {i}"'), f"fig{i}.toml")
            for i in range(n)]


def _bytes(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def test_a_second_build_skips_every_unchanged_spec(tmp_path):
    specs = _specs(tmp_path)
    options = BuildOptions(str(tmp_path / "out"))
    first = build(specs, options)
    assert [r.status for r in first] == ["rendered", "rendered"] and first[0].reason == "no earlier outputs"
    before = _bytes(tmp_path / "out")
    again = build(specs, options)
    assert [(r.status, r.reason) for r in again] == [("skipped", "unchanged")] * 2
    assert _bytes(tmp_path / "out") == before


@pytest.mark.parametrize("change, reason", [
    (lambda spec, out: spec.write_text(spec.read_text().replace("bin_ms = 10", "bin_ms = 20")), "changed: spec"),
    (lambda spec, out: (out / "fig0.png").write_bytes(b"edited by hand"), "outputs changed or missing"),
    (lambda spec, out: (out / "fig0_data" / "rate.csv").unlink(), "outputs changed or missing"),
])
def test_a_change_rebuilds_that_spec_only_and_says_why(tmp_path, change, reason):
    specs = _specs(tmp_path)
    options = BuildOptions(str(tmp_path / "out"), formats=("png",))
    build(specs, options)
    change(specs[0], tmp_path / "out")
    results = build(specs, options)
    assert [(r.status, r.reason) for r in results] == [("rendered", reason), ("skipped", "unchanged")]


def test_a_data_change_other_formats_and_force_rebuild(tmp_path):
    data = tmp_path / "data"
    import shutil

    from helpers import SPECS

    shutil.copytree(SPECS / "data", data, ignore=shutil.ignore_patterns("*.nwb", "*.parquet", "day2*", "level*",
                                                                         "sorted*"))
    spec = tmp_path / "fig.toml"
    spec.write_text(SMALL_SPEC.replace("@DATA@", str(data)))
    options = BuildOptions(str(tmp_path / "out"), formats=("png",))
    build([spec], options)
    (data / "trials.csv").write_text((data / "trials.csv").read_text() + "\n")
    assert build([spec], options)[0].reason == "changed: data:demo:trials"
    assert build([spec], BuildOptions(str(tmp_path / "out"), formats=("svg",)))[0].reason == "other formats"
    assert build([spec], BuildOptions(str(tmp_path / "out"), formats=("svg",), force=True))[0].reason == "--force"


def test_worker_processes_give_byte_identical_outputs(tmp_path):
    specs = _specs(tmp_path, 3)
    one = build(specs, BuildOptions(str(tmp_path / "one"), formats=("svg", "pdf", "png")), jobs=1)
    two = build(specs, BuildOptions(str(tmp_path / "two"), formats=("svg", "pdf", "png")), jobs=2)
    assert [r.status for r in one + two] == ["rendered"] * 6
    assert _bytes(tmp_path / "one") == _bytes(tmp_path / "two")


def test_a_dask_cluster_gives_byte_identical_outputs(tmp_path, cli):
    distributed = pytest.importorskip("distributed", reason="the cluster extra is not installed")
    specs = _specs(tmp_path, 2)
    build(specs, BuildOptions(str(tmp_path / "local"), formats=("svg", "png")))
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None) as cluster:
        ran = cli("render", *specs, "-o", tmp_path / "cluster", "--format", "svg,png", "--scheduler",
                  cluster.scheduler_address)
    assert ran.returncode == 0, ran.stderr
    assert _bytes(tmp_path / "local") == _bytes(tmp_path / "cluster")


def test_an_unreachable_scheduler_is_a_user_error(tmp_path, cli):
    pytest.importorskip("distributed", reason="the cluster extra is not installed")
    ran = cli("render", *_specs(tmp_path, 1), "-o", tmp_path / "out", "--scheduler", "tcp://127.0.0.1:9")
    assert ran.returncode == 2 and "cannot reach a Dask scheduler" in ran.stderr and "Traceback" not in ran.stderr


def test_the_exit_status_is_the_worst_and_every_line_names_its_spec(tmp_path, cli):
    good = _specs(tmp_path, 1)[0]
    bad = write_spec(tmp_path, SMALL_SPEC.replace("bin_ms = 10", "bin_ms = -1"), "bad.toml")
    ran = cli("render", good, bad, "-o", tmp_path / "out", "--jobs", "1")
    assert ran.returncode == 2
    assert f"{bad}:" in ran.stderr and "bin_ms" in ran.stderr
    table = ran.stdout.splitlines()
    assert any(line.startswith(str(bad)) and " failed " in line for line in table)
    assert table[-2].startswith("1 rendered, 0 skipped, 1 failed")
    assert table[-1].startswith("index of every figure in ")
    assert worst([0, 2, 1]) == 1 and worst([0, 2]) == 2 and worst([0, 0]) == 0


def test_warnings_name_their_spec_and_piped_output_is_plain_lines():
    out, err = io.StringIO(), io.StringIO()
    progress = Progress("figures", out, err)
    progress(SpecResult("a.toml", "rendered", "no earlier outputs", 1.25, 9, warnings=["a fit constrains nothing"]), 1, 2)
    progress(SpecResult("b.toml", "skipped", "unchanged"), 2, 2)
    assert err.getvalue() == "a.toml: warning: a fit constrains nothing\n"
    assert out.getvalue().splitlines() == ["a.toml: wrote 9 files to figures in 1.2 s (no earlier outputs)  [1/2]",
                                           "b.toml: skipped, unchanged  [2/2]"]
    assert "\r" not in out.getvalue() + err.getvalue()
    table = summary_table([SpecResult("a.toml", "rendered", seconds=1.25, files=9, warnings=["w"]),
                           SpecResult("b.toml", "skipped")])
    assert table.splitlines()[0].split() == ["spec", "status", "seconds", "files", "warnings"]
    assert table.splitlines()[-1].startswith("1 rendered, 1 skipped, 0 failed")


def test_specs_of_one_build_that_read_one_file_parse_it_once(tmp_path, monkeypatch):
    """Three specs on the same data: the CSV reader runs once for them (the read cache, which
    lives for one build); the outputs equal those of specs rendered one at a time without it."""
    import shutil

    from figspec.data import csv_source, read_cache
    from helpers import SPECS

    data = tmp_path / "data"
    data.mkdir()
    for name in ("spikes.csv", "trials.csv"):
        shutil.copy(SPECS / "data" / name, data / name)
    specs = [write_spec(tmp_path, SMALL_SPEC.replace("@DATA@", str(data)).replace('title = "t"', f'title = "f{i}"'),
                        f"fig{i}.toml") for i in range(3)]
    calls, entries = [], []
    real, real_load = csv_source.read_table, read_cache._load
    monkeypatch.setattr(csv_source, "read_table", lambda path, *a, **k: calls.append(path.name) or real(path, *a, **k))
    monkeypatch.setattr(read_cache, "_load", lambda entry: entries.append(entry.name) or real_load(entry))
    shared = build(specs, BuildOptions(str(tmp_path / "out"), formats=("svg",)))
    assert [r.status for r in shared] == ["rendered"] * 3
    assert calls == ["spikes.csv", "trials.csv"] and len(entries) == 2 and len(set(entries)) == 1
    assert not (tmp_path / "out" / read_cache.FOLDER).exists()          # gone with the build
    for spec in specs:                                  # one spec per build: no cache
        build([spec], BuildOptions(str(tmp_path / "alone"), formats=("svg",)))
    alone = {k: v for k, v in _bytes(tmp_path / "alone").items() if not k.endswith(("manifest.json", "index.html"))}
    assert alone == {k: v for k, v in _bytes(tmp_path / "out").items() if k in alone}
    (data / "spikes.csv").write_text((data / "spikes.csv").read_text() + "u1,1,0.25\n")
    calls.clear()
    build(specs, BuildOptions(str(tmp_path / "out"), formats=("svg",)))
    assert calls == ["spikes.csv", "trials.csv"]                          # changed bytes: read again, once
