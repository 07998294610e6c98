"""``figspec draft``: from a spike table and a trial table to a spec that checks and renders,
every guess a commented line and every ambiguity a question."""

from __future__ import annotations

import shutil

import pytest
import tomli

from helpers import SPECS, invented_tables


def _guessed_lines(text: str) -> list[str]:
    """The key lines of the sources' tables (the lines the survey guessed)."""
    lines, inside = [], False
    for line in text.splitlines():
        if line.startswith("["):
            inside = line.startswith("[sources")
        elif inside and "=" in line and not line.startswith("#"):
            lines.append(line)
    return lines


def test_two_demo_csv_files_give_a_spec_that_renders(tmp_path, cli):
    for name in ("spikes.csv", "trials.csv"):
        shutil.copy(SPECS / "data" / name, tmp_path / name)
    ran = cli("draft", "spikes.csv", "trials.csv", "-o", "unit.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    assert "unit.toml checks" in ran.stdout
    text = (tmp_path / "unit.toml").read_text()
    spec = tomli.loads(text)
    assert spec["sources"]["recording"]["clock"] == "session"
    assert spec["sources"]["recording"]["time_unit"] == "s"
    assert [p["kind"] for p in spec["panels"]] == ["raster", "psth", "level_response", "latency"]
    assert all("# guess:" in line or line.split("=")[0].strip() in ("spikes", "trials")
               for line in _guessed_lines(text)), _guessed_lines(text)
    assert "# question:" in text               # the level's reference (dB of what?) is asked
    rendered = cli("render", "unit.toml", "-o", "out", "--format", "png", cwd=tmp_path)
    assert rendered.returncode == 0, rendered.stderr
    assert (tmp_path / "out" / "unit.png").stat().st_size > 10_000


@pytest.mark.parametrize("layout", ["trial clock, ms, numbers per level, semicolons",
                                    "session clock, no trial column", "aligned, no trial table"])
def test_lab_layouts_give_specs_that_check(tmp_path, cli, rng, layout):
    if layout.startswith("trial"):
        spikes, trials = invented_tables(rng, "ms", "trial", restart=True)
        spikes.to_csv(tmp_path / "s.csv", sep=";", index=False)
        trials.to_csv(tmp_path / "t.csv", sep=";", index=False)
        args = ["s.csv", "t.csv"]
    elif layout.startswith("session"):
        spikes, trials = invented_tables(rng)
        spikes.drop(columns="trial").to_csv(tmp_path / "s.csv", index=False)
        trials.to_csv(tmp_path / "t.csv", index=False)
        args = ["s.csv", "t.csv"]
    else:
        spikes, trials = invented_tables(rng, "ms", restart=True)
        spikes = spikes.merge(trials[["trial", "level_db", "onset"]], on=["trial", "level_db"])
        spikes["time"] = spikes["time"] - spikes["onset"]          # ms from onset; trials numbered per level
        spikes.drop(columns="onset").to_csv(tmp_path / "s.csv", index=False)
        args = ["s.csv"]
    ran = cli("draft", *args, "-o", "specs/draft.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stdout + ran.stderr
    source = next(iter(tomli.loads((tmp_path / "specs" / "draft.toml").read_text())["sources"].values()))
    assert source["spikes"] == "../s.csv"                  # relative to the spec, not to where it ran
    if layout.startswith("trial"):
        assert source["delimiter"] == ";" and source["clock"] == "trial" and source["time_unit"] == "ms"
        assert source["trial_columns"]["trial"] == ["level_db", "trial"]
    elif layout.startswith("session"):
        assert source["assign_spikes"] == "by_time"
    else:
        assert source["spike_columns"]["trial"] == ["level_db", "trial"]
        assert source["trials_per_level"] == 10 and "extent_ms" in source
        assert "only you know" in ran.stdout               # silent trials cannot be seen: asked


def test_draft_does_not_overwrite_and_names_unreadable_data(tmp_path, cli):
    (tmp_path / "x.toml").write_text("keep me")
    (tmp_path / "s.csv").write_text("a,b\n1,2\n")
    ran = cli("draft", "s.csv", "-o", "x.toml", cwd=tmp_path)
    assert ran.returncode == 2 and "exists already" in ran.stderr
    assert (tmp_path / "x.toml").read_text() == "keep me"
    ran = cli("draft", "s.csv", "-o", "y.toml", cwd=tmp_path)
    assert ran.returncode == 2 and "s.csv" in ran.stderr and "Traceback" not in ran.stderr
    assert not (tmp_path / "y.toml").exists()


def test_the_readme_walkthrough_shows_what_draft_writes(tmp_path, cli):
    """The README's example lines are the draft's own lines for the demo files in data/, and the
    one edit it describes gives a figure."""
    from helpers import ROOT

    readme = (ROOT / "README.md").read_text()
    section = readme[readme.index("## From your own data to a figure"):readme.index("## A minimal spec")]
    shown = section[section.index("```toml") + 7:].split("```")[0].strip().splitlines()
    (tmp_path / "data").mkdir()
    for name in ("spikes.csv", "trials.csv"):
        shutil.copy(SPECS / "data" / name, tmp_path / "data" / name)
    ran = cli("draft", "data/spikes.csv", "data/trials.csv", "-o", "unit.toml", cwd=tmp_path)
    assert ran.returncode == 0
    for line in ran.stdout.splitlines():
        assert line in section, line
    written = (tmp_path / "unit.toml").read_text().splitlines()
    assert [line for line in shown if line and line not in written] == []
    spec = tmp_path / "unit.toml"
    spec.write_text(spec.read_text().replace('unit = "dB"  ', 'unit = "dB SPL"', 1))
    assert tomli.loads(spec.read_text())["levels"]["unit"] == "dB SPL"
    rendered = cli("render", "unit.toml", "-o", "out", "--format", "png", cwd=tmp_path)
    assert rendered.returncode == 0, rendered.stderr


@pytest.mark.parametrize("fmt", ["parquet", "nwb"])
def test_parquet_and_nwb_files_give_specs_that_check(tmp_path, cli, fmt):
    pytest.importorskip("pyarrow" if fmt == "parquet" else "pynwb")
    files = ["spikes.parquet", "trials.parquet"] if fmt == "parquet" else ["session.nwb"]
    for name in files:
        shutil.copy(SPECS / "data" / name, tmp_path / name)
    ran = cli("draft", *files, "-o", "unit.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stdout + ran.stderr
    source = tomli.loads((tmp_path / "unit.toml").read_text())["sources"]["recording"]
    assert source["format"] == fmt
    if fmt == "nwb":
        assert source["unit_names"] == "unit_name" and source["trial_columns"]["onset"] == "onset_s"
    else:
        assert source["clock"] == "session" and source["time_unit"] == "s"


def test_a_sorter_folder_gives_a_spec_that_keeps_the_good_units(tmp_path, cli):
    shutil.copytree(SPECS / "data" / "probe_sorted", tmp_path / "sorted")
    shutil.copy(SPECS / "data" / "trials.csv", tmp_path / "trials.csv")
    ran = cli("draft", "sorted", "trials.csv", "-o", "probe.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    spec = tomli.loads((tmp_path / "probe.toml").read_text())
    source = spec["sources"]["recording"]
    assert source["format"] == "sample_arrays" and source["sampling_rate_hz"] == 30000
    assert source["unit_table"] == {"file": "units.tsv", "id": "unit_id"} and source["keep_units"] == {"label": "good"}
    # the busiest cluster (id 0) is labelled noise: the draft shows the busiest good unit instead
    assert spec["panels"][0]["unit"] == "7"
    assert "question: what is the recording's sampling rate" in (tmp_path / "probe.toml").read_text()


def test_columns_recognised_by_content(tmp_path, cli):
    """Integer sample indices named spike_sample, a level named amp_um, and a level column with an
    opaque name recognised by its few repeated values; each spec checks."""
    import numpy as np
    import pandas as pd

    samples = np.load(SPECS / "data" / "probe_sorted" / "spike_samples.npy")
    units = np.load(SPECS / "data" / "probe_sorted" / "spike_units.npy")
    pd.DataFrame({"cluster": units, "spike_sample": samples}).to_csv(tmp_path / "s.csv", index=False)
    trials = pd.read_csv(SPECS / "data" / "trials.csv")
    trials.rename(columns={"level_db": "amp_um"}).to_csv(tmp_path / "t.csv", index=False)
    trials.rename(columns={"level_db": "xq"}).to_csv(tmp_path / "t2.csv", index=False)
    ran = cli("draft", "s.csv", "t.csv", "-o", "a.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    source = tomli.loads((tmp_path / "a.toml").read_text())["sources"]["recording"]
    assert source["time_unit"] == "samples" and source["trial_time_unit"] == "s"
    assert source["spike_columns"]["time"] == "spike_sample" and source["trial_columns"]["level"] == "amp_um"
    ran = cli("draft", "s.csv", "t2.csv", "-o", "b.toml", cwd=tmp_path)
    assert ran.returncode == 0, ran.stderr
    assert tomli.loads((tmp_path / "b.toml").read_text())["sources"]["recording"]["trial_columns"]["level"] == "xq"
    assert "question: is 'xq' the level varied?" in ran.stdout
