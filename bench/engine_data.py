"""Invented large recordings for the data-engine benchmarks (bench/read_engine.py and
bench/many_specs.py): a session-clock spike table as a spike sorter writes it (unit, time in s;
rows in time order or in unit order), its trial table, a Parquet copy and a sorter folder
(sample indices, unit ids, a label table). Invented numbers; for timing only."""

from __future__ import annotations

from pathlib import Path

import numpy as np

LEVELS, PER_LEVEL, PERIOD_S, RATE_HZ = np.arange(0, 81, 10.0), 100, 0.6, 30_000


def write(folder: Path, n_spikes: int, n_units: int = 300, seed: int = 3) -> dict[str, Path]:
    """Write the files; returns their paths by role."""
    import pyarrow as pa
    import pyarrow.csv as pcsv
    import pyarrow.parquet as pq

    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    n_trials = LEVELS.size * PER_LEVEL
    start = np.arange(n_trials) * PERIOD_S
    level = rng.permutation(np.repeat(LEVELS, PER_LEVEL))
    duration = n_trials * PERIOD_S
    samples = np.sort(rng.integers(0, int(duration * RATE_HZ), n_spikes))
    unit = rng.integers(0, n_units, n_spikes)
    time_s = samples / RATE_HZ
    names = np.array([f"u{i}" for i in range(n_units)])
    paths = {role: folder / name for role, name in (("time_ordered", "spikes_time.csv"),
                                                     ("unit_ordered", "spikes_unit.csv"),
                                                     ("trials", "trials.csv"), ("parquet", "spikes.parquet"),
                                                     ("sorter", "sorter"))}
    by_time = pa.table({"unit": names[unit], "time_s": time_s})
    pcsv.write_csv(by_time, paths["time_ordered"])
    order = np.lexsort((time_s, unit))
    pcsv.write_csv(by_time.take(pa.array(order)), paths["unit_ordered"])
    pq.write_table(by_time.take(pa.array(order)), paths["parquet"], row_group_size=1 << 20)
    pcsv.write_csv(pa.table({"trial": np.arange(1, n_trials + 1), "level_db": level, "onset_s": start + 0.2,
                             "offset_s": start + 0.25, "start_s": start, "stop_s": start + PERIOD_S}), paths["trials"])
    sorter = paths["sorter"]
    sorter.mkdir(exist_ok=True)
    np.save(sorter / "spike_samples.npy", samples.astype(np.int64))
    np.save(sorter / "spike_units.npy", unit.astype(np.int32))
    labels = np.where(np.arange(n_units) % 3 == 0, "good", np.where(np.arange(n_units) % 3 == 1, "mua", "noise"))
    (sorter / "units.tsv").write_text("unit_id\tlabel\tdepth_um\n" + "".join(
        f"{i}\t{labels[i]}\t{20 * i}\n" for i in range(n_units)))
    return paths


SPEC = """[figure]
title = "bench"
width_mm = 120
height_mm = 100
formats = ["png"]
png_dpi = 100

[levels]
quantity = "Sound level"
unit = "dB SPL"

[stimulus]
per_trial = true

[sources.big]
spikes = "{spikes}"
trials = "{trials}"
clock = "session"
assign_spikes = "by_time"
format = "{fmt}"

[sources.big.spike_columns]
unit = "unit"
time = "time_s"

[sources.big.trial_columns]
trial = "trial"
level = "level_db"
onset = "onset_s"
offset = "offset_s"
start = "start_s"
stop = "stop_s"

[[panels]]
name = "rate"
kind = "psth"
unit = "{unit}"
window_ms = [-100, 300]
bin_ms = 10
"""


def spec(folder: Path, spikes: Path, trials: Path, name: str, unit: str = "u1", fmt: str = "csv") -> Path:
    path = folder / f"{name}.toml"
    path.write_text(SPEC.format(spikes=spikes, trials=trials, unit=unit, fmt=fmt))
    return path
