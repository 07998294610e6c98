"""Time builds as a user runs them (fresh processes): a no-op rebuild of the demo folder against a
full build, 20 specs with ``--jobs 2`` against ``--jobs 1``, and the CPU time of ``figspec check``
on a demo spec. Medians of several runs; ratios printed.

    python bench/builds.py [--repeats 3] [--specs 20]
"""

from __future__ import annotations

import argparse
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FIGSPEC = [sys.executable, "-m", "figspec"]


def wall(cmd: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=ROOT)
    return time.perf_counter() - start


def cpu(cmd: list[str]) -> float:
    """User + system CPU seconds of a child process."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=ROOT)
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--specs", type=int, default=20)
    args = parser.parse_args()
    work = Path(tempfile.mkdtemp(prefix="figspec-builds-"))

    full, noop = [], []
    for i in range(args.repeats):
        out = work / f"demo{i}"
        full.append(wall(FIGSPEC + ["render", "specs", "-o", str(out)]))
        noop.append(wall(FIGSPEC + ["render", "specs", "-o", str(out)]))
    a, b = statistics.median(full), statistics.median(noop)
    print(f"demo folder: full build {a:.2f} s, no-op rebuild {b:.2f} s: {b / a:.1%} of a full build", flush=True)

    text = (ROOT / "specs" / "level_grid.toml").read_text().replace('"data/', f'"{ROOT / "specs" / "data"}/')
    text = text.replace('style = "house"', f'style = "{ROOT / "styles" / "house.toml"}"')
    folder = work / "many"
    folder.mkdir()
    for i in range(args.specs):
        (folder / f"fig{i:02d}.toml").write_text(text.replace("Unit u1:", f"Figure {i}, unit u1:"))
    one, two = [], []
    for _ in range(args.repeats):
        one.append(wall(FIGSPEC + ["render", str(folder), "-o", str(work / "one"), "--force", "--jobs", "1"]))
        two.append(wall(FIGSPEC + ["render", str(folder), "-o", str(work / "two"), "--force", "--jobs", "2"]))
    a, b = statistics.median(one), statistics.median(two)
    print(f"{args.specs} specs: --jobs 1 {a:.2f} s, --jobs 2 {b:.2f} s: ratio {b / a:.2f}", flush=True)

    check = [cpu(FIGSPEC + ["check", "specs/level_grid.toml"]) for _ in range(max(5, args.repeats))]
    print(f"figspec check specs/level_grid.toml: median {statistics.median(check):.2f} s of CPU", flush=True)
    shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
