"""A hostile pull request or an unlucky lab: links planted where figspec writes, names that
would run script in a page, killed builds, outputs that cannot be written, data that tries to
inject TOML or leak a file, and inputs nested or repeated past any sane size. Each ends as the
README promises: nothing outside figspec's own files touched, exit 2 with one line, no traceback."""

from __future__ import annotations

import errno
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from figspec.errors import UserError

from helpers import MINIMAL_SPEC, ROOT, SPECS, demo_text, write_spec


@pytest.fixture
def spec(tmp_path) -> Path:
    return write_spec(tmp_path, demo_text("two_sessions"), "fig.toml")


def test_a_linked_data_folder_is_refused_and_its_target_untouched(tmp_path, spec, cli):
    victim = tmp_path / "victim"
    victim.mkdir()
    (victim / "precious.txt").write_text("keep me")
    out = tmp_path / "out"
    out.mkdir()
    (out / "fig_data").symlink_to(victim, target_is_directory=True)
    result = cli("render", spec, "-o", out)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "fig_data: a symbolic link stands where figspec writes" in result.stderr
    assert sorted(p.name for p in victim.iterdir()) == ["precious.txt"]


def test_a_linked_output_file_is_refused(tmp_path, spec, cli):
    victim = tmp_path / "victim.png"
    victim.write_bytes(b"mine")
    out = tmp_path / "out"
    out.mkdir()
    (out / "fig.png").symlink_to(victim)
    result = cli("render", spec, "-o", out)
    assert result.returncode == 2 and "fig.png: a symbolic link" in result.stderr
    assert victim.read_bytes() == b"mine"


def test_a_rerender_removes_only_what_the_last_manifest_lists(tmp_path, spec, cli):
    out = tmp_path / "out"
    assert cli("render", spec, "-o", out).returncode == 0
    (out / "fig_data" / "my_notes.txt").write_text("mine")
    (out / "fig.tiff").write_bytes(b"not figspec's")                    # matches the stem, never listed
    spec.write_text(spec.read_text().replace("[figure]", '[figure]\nformats = ["png"]'))
    assert cli("render", spec, "-o", out).returncode == 0
    assert (out / "fig_data" / "my_notes.txt").read_text() == "mine"
    assert (out / "fig.tiff").read_bytes() == b"not figspec's"
    assert not (out / "fig.svg").exists() and not (out / "fig.pdf").exists()    # listed, so removed


@pytest.mark.parametrize("tag", ["old", "at-HEAD"])
def test_diff_never_writes_through_a_planted_link(tmp_path, spec, cli, tag):
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me")
    (tmp_path / f".fig.{tag}.toml").symlink_to(victim)
    old = tmp_path / "old.toml"
    old.write_text(spec.read_text().replace("bin_ms = 5", "bin_ms = 10"))
    cli("diff", spec, "--old", old, "-o", tmp_path / "review")
    assert victim.read_text() == "keep me"


def test_a_revision_that_looks_like_an_option_is_refused(tmp_path, spec, cli):
    result = cli("diff", spec, "--rev=--output=" + str(tmp_path / "x"), "-o", tmp_path / "review")
    assert result.returncode == 2 and "cannot start with '-'" in result.stderr
    assert not (tmp_path / "x").exists()


def test_watch_never_writes_preview_js_through_a_link(tmp_path, spec):
    from figspec.build import BuildOptions
    from figspec.preview import Preview

    victim = tmp_path / "victim.js"
    victim.write_text("keep me")
    out = tmp_path / "out"
    out.mkdir()
    (out / "preview.js").symlink_to(victim)
    preview = Preview(spec, BuildOptions(out, ("png",), None, None, False, True), lambda line: None)
    with pytest.raises(UserError, match="symbolic link"):
        preview.render()
    assert victim.read_text() == "keep me"


