"""The data engine against Arrow's own readers, each command in a fresh process as a user runs
it (wall time of the whole process, peak resident memory from the process itself), medians of
``--repeats`` alternating runs, ratios from one run.

    .venv/bin/python bench/read_engine.py [--spikes 10000000] [--big 50000000] [--huge 100000000]
                                          [--nwb-spikes 20000000] [--repeats 3] [--only NAME ...]

Cases (issue 22's targets in brackets):
- ``check``: ``figspec check`` of a one-unit spec on a time-ordered CSV of ``--spikes`` spikes
  (unit, session time; 300 units) against ``pyarrow.csv.read_csv`` of the same file in a bare
  script [<= 1.5x the time, <= 1.5x the peak memory];
- ``order``: the same check on the same rows sorted by unit [time-ordered <= 1.2x unit-ordered];
- ``long_field``: check of a small CSV with one 100,000-character field, against the same
  check of the file without it [the extra memory <= 3x the file's size; one line, exit 2];
- ``render_big``: ``figspec render`` of a one-unit level grid from a ``--big``-spike CSV, against
  the bare read of it [<= 2 GB, <= 2x the bare read's time];
- ``parquet_huge``: render of a 3-unit figure from a ``--huge``-spike Parquet file [<= 5 s, <= 1 GB];
- ``nwb``: render of a 3-unit figure from an NWB file of 400 units [<= 5 s, <= 1 GB].
The files are invented (bench/engine_data.py) and kept in ``--folder`` between runs.
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
import engine_data  # noqa: E402

# the peak resident memory of this process's own address space (VmHWM; ru_maxrss would carry the
# parent's peak over from before exec on Linux)
PEAK = ("import json\n{body}\n"
        "print('@@' + json.dumps(int(next(l for l in open('/proc/self/status') if l.startswith('VmHWM')).split()[1])))")


def run(body: str, expect: int = 0) -> tuple[float, float]:
    """(seconds, peak MB) of a fresh Python process running ``body``."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", PEAK.format(body=body)], capture_output=True, text=True)
    seconds = time.perf_counter() - start
    if done.returncode != expect or "@@" not in done.stdout:
        raise SystemExit(f"failed ({done.returncode}):\n{done.stdout}\n{done.stderr}")
    return seconds, int(done.stdout.split("@@")[-1]) / 1024


def bare_read(path: Path) -> str:
    return f"import pyarrow.csv as c; t = c.read_csv({str(path)!r}); assert t.num_rows"


def figspec(command: str, spec: Path, out: Path | None = None, code: int = 0) -> str:
    args = [command, str(spec)] + (["-o", str(out), "--format", "png", "--force", "--jobs", "1"] if out else [])
    return (f"from figspec.cli import run\ncode = run({args!r})\n"
            f"assert code == {code}, code")


def medians(bodies: dict[str, str], repeats: int, expect: dict[str, int] | None = None) -> dict[str, tuple]:
    times = {name: [] for name in bodies}
    for _ in range(repeats):                        # alternating, so drift hits all alike
        for name, body in bodies.items():
            times[name].append(run(body))
    return {name: (statistics.median(t for t, _ in v), statistics.median(m for _, m in v)) for name, v in times.items()}


def show(case: str, result: dict[str, tuple], base: str) -> None:
    for name, (t, m) in result.items():
        ratio = "" if name == base else f"  {t / result[base][0]:.2f}x time, {m / result[base][1]:.2f}x memory"
        print(f"{case:>12}  {name:<28} {t:7.2f} s {m:8.0f} MB{ratio}", flush=True)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--spikes", type=int, default=10_000_000)
    parser.add_argument("--big", type=int, default=50_000_000)
    parser.add_argument("--huge", type=int, default=100_000_000)
    parser.add_argument("--nwb-spikes", type=int, default=20_000_000)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--folder", type=Path, default=Path("/tmp/figspec-bench-engine"))
    parser.add_argument("--only", nargs="+", default=["check", "order", "long_field", "render_big", "parquet_huge",
                                                      "nwb"])
    args = parser.parse_args()
    out = args.folder / "out"
    if {"check", "order"} & set(args.only):
        folder = args.folder / f"n{args.spikes}"
        paths = engine_data.write(folder, args.spikes, what=("time_ordered", "unit_ordered")) \
            if not (folder / "spikes_unit.csv").exists() else engine_data.paths(folder)
        by_time = engine_data.spec(folder, paths["time_ordered"], paths["trials"], "time")
        by_unit = engine_data.spec(folder, paths["unit_ordered"], paths["trials"], "unit")
        if "check" in args.only:
            show("check", medians({"pyarrow.csv.read_csv": bare_read(paths["time_ordered"]),
                                   "figspec check": figspec("check", by_time)}, args.repeats), "pyarrow.csv.read_csv")
        if "order" in args.only:
            show("order", medians({"check, unit order": figspec("check", by_unit),
                                   "check, time order": figspec("check", by_time)}, args.repeats), "check, unit order")
    if "long_field" in args.only:
        folder = args.folder / "long"
        plain, long = engine_data.long_field(folder)
        result = medians({"check, no long field": figspec("check", plain),
                          "check, 100k-char field": figspec("check", long, code=2)}, args.repeats)
        show("long_field", result, "check, no long field")
        size = (folder / "long.csv").stat().st_size / 2 ** 20
        extra = result["check, 100k-char field"][1] - result["check, no long field"][1]
        print(f"{'':>12}  file {size:.2f} MB; extra peak {extra:.1f} MB = {extra / size:.1f}x the file", flush=True)
    if "render_big" in args.only:
        folder = args.folder / f"n{args.big}"
        paths = engine_data.write(folder, args.big, what=("time_ordered",)) \
            if not (folder / "spikes_time.csv").exists() else engine_data.paths(folder)
        grid = engine_data.spec(folder, paths["time_ordered"], paths["trials"], "grid", grid=True)
        show("render_big", medians({"pyarrow.csv.read_csv": bare_read(paths["time_ordered"]),
                                    "figspec render (1 unit)": figspec("render", grid, out)}, args.repeats),
             "pyarrow.csv.read_csv")
    if "parquet_huge" in args.only:
        folder = args.folder / f"n{args.huge}"
        paths = engine_data.write(folder, args.huge, what=("parquet",)) \
            if not (folder / "spikes.parquet").exists() else engine_data.paths(folder)
        three = engine_data.spec(folder, paths["parquet"], paths["trials_parquet"], "three", unit=["u1", "u2", "u3"],
                                 fmt="parquet")
        show("parquet_huge", medians({"figspec render (3 units)": figspec("render", three, out)}, args.repeats),
             "figspec render (3 units)")
    if "nwb" in args.only:
        folder = args.folder / f"nwb{args.nwb_spikes}"
        paths = engine_data.write(folder, args.nwb_spikes, n_units=400, what=("nwb",)) \
            if not (folder / "session.nwb").exists() else engine_data.paths(folder)
        three = engine_data.nwb_spec(folder, paths["nwb"], ["u1", "u2", "u3"])
        show("nwb", medians({"figspec render (3 units)": figspec("render", three, out)}, args.repeats),
             "figspec render (3 units)")
    print(json.dumps({"spikes": args.spikes, "big": args.big, "huge": args.huge, "nwb_spikes": args.nwb_spikes}))


if __name__ == "__main__":
    main()
