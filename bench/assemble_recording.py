"""Reading and assembling a large recording, against a bare numpy pass over the same spikes.

    .venv/bin/python bench/assemble_recording.py [--spikes 10000000] [--repeats 3]

Builds an invented session (9 levels x 400 trials, 3 units, session clock, spike times in s)
held as Parquet (with the parquet extra) and as in-memory frames, then times, in one run and as
medians of ``--repeats``:

- baseline: a bare numpy pass that aligns the same spike times to their onsets and bins them
  (``np.searchsorted`` + ``np.bincount``), from arrays already in memory;
- assemble: figspec's assembly from canonical frames (ticks, trial keys, pairs, sorting);
- parquet: reading the Parquet files through the source reader, then assembling.

Peak memory of assembly above the baseline after import (tracemalloc) is reported against the
size of the raw spike arrays (unit code, trial number and time: 8 + 8 + 8 bytes per spike).
Targets (issue 10): assembly within 3x the baseline; peak memory within 3x the raw arrays.
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np
import pandas as pd

from figspec.data.assemble import Layout, assemble
from figspec.data.readers import load_source
from figspec.spec.sources import ParquetSource

LEVELS, PER_LEVEL, PERIOD_S = np.arange(0, 81, 10.0), 400, 0.6


def session(n_spikes: int, seed: int = 5):
    rng = np.random.default_rng(seed)
    n_trials = LEVELS.size * PER_LEVEL
    level = rng.permutation(np.repeat(LEVELS, PER_LEVEL))
    onset = np.round(np.arange(n_trials) * PERIOD_S + 0.2 + rng.uniform(0, 0.01, n_trials), 6)
    trial = np.sort(rng.integers(0, n_trials, n_spikes))
    unit = rng.integers(0, 3, n_spikes)
    time_s = np.round(onset[trial] + rng.uniform(-0.2, 0.39, n_spikes), 6)
    order = np.lexsort((time_s, unit))
    spikes = pd.DataFrame({"unit": np.array(["u1", "u2", "u3"])[unit[order]], "trial": trial[order] + 1,
                           "time_s": time_s[order]})
    trials = pd.DataFrame({"trial": np.arange(1, n_trials + 1), "level_db": level, "onset_s": onset,
                           "start_s": np.arange(n_trials) * PERIOD_S, "stop_s": np.arange(1, n_trials + 1) * PERIOD_S})
    return spikes, trials


def bare_numpy(unit_code, trial_index, time_s, onset, level_index, n_levels):
    rel_ms = (time_s - onset[trial_index]) * 1e3
    edges = np.arange(-200.0, 391.0, 1.0)
    b = np.searchsorted(edges, rel_ms, side="right") - 1
    keep = (b >= 0) & (b < edges.size - 1)
    flat = (unit_code[keep] * n_levels + level_index[trial_index[keep]]) * (edges.size - 1) + b[keep]
    return np.bincount(flat, minlength=3 * n_levels * (edges.size - 1))


def canonical(spikes, trials):
    return (pd.DataFrame({"unit": spikes["unit"], "key0": spikes["trial"], "time": spikes["time_s"]}),
            pd.DataFrame({"key0": trials["trial"], "level": trials["level_db"], "onset": trials["onset_s"],
                          "start": trials["start_s"], "stop": trials["stop_s"]}))


def timed(fn, repeats):
    fn()
    out = []
    for _ in range(repeats):
        start = time.perf_counter()
        fn()
        out.append(time.perf_counter() - start)
    return statistics.median(out)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--spikes", type=int, default=10_000_000)
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    spikes, trials = session(args.spikes)
    layout = Layout(where="bench", locs={}, clock="session")
    frames = canonical(spikes, trials)
    unit_code = pd.factorize(spikes["unit"])[0].astype(np.int64)
    trial_index = spikes["trial"].to_numpy() - 1
    level_index = np.searchsorted(LEVELS, trials["level_db"].to_numpy())
    arrays = (unit_code, trial_index, spikes["time_s"].to_numpy(), trials["onset_s"].to_numpy(), level_index, LEVELS.size)
    base = timed(lambda: bare_numpy(*arrays), args.repeats)
    asm = timed(lambda: assemble(*frames, layout), args.repeats)
    raw = args.spikes * 24
    tracemalloc.start()
    assemble(*frames, layout)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    print(f"{args.spikes:,} spikes, {len(trials)} trials, 3 units (medians of {args.repeats})")
    print(f"  bare numpy align + bin      {base:7.3f} s")
    print(f"  assemble from frames        {asm:7.3f} s   ratio {asm / base:5.2f}  (target <= 3)")
    print(f"  peak memory of assembly     {peak / 1e6:7.0f} MB  = {peak / raw:4.2f} x the raw arrays "
          f"({raw / 1e6:.0f} MB; target <= 3)")
    try:
        with tempfile.TemporaryDirectory() as tmp:
            spikes.to_parquet(Path(tmp) / "s.parquet", row_group_size=1_000_000, index=False)
            trials.to_parquet(Path(tmp) / "t.parquet", index=False)
            src = ParquetSource.model_validate({"format": "parquet", "spikes": "s.parquet", "trials": "t.parquet",
                                                "clock": "session", "spike_columns": {"time": "time_s"},
                                                "trial_columns": {"level": "level_db", "onset": "onset_s",
                                                                  "start": "start_s", "stop": "stop_s"}})
            pq = timed(lambda: load_source(src, Path(tmp), ("sources", "s")), args.repeats)
        print(f"  read Parquet + assemble     {pq:7.3f} s   ratio {pq / base:5.2f}")
    except ImportError:
        print("  (Parquet: install the parquet extra)")


if __name__ == "__main__":
    main()
