"""Time the PSTH of about 10^7 spikes against a bare ``numpy.bincount`` pass over the same aligned
spikes, and against elephant's ``time_histogram`` on the same pooled spike trains (one neo
SpikeTrain per trial, built before timing). Medians of several runs, ratios printed.

    python bench/psth_spikes.py [--spikes 10000000] [--repeats 3]
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

from compute_tables import LEVELS, recording
from figspec.registry import kind_of
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PsthPanel

WINDOW_MS, BIN_MS = (-200.0, 400.0), 1.0


def median_time(run, repeats: int) -> float:
    run()                                            # warm-up
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        run()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--spikes", type=int, default=10_000_000)
    parser.add_argument("--trials", type=int, default=400, help="trials per level")
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--no-elephant", action="store_true")
    args = parser.parse_args()
    rec = recording(args.spikes, args.trials)
    panel = PsthPanel(name="p", kind="psth", unit="u1", window_ms=WINDOW_MS, bin_ms=BIN_MS)
    kind, levels = kind_of(panel), LevelSpec(unit="dB SPL")
    ours = median_time(lambda: kind.compute(rec, panel, levels), args.repeats)

    # the bare pass: aligned spike times (ms) and each spike's level index, already in memory
    t_ms = rec.ticks / rec.ticks_per_ms
    level_of_spike = np.searchsorted(LEVELS, rec.pair_level()[rec.spike_pair()])
    n_bins = int((WINDOW_MS[1] - WINDOW_MS[0]) / BIN_MS)

    def bare() -> np.ndarray:
        b = np.floor((t_ms - WINDOW_MS[0]) / BIN_MS).astype(np.int64)
        inside = (b >= 0) & (b < n_bins)
        return np.bincount(level_of_spike[inside] * n_bins + b[inside], minlength=LEVELS.size * n_bins)

    base = median_time(bare, args.repeats)
    print(f"{rec.n_spikes} spikes, {LEVELS.size} levels x {args.trials} trials, {BIN_MS:g}-ms bins over "
          f"{WINDOW_MS}: figspec psth {ours:.3f} s, numpy bincount {base:.3f} s: ratio {ours / base:.2f}x")
    if args.no_elephant:
        return
    try:
        import neo
        import quantities as pq
        from elephant.statistics import time_histogram
    except ImportError:
        print("elephant is not installed (pip install elephant): skipped")
        return
    spike_pair = rec.spike_pair()
    trains = {}
    for lv_index, lv in enumerate(LEVELS):           # building the trains is not timed
        pairs = np.flatnonzero(rec.pair_level() == lv)
        starts, stops = rec.offsets[pairs], rec.offsets[pairs + 1]
        trains[lv] = [neo.SpikeTrain(t_ms[a:b][(t_ms[a:b] >= WINDOW_MS[0]) & (t_ms[a:b] < WINDOW_MS[1])] * pq.ms,
                                     t_start=WINDOW_MS[0] * pq.ms, t_stop=WINDOW_MS[1] * pq.ms)
                      for a, b in zip(starts, stops)]
    del spike_pair

    def with_elephant() -> None:
        for lv in LEVELS:
            time_histogram(trains[lv], bin_size=BIN_MS * pq.ms, output="rate")

    theirs = median_time(with_elephant, args.repeats)
    print(f"elephant time_histogram on the same trains: {theirs:.3f} s; figspec is {theirs / ours:.2f}x as fast")


if __name__ == "__main__":
    main()
