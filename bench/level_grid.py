"""Time whole commands that draw a level grid (raster | rate, 9 levels) from the same CSV files:
``figspec render`` against the usual hand-written loop (bench/hand_loop.py) and a minimal
compound-path script (bench/compound_path.py), for PNG and PDF, a short (-50..150 ms) and a
long (-200..400 ms) window, at several trials per level. Each command runs as a user runs it
(a fresh process: imports and file writing included), alternating, several times; medians and
ratios are printed.

    python bench/level_grid.py [--trials 400 1600 6400] [--repeats 3] [--formats png pdf]
"""
from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

LEVELS = np.arange(0.0, 81.0, 10.0)
WINDOWS = {"short": (-50.0, 150.0), "long": (-200.0, 400.0)}
BIN_MS = 5.0
WIDTH_MM, HEIGHT_MM, DPI = 120.0, 150.0, 300

SPEC = """\
[figure]
title = "Benchmark"
width_mm = {w}
height_mm = {h}
formats = ["png"]
png_dpi = {dpi}
[levels]
quantity = "Sound level"
unit = "dB SPL"
[stimulus]
per_trial = true
[sources.bench]
spikes = "spikes.csv"
clock = "session"
trials = "trials.csv"
spike_columns = {{ unit = "unit", trial = "trial", time = "time_s" }}
trial_columns = {{ trial = "trial", level = "level_db", onset = "onset_s", offset = "offset_s" }}
[[panels]]
name = "spikes"
kind = "raster"
window_ms = [{a}, {b}]
[[panels]]
name = "rate"
kind = "psth"
window_ms = [{a}, {b}]
bin_ms = {bin}
"""


def make_data(folder: Path, trials_per_level: int, seed: int = 7) -> int:
    """Poisson spikes, 20 spikes/s spontaneous plus up to 200 spikes/s during a 50-ms burst."""
    rng = np.random.default_rng(seed)
    levels = np.repeat(LEVELS, trials_per_level)
    rng.shuffle(levels)
    onset = np.arange(levels.size) * 1.0 + 0.3
    trials = pd.DataFrame({"trial": np.arange(levels.size), "level_db": levels,
                           "onset_s": onset, "offset_s": onset + 0.05})
    n_spont = rng.poisson(20 * 0.6, levels.size)
    n_evoked = rng.poisson(200 * 0.05 * levels / 80, levels.size)
    trial = np.r_[np.repeat(trials["trial"], n_spont), np.repeat(trials["trial"], n_evoked)]
    rel = np.r_[rng.uniform(-0.2, 0.4, n_spont.sum()), rng.uniform(0.005, 0.055, n_evoked.sum())]
    spikes = pd.DataFrame({"unit": "b1", "trial": trial, "time_s": onset[trial] + rel})
    spikes.to_csv(folder / "spikes.csv", index=False)
    trials.to_csv(folder / "trials.csv", index=False)
    return len(spikes)


def command(tool: str, folder: Path, fmt: str, window: tuple[float, float]) -> list[str]:
    """The whole command a user runs, imports and file writing included."""
    if tool == "figspec":
        return [sys.executable, "-m", "figspec", "render", str(folder / f"grid_{window[0]:g}.toml"), "-o",
                str(folder / "out"), "--format", fmt, "--force", "--jobs", "1"]
    script = {"hand loop": "hand_loop.py", "compound path": "compound_path.py"}[tool]
    return [sys.executable, str(Path(__file__).parent / script), str(folder), "--format", fmt,
            "--window", str(window[0]), str(window[1])]


def timed(cmd: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--trials", type=int, nargs="+", default=[400, 1600, 6400], help="trials per level")
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--formats", nargs="+", default=["png", "pdf"])
    parser.add_argument("--windows", nargs="+", default=["short", "long"], choices=sorted(WINDOWS))
    parser.add_argument("--hand-loop-up-to", type=int, default=6400,
                        help="skip the (slow) hand loop above this many trials per level")
    args = parser.parse_args()
    print(f"{'trials/level':>12} {'window':>7} {'fmt':>4} {'figspec s':>10} {'hand s':>8} {'compound s':>11} "
          f"{'hand/figspec':>13} {'figspec/compound':>17}", flush=True)
    for n in args.trials:
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            make_data(folder, n)
            for window_name in args.windows:
                window = WINDOWS[window_name]
                (folder / f"grid_{window[0]:g}.toml").write_text(
                    SPEC.format(w=WIDTH_MM, h=HEIGHT_MM, dpi=DPI, a=window[0], b=window[1], bin=BIN_MS))
                for fmt in args.formats:
                    tools = ["figspec", "compound path"] + (["hand loop"] if n <= args.hand_loop_up_to else [])
                    times = {tool: [] for tool in tools}
                    for _ in range(args.repeats):               # alternating, so drift hits all alike
                        for tool in tools:
                            times[tool].append(timed(command(tool, folder, fmt, window)))
                    med = {tool: statistics.median(v) for tool, v in times.items()}
                    hand = med.get("hand loop")
                    print(f"{n:>12} {window_name:>7} {fmt:>4} {med['figspec']:>10.2f} "
                          f"{hand if hand else float('nan'):>8.2f} {med['compound path']:>11.2f} "
                          f"{(hand / med['figspec']) if hand else float('nan'):>12.1f}x "
                          f"{med['figspec'] / med['compound path']:>16.2f}x", flush=True)


if __name__ == "__main__":
    main()
