"""Shared fixtures: figures closed and a seeded generator for every test."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import numpy as np
import pytest

from helpers import MINIMAL_SPEC, write_spec

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
