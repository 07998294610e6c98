"""Dense rasters: past one tick per device pixel a level is drawn as a density image whose ink
follows the rate, identically in PNG, PDF and SVG; a seeded subset of trials is said so."""

from __future__ import annotations

import base64
import io
import re
import shutil
import subprocess

import numpy as np
import pandas as pd
import pytest

from figspec import pipeline
from helpers import write_spec

BASELINE, EVOKED = 10.0, {0.0: 40.0, 80.0: 140.0}        # spikes/s: invented
WINDOW, RESPONSE = (-200.0, 400.0), (0.0, 50.0)
N_TRIALS = 6400

SPEC = """\
[figure]
title = "Dense"
width_mm = 90
height_mm = 60
formats = ["svg", "pdf", "png"]
png_dpi = 150

[levels]
quantity = "Sound level"
unit = "dB SPL"

[stimulus]
start_ms = 0
stop_ms = 50
mark = "bar"

[sources.rig]
spikes = "spikes.csv"
trials = "trials.csv"
spike_columns = { unit = "unit", trial = "trial", time = "time_s" }
trial_columns = { trial = "trial", level = "level_db" }

[[panels]]
name = "spikes"
kind = "raster"
window_ms = [-200, 400]
"""


@pytest.fixture(scope="module")
def dense(tmp_path_factory):
    """Poisson spikes (numpy's generator): a baseline everywhere and an evoked rate in 0-50 ms."""
    folder = tmp_path_factory.mktemp("dense")
    rng = np.random.default_rng(11)
    trials, spikes = [], []
    for i, (level, rate) in enumerate(EVOKED.items()):
        ids = np.arange(N_TRIALS) + i * N_TRIALS + 1
        n_base = rng.poisson(BASELINE * 0.6, N_TRIALS)
        n_ev = rng.poisson((rate - BASELINE) * 0.05, N_TRIALS)
        spikes.append(pd.DataFrame({"trial": np.repeat(ids, n_base), "time_s": rng.uniform(-0.2, 0.4, n_base.sum())}))
        spikes.append(pd.DataFrame({"trial": np.repeat(ids, n_ev), "time_s": rng.uniform(0.0, 0.05, n_ev.sum())}))
        trials.append(pd.DataFrame({"trial": ids, "level_db": level}))
    table = pd.concat(spikes).assign(unit="u1")[["unit", "trial", "time_s"]]
    table.to_csv(folder / "spikes.csv", index=False)
    pd.concat(trials).to_csv(folder / "trials.csv", index=False)
    spec = write_spec(folder, SPEC, "dense.toml")
    resolved = pipeline.check(spec)
    tables = pipeline.compute(resolved)
    fig = pipeline.draw(resolved, tables)
    files = pipeline.figures(resolved, fig, ["svg", "pdf", "png"])
    return resolved, tables, fig, files


def test_too_many_trials_for_ticks_draw_a_density_image(dense):
    resolved, tables, fig, _ = dense
    [panel] = resolved.panels
    assert panel.draw_as == "density" and panel.density_bins[1] < N_TRIALS
    images = [im for ax in fig.subfigs[0].axes for im in ax.images if im.get_gid() == "raster_density"]
    assert len(images) == 2
    assert {"row_start", "row_stop", "bin_start_ms", "bin_stop_ms", "count"} <= set(tables.panels["spikes"])


def test_the_density_table_counts_every_spike_in_the_window(dense, tmp_path):
    resolved, tables, _, _ = dense
    spikes = pd.read_csv(resolved.spec.folder / "spikes.csv")
    ticks = np.rint(spikes["time_s"].to_numpy() * 1e6)          # figspec's 1-µs ticks, [start, stop)
    inside = ((ticks >= WINDOW[0] * 1000) & (ticks < WINDOW[1] * 1000)).sum()
    assert tables.panels["spikes"]["count"].sum() == inside


def _ink_ratio(gray: np.ndarray, columns: tuple[float, float]) -> float:
    """Mean ink (1 - grey level) over the response window divided by that over the rest of the
    window, for an image whose columns span ``columns`` (ms) left to right."""
    ink = 1.0 - gray / 255.0
    t = columns[0] + (np.arange(ink.shape[1]) + 0.5) / ink.shape[1] * (columns[1] - columns[0])
    evoked = (t >= RESPONSE[0] + 5) & (t < RESPONSE[1] - 5)
    base = (t < RESPONSE[0] - 5) | (t >= RESPONSE[1] + 5)
    return float(ink[:, evoked].mean() / ink[:, base].mean())


