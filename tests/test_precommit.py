"""The project's pre-commit hooks (.pre-commit-hooks.yaml) run by the real pre-commit tool on a
temporary repository, as a lab's setup would run them: a good spec passes, a broken one fails
with figspec's one-line problem. The hook that uses the installed figspec is tried (the other
builds its own environment from the repository, which needs the network)."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from helpers import ROOT, demo_text

pytest.importorskip("pre_commit")
pytestmark = pytest.mark.skipif(shutil.which("git") is None or not (ROOT / ".git").exists(),
                                reason="needs git and figspec's own git repository")


def run(args, cwd, env):
    return subprocess.run(args, cwd=cwd, env=env, capture_output=True, text=True, timeout=300)


def test_the_hook_checks_changed_specs(tmp_path):
    env = {**os.environ, "PATH": f"{Path(sys.executable).parent}{os.pathsep}{os.environ.get('PATH', '')}",
           "PRE_COMMIT_HOME": str(tmp_path / "cache"), "GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@example.org",
           "GIT_COMMITTER_NAME": "t", "GIT_COMMITTER_EMAIL": "t@example.org"}
    lab = tmp_path / "lab"
    (lab / "specs").mkdir(parents=True)
    (lab / "specs" / "fig.toml").write_text(demo_text("level_grid"))
    (lab / "specs" / "broken.toml").write_text(demo_text("level_grid").replace("bin_ms = 5", 'bin_ms = "5"'))
    assert run(["git", "init", "-q"], lab, env).returncode == 0
    run(["git", "add", "-A"], lab, env)
    hook = [sys.executable, "-m", "pre_commit", "try-repo", str(ROOT), "figspec-check-installed", "--files"]
    good = run(hook + ["specs/fig.toml"], lab, env)
    assert good.returncode == 0, good.stdout + good.stderr
    assert "figspec check (installed figspec)" in good.stdout and "Passed" in good.stdout
    bad = run(hook + ["specs/broken.toml"], lab, env)
    assert bad.returncode == 1 and "Failed" in bad.stdout
    assert "broken.toml:" in bad.stdout and "bin_ms" in bad.stdout
