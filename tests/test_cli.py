"""The command line: exit codes, one line per problem, no traceback. Called in-process
(conftest.run_cli) except where a test must see what a real process prints."""

import subprocess
import sys

from conftest import run_cli as figspec
from helpers import MINIMAL_SPEC, SPECS, write_spec


def test_a_real_process_exits_2_with_one_line_and_no_traceback(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_width = 10"))
    result = subprocess.run([sys.executable, "-m", "figspec", "check", str(path)], capture_output=True, text=True)
    assert result.returncode == 2
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.stderr


def test_check_good_spec_exits_0(minimal_spec):
    result = figspec("check", minimal_spec)
    assert result.returncode == 0, result.stderr
    assert "ok (2 panels)" in result.stdout


def test_misspelled_key_exits_2_with_file_line_path_and_suggestion(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_width = 10"))
    result = figspec("check", path)
    line = MINIMAL_SPEC.splitlines().index("bin_ms = 10") + 1
    assert result.returncode == 2
    assert result.stderr.strip() == f"{path}:{line}: panels[1].bin_width: unknown key; did you mean 'bin_ms'?"
    assert "Traceback" not in result.stderr


def test_missing_data_file_exits_2(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace("spikes.csv", "absent.csv"))
    result = figspec("check", path)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert f"{path}:10: sources.demo.spikes: data file not found:" in result.stderr


def test_missing_mapped_column_exits_2(tmp_path):
    path = write_spec(tmp_path, MINIMAL_SPEC.replace('time = "time_s"', 'time = "t"'))
    result = figspec("check", path)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert f"{path}:12: sources.demo.spike_columns.time: column 't' not found" in result.stderr
    assert "(got columns: unit, trial, time_s)" in result.stderr


def test_render_folder_writes_every_spec_in_every_format(demo_render):
    out, ran = demo_render
    for spec in SPECS.glob("*.toml"):
        assert {(out / f"{spec.stem}.{fmt}").is_file() for fmt in ("svg", "pdf", "png")} == {True}
        assert f"{spec.name}: wrote" in ran.stdout


def test_format_option_limits_the_formats(tmp_path, minimal_spec):
    result = figspec("render", minimal_spec, "-o", tmp_path / "out", "--format", "png")
    assert result.returncode == 0, result.stderr
    assert (tmp_path / "out" / "spec.png").is_file() and not (tmp_path / "out" / "spec.pdf").exists()


def test_bad_format_exits_2(minimal_spec):
    result = figspec("render", minimal_spec, "--format", "jpg")
    assert result.returncode == 2 and "--format" in result.stderr


def test_inferred_trials_warn_on_stderr(tmp_path):
    text = MINIMAL_SPEC.replace('trials = "@DATA@/trials.csv"\n', "").replace(
        'spike_columns = { unit = "unit", trial = "trial", time = "time_s" }',
        'spike_columns = { unit = "unit", trial = "trial", time = "time_s", level = "level_db" }')
    text = text.replace('clock = "session"\ntrial_columns = {', "# trial_columns = {").replace(
        '                  start = "start_s"', '#                  start = "start_s"').replace("per_trial = true",
                                                                            "start_ms = 0\nstop_ms = 50")
    data = tmp_path / "spikes.csv"
    import pandas as pd

    spikes = pd.read_csv(SPECS / "data" / "spikes.csv").merge(pd.read_csv(SPECS / "data" / "trials.csv"))
    spikes["time_s"] -= spikes["onset_s"]
    spikes[["unit", "trial", "time_s", "level_db"]].to_csv(data, index=False)
    path = write_spec(tmp_path, text.replace("@DATA@/spikes.csv", str(data)))
    result = figspec("check", path)
    assert result.returncode == 0, result.stderr
    assert "warning:" in result.stderr and "trials without any spike are missing" in result.stderr


SUMMARY = MINIMAL_SPEC.replace('[stimulus]', '[levels]\nunit = "dB SPL"\nscale = "pressure_db"\n\n[stimulus]') + """
[[panels]]
name = "curve"
kind = "level_response"
units = ["u1", "u2"]
fit = "naka_rushton"
"""


def test_summary_spec_checks(tmp_path):
    result = figspec("check", write_spec(tmp_path, SUMMARY))
    assert result.returncode == 0, result.stderr


def test_response_window_outside_the_trial_exits_2(tmp_path):
    text = SUMMARY.replace('fit = "naka_rushton"', 'fit = "naka_rushton"\nresponse_ms = [0, 800]\nbaseline_ms = [-800, 0]')
    result = figspec("check", write_spec(tmp_path, text))
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "panels[2].response_ms: reaches past what was recorded of 270 of 270 trials shown" in result.stderr
    assert "panels[2].baseline_ms: reaches past what was recorded of 270 of 270 trials shown" in result.stderr


def test_fit_on_fewer_levels_than_parameters_exits_2(tmp_path):
    text = SUMMARY.replace('fit = "naka_rushton"', 'fit = "naka_rushton"\nlevels = [60, 70, 80]')
    result = figspec("check", write_spec(tmp_path, text))
    assert result.returncode == 2
    assert "panels[2].fit: a naka_rushton fit has 4 parameters but the panel shows only 3 levels" in result.stderr


def test_fit_without_a_level_scale_exits_2(tmp_path):
    text = SUMMARY.replace('scale = "pressure_db"\n', "")
    result = figspec("check", write_spec(tmp_path, text))
    assert result.returncode == 2 and "panels[2].fit: a naka_rushton fit needs the level's scale" in result.stderr


def test_negative_bin_exits_2(tmp_path):
    result = figspec("check", write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_ms = -5")))
    assert result.returncode == 2 and "panels[1].bin_ms: should be greater than 0" in result.stderr


def test_check_mentions_unlocked_rate_rows(tmp_path):
    result = figspec("check", write_spec(tmp_path, MINIMAL_SPEC.replace("bin_ms = 10", "bin_ms = 10\nlock_y = false")))
    assert result.returncode == 0
    assert "note:" in result.stderr and "lock_y = false" in result.stderr and "panels[1] (rate)" in result.stderr


def test_bad_layout_exits_2(tmp_path):
    text = MINIMAL_SPEC.replace("[stimulus]", "[layout]\nrows = 1\ncolumns = 2\n\n[stimulus]")
    text = text.replace('name = "spikes"', 'name = "spikes"\ncell = [1, 1]').replace('name = "rate"', 'name = "rate"\ncell = [1, 1]')
    result = figspec("check", write_spec(tmp_path, text))
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "panels[1].cell: cell [1, 1] is already taken by panels[0] ('spikes') (got [1, 1])" in result.stderr


def test_specs_that_would_write_the_same_outputs_are_an_error(tmp_path, cli):
    from helpers import SMALL_SPEC, write_spec

    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    first = write_spec(tmp_path / "a", SMALL_SPEC, "fig.toml")
    second = write_spec(tmp_path / "b", SMALL_SPEC, "fig.toml")
    ran = cli("render", first, second, "-o", tmp_path / "out")
    assert ran.returncode == 2 and "Traceback" not in ran.stderr
    assert f"{second}: writes the same outputs (fig.*, fig_data/) as {first}" in ran.stderr
    assert not (tmp_path / "out").exists()


def test_dotted_spec_names_keep_their_whole_name(tmp_path, cli):
    from helpers import SMALL_SPEC, write_spec

    specs = [write_spec(tmp_path, SMALL_SPEC, name) for name in ("fig2.v1.toml", "fig2.v2.toml")]
    ran = cli("render", *specs, "-o", tmp_path / "out", "--format", "png", "--jobs", "1")
    assert ran.returncode == 0, ran.stderr
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == ["fig2.v1.png", "fig2.v1_data", "fig2.v2.png",
                                                                     "fig2.v2_data", "index.html"]


def test_a_bad_profile_or_style_option_is_blamed_on_the_option(cli):
    from helpers import DEMO_SPEC

    ran = cli("check", DEMO_SPEC, "--profile", "nosuch")
    assert ran.returncode == 2 and ran.stderr.startswith("--profile nosuch: no journal profile named 'nosuch'")
    ran = cli("check", DEMO_SPEC, "--style", "nosuch")
    assert ran.returncode == 2 and ran.stderr.startswith("--style nosuch: no style named 'nosuch'")
