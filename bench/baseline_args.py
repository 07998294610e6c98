"""What the two baseline scripts (bench/hand_loop.py, bench/compound_path.py) share: the figure's
size, resolution and bin, and their command line (a data folder, a format, a window)."""

from __future__ import annotations

import argparse
from pathlib import Path

WIDTH_MM, HEIGHT_MM, DPI, BIN_MS = 120.0, 150.0, 300, 5.0


def arguments() -> argparse.Namespace:
    parser = argparse.ArgumentParser()
    parser.add_argument("folder", type=Path, help="holds spikes.csv and trials.csv")
    parser.add_argument("--format", default="png")
    parser.add_argument("--window", type=float, nargs=2, default=[-50.0, 150.0], help="ms from onset")
    return parser.parse_args()
