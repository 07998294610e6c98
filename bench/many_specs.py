"""Twenty specs on one large spike file in one build (``figspec render DIR --jobs 2``), against
one read of the file plus twenty drawings alone (the read cache's target).

    .venv/bin/python bench/many_specs.py [--spikes 10000000] [--specs 20] [--repeats 3]

- build: ``figspec render`` of ``--specs`` specs (a rate panel of a different unit each) on one
  ``--spikes``-spike CSV, ``--jobs 2``, fresh outputs;
- read: ``figspec check`` of one of them (the read, nothing drawn);
- draw: ``figspec render`` of one such spec on a 10,000-spike copy (the drawing alone, start-up
  included), times ``--specs`` / 2 (two workers).
Each is a fresh process, medians of ``--repeats``. Target (issue 22): build <= 1.3x (read + draw).
"""

from __future__ import annotations

import argparse
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
import engine_data  # noqa: E402


def timed(args: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "figspec", *args], check=True, capture_output=True)
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--spikes", type=int, default=10_000_000)
    parser.add_argument("--specs", type=int, default=20)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--folder", type=Path, default=Path("/tmp/figspec-bench-many"))
    args = parser.parse_args()
    big, small = args.folder / "big", args.folder / "small"
    paths = engine_data.paths(big)
    if not paths["time_ordered"].exists():
        engine_data.write(big, args.spikes, what=("time_ordered",))
    small_paths = engine_data.write(small, 10_000, what=("time_ordered",))
    specs = big / "specs"
    shutil.rmtree(specs, ignore_errors=True)
    specs.mkdir()
    for i in range(args.specs):
        engine_data.spec(specs, paths["time_ordered"], paths["trials"], f"unit{i}", unit=f"u{i}")
    one_small = engine_data.spec(small, small_paths["time_ordered"], small_paths["trials"], "one", unit="u1")
    runs = {"build": [], "read": [], "draw": []}
    for _ in range(args.repeats):
        out = args.folder / "out"
        shutil.rmtree(out, ignore_errors=True)
        runs["build"].append(timed(["render", str(specs), "-o", str(out), "--format", "png", "--jobs", "2"]))
        runs["read"].append(timed(["check", str(specs / "unit0.toml")]))
        runs["draw"].append(timed(["render", str(one_small), "-o", str(args.folder / "small_out"), "--format",
                                   "png", "--force", "--jobs", "1"]))
    build, read, draw = (statistics.median(runs[k]) for k in ("build", "read", "draw"))
    expected = read + draw * args.specs / 2
    print(f"{args.specs} specs on {args.spikes:,} spikes, --jobs 2: build {build:.2f} s; one read {read:.2f} s; "
          f"one drawing {draw:.2f} s; read + {args.specs} drawings / 2 workers = {expected:.2f} s; "
          f"ratio {build / expected:.2f}x", flush=True)


if __name__ == "__main__":
    main()
