"""Invented large recordings for the data-engine benchmarks (bench/read_engine.py and
bench/many_specs.py): a session-clock spike table as a spike sorter writes it (unit, time in s;
rows in time order or in unit order), its trial table, a Parquet copy and a sorter folder
(sample indices, unit ids, a label table). Invented numbers; for timing only."""

from __future__ import annotations

from pathlib import Path

import numpy as np

LEVELS, PER_LEVEL, PERIOD_S, RATE_HZ = np.arange(0, 81, 10.0), 100, 0.6, 30_000


def write(folder: Path, n_spikes: int, n_units: int = 300, seed: int = 3,
          what: tuple[str, ...] = ("time_ordered", "unit_ordered", "parquet", "sorter", "nwb")) -> dict[str, Path]:
    """Write the files ``what`` asks for (and the trial table); returns their paths by role."""
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
                                                     ("sorter", "sorter"), ("nwb", "session.nwb"),
                                                     ("trials_parquet", "trials.parquet"))}
    by_time = pa.table({"unit": pa.array(names).take(pa.array(unit)).dictionary_encode(), "time_s": time_s})
    if "time_ordered" in what:
        pcsv.write_csv(by_time, paths["time_ordered"])
    order = np.lexsort((time_s, unit))
    if "unit_ordered" in what:
        pcsv.write_csv(by_time.take(pa.array(order)), paths["unit_ordered"])
    if "parquet" in what:
        pq.write_table(by_time.take(pa.array(order)), paths["parquet"], row_group_size=1 << 20)
    if "nwb" in what:
        write_nwb(paths["nwb"], names, unit[order], time_s[order], start, level)
    trial_table = pa.table({"trial": np.arange(1, n_trials + 1), "level_db": level, "onset_s": start + 0.2,
                            "offset_s": start + 0.25, "start_s": start, "stop_s": start + PERIOD_S})
    pcsv.write_csv(trial_table, paths["trials"])
    pq.write_table(trial_table, folder / "trials.parquet")
    if "sorter" not in what:
        return paths
    sorter = paths["sorter"]
    sorter.mkdir(exist_ok=True)
    np.save(sorter / "spike_samples.npy", samples.astype(np.int64))
    np.save(sorter / "spike_units.npy", unit.astype(np.int32))
    labels = np.where(np.arange(n_units) % 3 == 0, "good", np.where(np.arange(n_units) % 3 == 1, "mua", "noise"))
    (sorter / "units.tsv").write_text("unit_id\tlabel\tdepth_um\n" + "".join(
        f"{i}\t{labels[i]}\t{20 * i}\n" for i in range(n_units)))
    return paths


def write_nwb(path: Path, names, unit_sorted, time_sorted, start, level) -> None:
    """The units table (ragged spike times, one run per unit) and trials table of an NWB file,
    written by pynwb."""
    from datetime import datetime, timezone

    import pynwb
    nwb = pynwb.NWBFile(session_description="figspec bench (invented)", identifier="bench",
                        session_start_time=datetime(2026, 1, 1, tzinfo=timezone.utc))
    for column in ("level_db", "onset_s", "offset_s"):
        nwb.add_trial_column(name=column, description=column)
    for s, lv in zip(start.tolist(), level.tolist()):
        nwb.add_trial(start_time=s, stop_time=s + PERIOD_S, level_db=lv, onset_s=s + 0.2, offset_s=s + 0.25)
    ends = np.cumsum(np.bincount(unit_sorted, minlength=len(names)))
    nwb.add_unit_column(name="unit_name", description="name")
    for u, (a, b) in enumerate(zip(np.r_[0, ends[:-1]], ends)):
        nwb.add_unit(spike_times=time_sorted[a:b], unit_name=str(names[u]))
    with pynwb.NWBHDF5IO(str(path), "w") as io:
        io.write(nwb)


HEAD = """[figure]
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
"""

SPEC = HEAD + """
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


GRID = """
[[panels]]
name = "spikes"
kind = "raster"
unit = "{unit}"
window_ms = [-100, 300]
"""

NWB = HEAD + """
[sources.big]
format = "nwb"
file = "{file}"
unit_names = "unit_name"

[sources.big.trial_columns]
level = "level_db"
onset = "onset_s"
offset = "offset_s"

[[panels]]
name = "rate"
kind = "psth"
units = {units}
window_ms = [-100, 300]
bin_ms = 10
"""


def paths(folder: Path) -> dict[str, Path]:
    """The paths :func:`write` writes in ``folder``."""
    return {role: folder / name for role, name in (("time_ordered", "spikes_time.csv"),
                                                    ("unit_ordered", "spikes_unit.csv"), ("trials", "trials.csv"),
                                                    ("parquet", "spikes.parquet"), ("sorter", "sorter"),
                                                    ("nwb", "session.nwb"), ("trials_parquet", "trials.parquet"))}


def spec(folder: Path, spikes: Path, trials: Path, name: str, unit: str | list = "u1", fmt: str = "csv",
         grid: bool = False) -> Path:
    """A spec on the files: one rate panel (of one unit, or of a list of units), and with ``grid``
    a raster beside it (the level grid)."""
    path = folder / f"{name}.toml"
    text = SPEC.format(spikes=spikes, trials=trials, unit=unit if isinstance(unit, str) else "", fmt=fmt)
    if not isinstance(unit, str):
        text = text.replace('unit = ""', "units = " + "[" + ", ".join(f'"{u}"' for u in unit) + "]")
    if grid:
        text += GRID.format(unit=unit)
    path.write_text(text)
    return path


def nwb_spec(folder: Path, file: Path, units: list[str]) -> Path:
    path = folder / "nwb.toml"
    path.write_text(NWB.format(file=file, units="[" + ", ".join(f'"{u}"' for u in units) + "]"))
    return path


def long_field(folder: Path, rows: int = 6000, length: int = 100_000) -> tuple[Path, Path]:
    """A small spike table keyed by trial, and the same with one field of ``length`` characters
    in the time column; specs on each (checked, not rendered)."""
    folder.mkdir(parents=True, exist_ok=True)
    lines = ["unit,trial,time_s"] + [f"u1,{i % 900 + 1},{i % 900 * PERIOD_S + 0.25:.6f}" for i in range(rows)]
    (folder / "plain.csv").write_text("\n".join(lines) + "\n")
    lines[100] = lines[100].rsplit(",", 1)[0] + "," + "x" * length
    (folder / "long.csv").write_text("\n".join(lines) + "\n")
    n_trials = LEVELS.size * PER_LEVEL
    start = np.arange(n_trials) * PERIOD_S
    (folder / "trials.csv").write_text("trial,level_db,onset_s,offset_s,start_s,stop_s\n" + "".join(
        f"{i + 1},{LEVELS[i % LEVELS.size]:g},{s + 0.2:.3f},{s + 0.25:.3f},{s:.3f},{s + PERIOD_S:.3f}\n"
        for i, s in enumerate(start)))
    specs = []
    for name in ("plain", "long"):
        text = SPEC.format(spikes=folder / f"{name}.csv", trials=folder / "trials.csv", unit="u1", fmt="csv")
        text = text.replace('assign_spikes = "by_time"\n', "").replace('time = "time_s"', 'time = "time_s"\ntrial = "trial"')
        (folder / f"{name}.toml").write_text(text)
        specs.append(folder / f"{name}.toml")
    return specs[0], specs[1]
