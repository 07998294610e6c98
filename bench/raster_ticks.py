"""The cost of drawing a raster as ticks, against a script that draws one LineCollection per
raster axes (the plain matplotlib way), for PNG, PDF and SVG.

    .venv/bin/python bench/raster_ticks.py [--trials 400 1600] [--repeats 5]

Both draw the same ticks (figspec's computed raster table) into the same grid (9 levels, one
axes each, 120 x 150 mm, 300 dpi) and save one file; timed in this process after a warm-up,
medians of ``--repeats`` alternating runs. figspec's time is its draw step (layout, labels,
shading, ticks) plus saving, from tables already computed; the script's is its figure plus
saving. Target (issue 22): figspec <= 1.3x the script.
"""

from __future__ import annotations

import argparse
import io
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
from level_grid import BIN_MS, DPI, HEIGHT_MM, SPEC, WIDTH_MM, WINDOWS, make_data  # noqa: E402


def figspec_side(folder: Path, fmt: str):
    from figspec import pipeline
    from figspec.output.files import figure_files

    text = SPEC.format(w=WIDTH_MM, h=HEIGHT_MM, dpi=DPI, a=WINDOWS["short"][0], b=WINDOWS["short"][1], bin=BIN_MS)
    text = text[:text.index('[[panels]]\nname = "rate"')].replace('kind = "raster"', 'kind = "raster"\ndraw_as = "ticks"')
    (folder / "ticks.toml").write_text(text)
    resolved = pipeline.check(folder / "ticks.toml")
    tables = pipeline.compute(resolved)

    def run() -> bytes:
        import matplotlib.pyplot as plt

        fig = pipeline.draw(resolved, tables)
        data = figure_files(fig, resolved.style, [fmt], DPI, "bench")[fmt]
        plt.close(fig)
        return data
    return run, tables.panels["spikes"]


def script_side(raster, fmt: str):
    def run() -> bytes:
        import matplotlib

        matplotlib.use("agg")
        import matplotlib.pyplot as plt
        from matplotlib.collections import LineCollection

        levels = sorted(raster["level"].unique(), reverse=True)
        fig, axes = plt.subplots(len(levels), 1, figsize=(WIDTH_MM / 25.4, HEIGHT_MM / 25.4), sharex=True,
                                 layout="constrained")
        for ax, level in zip(axes, levels):
            rows = raster[raster["level"] == level]
            spikes = rows["time_ms"].notna().to_numpy()
            x, y = rows["time_ms"].to_numpy()[spikes], rows["row"].to_numpy()[spikes].astype(float)
            segments = np.stack([np.c_[x, y - 0.4], np.c_[x, y + 0.4]], axis=1)
            ax.add_collection(LineCollection(segments, colors="black", linewidths=0.5, capstyle="butt"))
            ax.set_xlim(*WINDOWS["short"])
            ax.set_ylim(int(rows["n_trials"].iloc[0]) - 0.5, -0.5)
            ax.set_ylabel(f"{level:g} dB SPL")
        axes[-1].set_xlabel("Time from stimulus onset (ms)")
        buffer = io.BytesIO()
        fig.savefig(buffer, format=fmt, dpi=DPI)
        plt.close(fig)
        return buffer.getvalue()
    return run


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--trials", type=int, nargs="+", default=[400, 1600], help="trials per level")
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--formats", nargs="+", default=["png", "pdf", "svg"])
    args = parser.parse_args()
    print(f"{'trials/level':>12} {'fmt':>4} {'spikes':>8} {'figspec s':>10} {'script s':>9} {'ratio':>6}", flush=True)
    for n in args.trials:
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            make_data(folder, n)
            for fmt in args.formats:
                ours, raster = figspec_side(folder, fmt)
                theirs = script_side(raster, fmt)
                ours(), theirs()                              # warm-up: imports, fonts, caches
                times = {"figspec": [], "script": []}
                for _ in range(args.repeats):
                    for name, run in (("figspec", ours), ("script", theirs)):
                        start = time.perf_counter()
                        run()
                        times[name].append(time.perf_counter() - start)
                a, b = statistics.median(times["figspec"]), statistics.median(times["script"])
                print(f"{n:>12} {fmt:>4} {int(raster['time_ms'].notna().sum()):>8} {a:>10.3f} {b:>9.3f} "
                      f"{a / b:>5.2f}x", flush=True)


if __name__ == "__main__":
    main()
