"""figspec.testing.assert_figure_matches as a lab's pytest suite uses it, run by pytest itself
in a fresh process: only an explicit true FIGSPEC_UPDATE_BASELINES rewrites a baseline, a skip
and a failure are reported at the test's own line, relative paths are found from the test
file's folder, and a bad spec fails with its one-line message."""

import os
import subprocess
import sys

from helpers import SMALL_SPEC, write_spec

TEST = '''from figspec.testing import assert_figure_matches


def test_fig():
    assert_figure_matches("../spec.toml", "baselines", 1.0, "checks")
'''


def run(folder, value=None):
    env = {k: v for k, v in os.environ.items() if k != "FIGSPEC_UPDATE_BASELINES"}
    if value is not None:
        env["FIGSPEC_UPDATE_BASELINES"] = value
    return subprocess.run([sys.executable, "-m", "pytest", "-rs", "-p", "no:cacheprovider", "-p", "no:randomly",
                           "tests/test_fig.py"], cwd=folder, env=env, capture_output=True, text=True)


def test_only_an_explicit_true_value_rewrites_and_the_skip_is_at_the_test(tmp_path):
    write_spec(tmp_path, SMALL_SPEC)
    (tmp_path / "tests").mkdir()
    (tmp_path / "tests" / "test_fig.py").write_text(TEST)
    baseline = tmp_path / "tests" / "baselines" / "spec.png"
    for value in ("0", "false", "", "off"):
        done = run(tmp_path, value)
        assert done.returncode == 1 and "no baseline" in done.stdout and not baseline.exists(), value
    done = run(tmp_path, "maybe")
    assert done.returncode == 1 and "FIGSPEC_UPDATE_BASELINES='maybe'" in done.stdout and not baseline.exists()
    done = run(tmp_path, "1")
    assert done.returncode == 0 and baseline.is_file()
    assert "SKIPPED [1] tests/test_fig.py:4: baseline" in done.stdout, done.stdout        # the test's line
    done = run(tmp_path)
    assert done.returncode == 0 and "1 passed" in done.stdout
    assert (tmp_path / "tests" / "checks" / "spec.new.png").is_file()       # beside the test file, as given


def test_a_bad_spec_fails_with_its_one_line_message(tmp_path):
    write_spec(tmp_path, SMALL_SPEC.replace("bin_ms = 10", "bin_ms = -10"))
    (tmp_path / "tests").mkdir()
    (tmp_path / "tests" / "test_fig.py").write_text(TEST)
    done = run(tmp_path)
    assert done.returncode == 1
    assert "spec.toml:" in done.stdout and "bin_ms" in done.stdout
    assert "figspec/pipeline.py" not in done.stdout and "Traceback" not in done.stdout
