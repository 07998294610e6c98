"""Invented demo data: three auditory midbrain units, noise bursts at graded sound levels.

For demos and tests only; the numbers describe no real recording.

Regenerate the bundled files with::

    python -m figspec.demo specs/data

Model: 270 trials (9 levels from 0 to 80 dB SPL, 30 each) in a shuffled order, one every
600 ms (``start_s`` to ``stop_s``), each with a 50-ms noise burst about 200 ms after the start. Each unit fires as an inhomogeneous Poisson process
(0.1-ms Bernoulli steps): spontaneous rate everywhere, plus an evoked rate that rises with
level as a logistic function and saturates, starting after a first-spike latency that
shortens with level, with an onset transient decaying to a sustained part. Weak units at
low levels leave trials with no spike at all.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

SEED = 20261201
LEVELS_DB = np.arange(0.0, 81.0, 10.0)
TRIALS_PER_LEVEL = 30
BURST_S = 0.050
PERIOD_S = 0.600
PRE_S, POST_S = 0.200, 0.400  # simulated span around each onset
STEP_S = 1e-4

# name, spontaneous (spikes/s), maximum evoked (spikes/s), level at half maximum (dB SPL),
# logistic slope (dB), latency at threshold and at saturation (ms)
UNITS = (
    ("u1", 4.0, 160.0, 40.0, 7.0, 22.0, 7.0),
    ("u2", 9.0, 110.0, 50.0, 9.0, 26.0, 9.0),
    ("u3", 1.5, 240.0, 32.0, 5.0, 18.0, 6.0),
)


def trial_table(rng: np.random.Generator) -> pd.DataFrame:
    levels = np.repeat(LEVELS_DB, TRIALS_PER_LEVEL)
    rng.shuffle(levels)
    start = np.arange(levels.size) * PERIOD_S
    onset = start + PRE_S + rng.uniform(0.0, 0.010, levels.size)
    return pd.DataFrame({"trial": np.arange(1, levels.size + 1), "level_db": levels,
                         "onset_s": onset.round(6), "offset_s": (onset + BURST_S).round(6),
                         "start_s": start.round(6), "stop_s": (start + PERIOD_S).round(6)})


def unit_spikes(rng: np.random.Generator, trials: pd.DataFrame, unit: tuple) -> pd.DataFrame:
    name, spont, peak, half, slope, lat_hi, lat_lo = unit
    level = trials["level_db"].to_numpy()
    drive = 1.0 / (1.0 + np.exp(-(level - half) / slope))                       # 0..1, saturating
    latency = (lat_lo + (lat_hi - lat_lo) * (1.0 - drive)) / 1e3                 # s, shorter when loud
    latency = latency + rng.normal(0.0, 0.0015, level.size)                      # per-trial jitter
    t = np.arange(-PRE_S, POST_S, STEP_S)                                        # s from onset
    since = t[None, :] - latency[:, None]
    inside = (since >= 0) & (since < BURST_S)
    shape = 0.35 + 0.65 * np.exp(-since / 0.008)
    rate = spont + peak * drive[:, None] * np.where(inside, shape, 0.0)
    fired = rng.random(rate.shape) < rate * STEP_S
    row, col = np.nonzero(fired)
    times = t[col] + rng.uniform(0.0, STEP_S, col.size) + trials["onset_s"].to_numpy()[row]
    return pd.DataFrame({"unit": name, "trial": trials["trial"].to_numpy()[row], "time_s": times.round(6)})


def generate(seed: int = SEED) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Return the demo (spikes, trials) frames, the same for the same seed."""
    rng = np.random.default_rng(seed)
    trials = trial_table(rng)
    spikes = pd.concat([unit_spikes(rng, trials, u) for u in UNITS], ignore_index=True)
    return spikes.sort_values(["unit", "time_s"], kind="stable").reset_index(drop=True), trials


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m figspec.demo", description=__doc__.split("\n")[0])
    parser.add_argument("folder", type=Path, help="where to write spikes.csv and trials.csv")
    parser.add_argument("--seed", type=int, default=SEED)
    args = parser.parse_args(argv)
    spikes, trials = generate(args.seed)
    args.folder.mkdir(parents=True, exist_ok=True)
    spikes.to_csv(args.folder / "spikes.csv", index=False, lineterminator="\n")
    trials.to_csv(args.folder / "trials.csv", index=False, lineterminator="\n")
    print(f"wrote {len(spikes)} spikes and {len(trials)} trials to {args.folder}")


if __name__ == "__main__":
    main()