@pytest.mark.parametrize("stem", ["javascript:alert('x')", "http:x", "a#b%c?d", "séance 1"])
def test_index_links_are_relative_and_encoded(stem):
    """RFC 3986 percent-encoding of each path segment: a name stays a name."""
    from figspec.output.review_page import IndexEntry, index_page, local_link

    entry = IndexEntry(stem, f"{stem}.png", [f"{stem}.svg"], [f"{stem}_data/x.csv"], "", None, None)
    page = index_page("t", [entry])
    for attr in ("href=\"", "src=\""):
        for value in page.split(attr)[1:]:
            link = value.split("\"", 1)[0]
            assert link.startswith("./") or link.startswith("#"), link
            assert ":" not in link.split("/", 2)[-1] or link.startswith("#")
    assert local_link(f"{stem}.png") == "./" + __import__("urllib.parse").parse.quote(f"{stem}.png", safe="")
    assert local_link("../secret") == "" and local_link("/etc/passwd") == ""


def _children(pid: int) -> list[int]:
    out = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except (OSError, IndexError):
            continue
        if int(fields[1]) == pid:
            out.append(int(stat.parent.name))
    return out


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="reads the process table from /proc")
def test_killing_the_build_ends_its_workers(tmp_path):
    """The main process killed outright (SIGKILL: no clean-up runs) while two workers render."""
    env = {**os.environ, "MPLBACKEND": "Agg"}
    build = subprocess.Popen([sys.executable, "-m", "figspec", "render", str(SPECS), "-o", str(tmp_path / "out"),
                              "--jobs", "2", "--force"], cwd=ROOT, env=env, stdout=subprocess.DEVNULL,
                             stderr=subprocess.DEVNULL, start_new_session=True)
    deadline = time.monotonic() + 60
    workers: list[int] = []
    while time.monotonic() < deadline and len(workers) < 2:
        time.sleep(0.2)
        workers = [p for p in _children(build.pid) if "spawn_main" in _cmdline(p)]
    assert len(workers) >= 2, "the build never started its workers"
    os.kill(build.pid, signal.SIGKILL)
    build.wait()
    deadline = time.monotonic() + 10
    while time.monotonic() < deadline and any(_alive(p) for p in workers):
        time.sleep(0.2)
    assert not any(_alive(p) for p in workers)


def _cmdline(pid: int) -> str:
    try:
        return Path(f"/proc/{pid}/cmdline").read_bytes().replace(b"\0", b" ").decode()
    except OSError:
        return ""


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except (OSError, IndexError):
        return False
    return state != "Z"


@pytest.mark.parametrize("args, message", [
    (["compare", "-o", "{file}", "{specs}"], "a file stands where a folder is needed"),
    (["watch", "{spec}", "-o", "{file}"], "a file stands where a folder is needed"),
    (["schema", "-o", "{missing}/x.json"], "does not exist"),
    (["schema", "-o", "{folder}"], "is a folder"),
    (["draft", "{data}/spikes.csv", "{data}/trials.csv", "-o", "{file}/x.toml"], "a file stands where a folder"),
    (["render", "{spec}", "-o", "{file}"], "a file stands where a folder is needed"),
])
def test_unwritable_outputs_end_in_one_line(tmp_path, spec, cli, args, message):
    pytest.importorskip("watchfiles") if args[0] == "watch" else None
    a_file = tmp_path / "a_file"
    a_file.write_text("x")
    names = {"file": a_file, "specs": tmp_path, "spec": spec, "missing": tmp_path / "missing", "folder": tmp_path,
             "data": SPECS / "data"}
    result = cli(*[a.format(**names) for a in args])
    assert result.returncode == 2, result.stderr
    assert "Traceback" not in result.stderr and message in result.stderr


def test_a_full_disk_leaves_the_old_file_and_no_temporary(tmp_path, monkeypatch):
    from figspec.output import safe_write

    target = tmp_path / "index.html"
    target.write_text("old page")

    def full(fd, *args, **kwargs):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(safe_write.os, "fdopen", full)
    with pytest.raises(UserError, match="the disk is full"):
        safe_write.write_text(target, "new page")
    assert target.read_text() == "old page"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["index.html"]