def _axes_crops(fig, image: np.ndarray, dpi: float = 150) -> list[np.ndarray]:
    """The pixels of each raster axes (top row first) in a full-page raster of the figure at
    ``dpi``, 4 px clear of the spines."""
    height = image.shape[0]
    scale = dpi / fig.dpi
    out = []
    for ax in fig.subfigs[0].axes:
        if not ax.images:
            continue
        box = ax.get_window_extent()
        x0, x1 = int(box.x0 * scale) + 4, int(box.x1 * scale) - 4
        y0, y1 = int(height - box.y1 * scale) + 4, int(height - box.y0 * scale) - 4
        out.append(image[y0:y1, x0:x1])
    return out


def _expected() -> list[float]:
    return [rate / BASELINE for rate in sorted(EVOKED.values(), reverse=True)]      # high level at the top


def _check(ratios: list[float]) -> None:
    for found, wanted in zip(ratios, _expected()):
        assert abs(found / wanted - 1) < 0.2, (ratios, _expected())
    assert ratios[0] > 1.5 * ratios[1]                                  # rows with different rates differ


def test_ink_follows_the_rate_in_png(dense):
    from PIL import Image

    _, _, fig, files = dense
    page = np.asarray(Image.open(io.BytesIO(files["png"])).convert("L"), dtype=float)
    _check([_ink_ratio(crop, WINDOW) for crop in _axes_crops(fig, page)])


def test_ink_follows_the_rate_in_svg_embedded_images(dense):
    from PIL import Image

    _, _, _, files = dense
    found = re.findall(rb'xlink:href="data:image/png;base64,([^"]+)"', files["svg"])
    assert len(found) == 3                                       # two levels, then the key
    grays = [np.asarray(Image.open(io.BytesIO(base64.b64decode(b))).convert("L"), dtype=float) for b in found[:2]]
    _check([_ink_ratio(g, WINDOW) for g in grays])


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="pdftoppm (Debian poppler-utils) is not installed")
def test_ink_follows_the_rate_in_pdf_as_poppler_draws_it(dense, tmp_path):
    from PIL import Image

    _, _, fig, files = dense
    (tmp_path / "f.pdf").write_bytes(files["pdf"])
    subprocess.run(["pdftoppm", "-r", "150", "-png", "-singlefile", str(tmp_path / "f.pdf"), str(tmp_path / "page")],
                   check=True)
    page = np.asarray(Image.open(tmp_path / "page.png").convert("L"), dtype=float)
    _check([_ink_ratio(crop, WINDOW) for crop in _axes_crops(fig, page)])


def test_a_seeded_subset_of_trials_is_drawn_as_ticks_and_said_so(dense, tmp_path):
    resolved, _, _, _ = dense
    text = SPEC.replace('window_ms = [-200, 400]', 'window_ms = [-200, 400]\ntrials_shown = 100\nseed = 4')
    for name in ("spikes.csv", "trials.csv"):
        shutil.copy(resolved.spec.folder / name, tmp_path / name)
    spec = write_spec(tmp_path, text, "subset.toml")
    again = pipeline.check(spec)
    tables = pipeline.compute(again)
    table = tables.panels["spikes"]
    assert again.panels[0].draw_as == "ticks"
    assert table.groupby("level")["row"].max().tolist() == [99, 99] and set(table["n_shown"]) == {100}
    assert set(table["n_trials"]) == {N_TRIALS}
    assert table.equals(pipeline.compute(pipeline.check(spec)).panels["spikes"])          # seeded
    fig = pipeline.draw(again, tables)
    labels = [ax.get_ylabel() for ax in fig.subfigs[0].axes]
    assert all(label.endswith(f"n = 100 of {N_TRIALS}") for label in labels)
    from figspec.steps.save import legend

    assert f"100 of {N_TRIALS} trials per level shown, a random subset (seed 4)" in legend(again, tables)
