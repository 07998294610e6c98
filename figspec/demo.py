"""Invented demo data: three auditory midbrain units, noise bursts at graded sound levels.

For demos and tests only; the numbers describe no real recording.

Regenerate the bundled files with::

    python -m figspec.demo specs/data

Besides ``spikes.csv`` and ``trials.csv`` (session clock, one trial number per trial), the same
recording is written as a lab's other layouts and formats would hold it: ``sorted_spikes.csv``
(a spike sorter's output: unit and session time, no trial column), ``level_spikes.csv`` and
``level_trials.csv`` (trial numbers restarting within each level, times in ms from each trial's
start), ``spikes.parquet``/``trials.parquet``, ``session.nwb`` and ``probe_sorted/`` (a spike
sorter's output folder: sample indices at 30 kHz, unit ids, and a per-unit table labelling the
three units good beside a multi-unit cluster and a busy noise cluster); ``day2_*.csv`` is a second
session of the same model from the next seed (for pooling sessions). ``pressure_trials.csv`` is
the trial table with the level as sound pressure in mPa, as a rig's calibration might give it
(20 µPa x 10^(dB/20), to two significant digits), where the lowest level is played as silence (0 mPa), for a log level axis
with a level of 0. ``silencing/`` holds two more sessions of 24 units each (``s1_*``, ``s2_*``), in
which half the trials at each level also shine light that silences an input area (a ``light``
column), with a per-unit table (sorter label, depth).

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


def restarting_trials(spikes: pd.DataFrame, trials: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The same recording as a lab whose rig numbers trials 1..N within each level writes it:
    times in ms relative to each trial's start (a per-trial clock), rows in level order."""
    numbered = trials.assign(trial_in_level=trials.groupby("level_db").cumcount() + 1)
    onset_ms = ((numbered["onset_s"] - numbered["start_s"]) * 1e3).round(3)
    table = pd.DataFrame({"level_db": numbered["level_db"], "trial_in_level": numbered["trial_in_level"],
                          "onset_ms": onset_ms, "offset_ms": (onset_ms + BURST_S * 1e3).round(3),
                          "stop_ms": (PERIOD_S * 1e3)})
    joined = spikes.merge(numbered[["trial", "level_db", "trial_in_level", "start_s"]], on="trial")
    rel = pd.DataFrame({"unit": joined["unit"], "level_db": joined["level_db"],
                        "trial_in_level": joined["trial_in_level"],
                        "time_ms": ((joined["time_s"] - joined["start_s"]) * 1e3).round(3)})
    return (rel.sort_values(["level_db", "trial_in_level", "unit", "time_ms"], kind="stable").reset_index(drop=True),
            table.sort_values(["level_db", "trial_in_level"], kind="stable").reset_index(drop=True))


def write_nwb(path: Path, spikes: pd.DataFrame, trials: pd.DataFrame) -> None:
    """The recording as an NWB file: the units table's spike times (each unit's own, unsorted
    as a sorter may leave them) and the trials table with the level and stimulus times."""
    from datetime import datetime, timezone

    from figspec.optional import require

    pynwb = require("pynwb", "writing the demo NWB file")
    nwb = pynwb.NWBFile(session_description="invented demo: auditory midbrain units, noise bursts",
                        identifier="figspec-demo-session", session_start_time=datetime(2026, 1, 5, tzinfo=timezone.utc))
    for name, description in (("level_db", "noise level (dB SPL)"), ("onset_s", "noise onset (s)"),
                              ("offset_s", "noise offset (s)")):
        nwb.add_trial_column(name=name, description=description)
    for row in trials.itertuples(index=False):
        nwb.add_trial(start_time=float(row.start_s), stop_time=float(row.stop_s), level_db=float(row.level_db),
                      onset_s=float(row.onset_s), offset_s=float(row.offset_s))
    nwb.add_unit_column(name="unit_name", description="unit name in the lab's notes")
    for unit, rows in spikes.groupby("unit", sort=True):
        times = rows["time_s"].to_numpy()
        nwb.add_unit(spike_times=np.r_[times[1::2], times[0::2]], unit_name=unit)   # unsorted on purpose
    with pynwb.NWBHDF5IO(str(path), "w") as io:
        io.write(nwb)


