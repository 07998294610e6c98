"""Shared fixtures: figures closed and a seeded generator for every test; the demo rendered
once per session; the command line called in-process."""

from __future__ import annotations

import contextlib
import io
import os
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

from helpers import MINIMAL_SPEC, ROOT, SPECS, write_spec

os.environ.setdefault("MPLBACKEND", "Agg")


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    if "matplotlib.pyplot" in sys.modules:
        sys.modules["matplotlib.pyplot"].close("all")


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(20261201)


@pytest.fixture
def minimal_spec(tmp_path: Path) -> Path:
    return write_spec(tmp_path, MINIMAL_SPEC)


@dataclass(frozen=True)
class Ran:
    """What a command-line call returned and printed (like subprocess.CompletedProcess)."""

    returncode: int
    stdout: str
    stderr: str


def run_cli(*args, cwd: Path | None = None) -> Ran:
    """``figspec ARGS`` in this process (exit code, stdout, stderr)."""
    from figspec.cli import run

    out, err = io.StringIO(), io.StringIO()
    previous = Path.cwd()
    try:
        if cwd is not None:
            os.chdir(cwd)
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = run([str(a) for a in args])
    finally:
        os.chdir(previous)
    return Ran(code, out.getvalue(), err.getvalue())


@pytest.fixture
def cli():
    return run_cli


@pytest.fixture(scope="session")
def demo_render(tmp_path_factory) -> tuple[Path, Ran]:
    """Every demo spec rendered once, in this process, as the Quick start does: (folder, call)."""
    out = tmp_path_factory.mktemp("demo") / "figures"
    ran = run_cli("render", SPECS, "-o", out, cwd=ROOT)
    assert ran.returncode == 0, ran.stderr
    return out, ran