def test_a_drafted_spec_escapes_what_the_data_holds(tmp_path, cli):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    spikes.loc[spikes["unit"] == "u1", "unit"] = 'u1\ntitle = "hacked"\r\x7f'
    spikes.to_csv(tmp_path / "spikes.csv", index=False)
    target = tmp_path / "draft.toml"
    cli("draft", tmp_path / "spikes.csv", SPECS / "data" / "trials.csv", "-o", target)
    text = target.read_text()                # written; its check refuses the control characters itself
    assert not any(line.strip().startswith("title = \"hacked\"") for line in text.splitlines())
    assert "\\u000atitle" in text
    import tomllib

    assert tomllib.loads(text)["figure"]["title"] != "hacked"


def test_an_error_shows_no_long_line_of_a_file_named_by_mistake(tmp_path, cli):
    secret = "token=" + "s3cr3t" * 20
    (tmp_path / "credentials").write_text(secret + "\n")
    text = demo_text("two_sessions").replace(str(SPECS / "data" / "day2_spikes.csv"), str(tmp_path / "credentials"))
    result = cli("check", write_spec(tmp_path, text, "fig.toml"))
    assert result.returncode == 2 and "s3cr3t" not in result.stderr and "a field of" in result.stderr


def test_a_value_with_a_line_break_stays_on_one_error_line(tmp_path, cli):
    text = MINIMAL_SPEC.replace('name = "spikes"', 'name = "spikes\\nsecond line"')
    result = cli("check", write_spec(tmp_path, text))
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert result.returncode == 2 and all(line.startswith(str(tmp_path)) for line in lines), result.stderr


@pytest.mark.parametrize("text", ["[a" + ".b" * 1000 + "]\n", "x = " + "[" * 500 + "]" * 500 + "\n",
                                  "x = " + "{a = " * 400 + "1" + " }" * 400 + "\n"])
def test_deep_nesting_is_one_line(tmp_path, cli, text):
    result = cli("check", write_spec(tmp_path, text))
    assert result.returncode == 2 and "nested too deeply" in result.stderr and "Traceback" not in result.stderr


def test_repeated_formats_are_refused(tmp_path, cli):
    text = MINIMAL_SPEC.replace("[figure]", "[figure]\nformats = [" + ", ".join(['"png"'] * 3000) + "]")
    result = cli("check", write_spec(tmp_path, text))
    assert result.returncode == 2 and "figure.formats" in result.stderr


def test_duplicate_spike_rows_are_counted_and_said(tmp_path, cli):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    pd.concat([spikes, spikes.iloc[:100]]).to_csv(tmp_path / "dup.csv", index=False)
    text = demo_text("two_sessions").replace(str(SPECS / "data" / "spikes.csv"), str(tmp_path / "dup.csv"))
    result = cli("check", write_spec(tmp_path, text, "fig.toml"))
    assert result.returncode == 0 and "100 spike rows repeat another row exactly" in result.stderr


def test_unit_names_with_spaces_are_one_unit_in_csv_and_parquet(tmp_path, cli):
    spikes = pd.read_csv(SPECS / "data" / "spikes.csv")
    spikes["unit"] = " " + spikes["unit"] + " "
    spikes.to_parquet(tmp_path / "spaced.parquet", index=False)
    text = demo_text("parquet_copy").replace(str(SPECS / "data" / "spikes.parquet"), str(tmp_path / "spaced.parquet"))
    result = cli("check", write_spec(tmp_path, text, "fig.toml"))
    assert result.returncode == 0, result.stderr


def test_a_nan_level_and_a_late_onset_are_named(tmp_path, cli):
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    trials.loc[4, "offset_s"] = trials.loc[4, "onset_s"] - 0.01
    trials.to_csv(tmp_path / "trials.csv", index=False)
    text = demo_text("two_sessions").replace(str(SPECS / "data" / "trials.csv"), str(tmp_path / "trials.csv"))
    result = cli("check", write_spec(tmp_path, text, "fig.toml"))
    assert result.returncode == 2 and f"first trial {trials.loc[4, 'trial']} (onset" in result.stderr
    trials = pd.read_csv(SPECS / "data" / "trials.csv").astype({"level_db": str})
    trials.loc[3, "level_db"] = "nan"
    trials.to_csv(tmp_path / "trials.csv", index=False)
    result = cli("check", write_spec(tmp_path, text, "fig.toml"))
    assert result.returncode == 2 and "an empty field or NaN" in result.stderr