def pressure_trials(trials: pd.DataFrame) -> pd.DataFrame:
    """The trial table with ``level_mpa`` (sound pressure, mPa; 0 for the silent lowest level)
    in place of ``level_db``."""
    pressure = np.where(trials["level_db"] == trials["level_db"].min(), 0.0,
                        [float(f"{p:.2g}") for p in 0.02 * 10.0 ** (trials["level_db"].to_numpy() / 20.0)])
    out = trials.drop(columns="level_db")
    out.insert(1, "level_mpa", pressure)
    return out


SAMPLING_RATE_HZ = 30_000
SORTER_IDS = {"u1": 3, "u2": 7, "u3": 12}                  # the sorter's cluster ids of the three units
SORTER_TABLE = ((0, "noise", 1240.0, 0.41), (3, "good", 420.0, 0.97), (5, "mua", 610.0, 0.62),
                (7, "good", 380.0, 0.93), (12, "good", 455.0, 0.95))   # id, label, depth (µm), isolation


def write_sorter_folder(folder: Path, spikes: pd.DataFrame, trials: pd.DataFrame, seed: int) -> int:
    """The recording as a spike sorter's output folder: ``spike_samples.npy`` (int64 sample
    indices at 30 kHz, time order), ``spike_units.npy`` (int32 cluster ids) and ``units.tsv``.
    Besides the three units: a multi-unit cluster (the three units' spikes, half of them,
    jittered) and a noise cluster firing at 60 spikes/s throughout, the busiest of all."""
    rng = np.random.default_rng(seed + 7)                   # its own draws: the other files stay as they were
    end_s = float(trials["stop_s"].max())
    mua = spikes.sample(frac=0.5, random_state=seed % (2 ** 32))["time_s"].to_numpy() + rng.normal(0, 2e-4, len(spikes) // 2)
    noise = rng.uniform(0.0, end_s, int(60 * end_s))
    times = np.concatenate([spikes["time_s"].to_numpy(), np.clip(mua, 0, end_s), noise])
    ids = np.concatenate([spikes["unit"].map(SORTER_IDS).to_numpy(), np.full(mua.size, 5), np.zeros(noise.size)])
    samples = np.rint(times * SAMPLING_RATE_HZ).astype(np.int64)
    order = np.lexsort((ids, samples))
    folder.mkdir(parents=True, exist_ok=True)
    np.save(folder / "spike_samples.npy", samples[order])
    np.save(folder / "spike_units.npy", ids[order].astype(np.int32))
    (folder / "units.tsv").write_text("unit_id\tlabel\tdepth_um\tisolation\n" + "".join(
        f"{i}\t{label}\t{depth:g}\t{iso:g}\n" for i, label, depth, iso in SORTER_TABLE))
    return int(samples.size)


SILENCING_LEVELS_DB = np.arange(20.0, 81.0, 10.0)
SILENCING_TRIALS = 15            # per level and condition
SILENCING_UNITS = 24             # per session


def silencing_session(seed: int) -> tuple[pd.DataFrame, pd.DataFrame, pd.DataFrame]:
    """One invented session of many units with trials with and without light silencing an input
    area (``light`` true/false, interleaved): (spikes, trials, units). Light scales each unit's
    evoked rate by a gain between 0.35 and 0.95, raises its half-maximum level by 0-8 dB and
    lengthens its latency by 0.5-2 ms; the per-unit table gives a sorter label and a depth."""
    rng = np.random.default_rng(seed)
    levels = np.repeat(SILENCING_LEVELS_DB, 2 * SILENCING_TRIALS)
    light = np.tile(np.r_[np.zeros(SILENCING_TRIALS, bool), np.ones(SILENCING_TRIALS, bool)], SILENCING_LEVELS_DB.size)
    order = rng.permutation(levels.size)
    levels, light = levels[order], light[order]
    start = np.arange(levels.size) * PERIOD_S
    onset = start + PRE_S + rng.uniform(0.0, 0.010, levels.size)
    trials = pd.DataFrame({"trial": np.arange(1, levels.size + 1), "level_db": levels, "light": light,
                           "onset_s": onset.round(6), "offset_s": (onset + BURST_S).round(6),
                           "start_s": start.round(6), "stop_s": (start + PERIOD_S).round(6)})
    frames, rows = [], []
    for i in range(SILENCING_UNITS):
        name = f"u{i + 1:02d}"
        spont, peak = rng.uniform(1.0, 12.0), rng.uniform(60.0, 260.0)
        half, slope = rng.uniform(35.0, 60.0), rng.uniform(4.0, 10.0)
        lat_hi, lat_lo = rng.uniform(16.0, 30.0), rng.uniform(5.0, 10.0)
        gain, shift, delay = rng.uniform(0.35, 0.95), rng.uniform(0.0, 8.0), rng.uniform(0.5, 2.0)
        parts = []
        for lit in (False, True):
            sub = trials[trials["light"] == lit]
            unit = (name, spont, peak * (gain if lit else 1.0), half + (shift if lit else 0.0), slope,
                    lat_hi + (delay if lit else 0.0), lat_lo + (delay if lit else 0.0))
            parts.append(unit_spikes(rng, sub.reset_index(drop=True), unit))
        frames.append(pd.concat(parts, ignore_index=True))
        rows.append([name, "good" if rng.random() < 0.8 else "mua", float(round(rng.uniform(200.0, 1800.0), -1))])
    spikes = pd.concat(frames, ignore_index=True).sort_values(["unit", "time_s"], kind="stable").reset_index(drop=True)
    units = pd.DataFrame(rows, columns=["unit", "label", "depth_um"])
    return spikes, trials, units


def write_all(folder: Path, seed: int = SEED) -> dict[str, int]:
    """Write every demo file into ``folder``: the CSV recording, its Parquet copy, the spike
    sorter's session-clock table without trial column, the per-level trial numbering and the
    NWB session file. Returns the rows written per file."""
    spikes, trials = generate(seed)
    folder.mkdir(parents=True, exist_ok=True)
    csv = {"spikes.csv": spikes, "trials.csv": trials, "sorted_spikes.csv": spikes[["unit", "time_s"]]}
    csv["level_spikes.csv"], csv["level_trials.csv"] = restarting_trials(spikes, trials)
    csv["pressure_trials.csv"] = pressure_trials(trials)
    for name, frame in csv.items():
        frame.to_csv(folder / name, index=False, lineterminator="\n")
    day2_spikes, day2_trials = generate(seed + 1)          # a second invented session, other units' draws
    csv["day2_spikes.csv"], csv["day2_trials.csv"] = day2_spikes, day2_trials
    day2_spikes.to_csv(folder / "day2_spikes.csv", index=False, lineterminator="\n")
    day2_trials.to_csv(folder / "day2_trials.csv", index=False, lineterminator="\n")
    spikes.to_parquet(folder / "spikes.parquet", index=False, row_group_size=1000)
    trials.to_parquet(folder / "trials.parquet", index=False)
    write_nwb(folder / "session.nwb", spikes, trials)
    rows = {name: len(frame) for name, frame in csv.items()}
    rows["probe_sorted"] = write_sorter_folder(folder / "probe_sorted", spikes, trials, seed)
    for k, session in enumerate(("s1", "s2")):             # two sessions of many units, with light silencing
        sil_spikes, sil_trials, sil_units = silencing_session(seed + 100 + k)
        (folder / "silencing").mkdir(exist_ok=True)
        for part, frame in (("spikes", sil_spikes), ("trials", sil_trials), ("units", sil_units)):
            frame.to_csv(folder / "silencing" / f"{session}_{part}.csv", index=False, lineterminator="\n")
        rows[f"silencing/{session}_spikes.csv"] = len(sil_spikes)
    return rows


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m figspec.demo", description=__doc__.split("\n")[0])
    parser.add_argument("folder", type=Path, help="where to write spikes.csv and trials.csv")
    parser.add_argument("--seed", type=int, default=SEED)
    args = parser.parse_args(argv)
    rows = write_all(args.folder, args.seed)
    print(f"wrote {rows['spikes.csv']} spikes and {rows['trials.csv']} trials to {args.folder}, as CSV in three "
          "layouts, Parquet and NWB")


if __name__ == "__main__":
    main()
