"""The raster's ticks in pixels (Agg: one short segment repeated at each tick's centre) look as
the same compound path stroked by matplotlib's own PathPatch, the reference; in PDF and SVG the
patch is written as that one path."""

import io

import numpy as np
from matplotlib.figure import Figure
from matplotlib.patches import PathPatch
from PIL import Image

from figspec.draw.raster import tick_patch, tick_path


def _png(make) -> np.ndarray:
    fig = Figure(figsize=(3, 2), dpi=200)
    ax = fig.add_subplot()
    rng = np.random.default_rng(4)
    x, y = rng.uniform(-50, 150, 400), rng.integers(0, 30, 400).astype(float)
    ax.add_artist(make(tick_path(x, y, 0.4), fill=False, edgecolor="#202020", linewidth=0.6, capstyle="butt"))
    ax.set_xlim(-50, 150)
    ax.set_ylim(29.5, -0.5)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png")
    return np.asarray(Image.open(buffer)).astype(int)


def test_pixels_match_the_path_stroked_by_matplotlib():
    ours, reference = _png(tick_patch), _png(PathPatch)
    differ = np.abs(ours - reference).max(axis=-1) > 0
    assert differ.mean() < 0.001 and np.abs(ours - reference).max() <= 64


def test_vector_files_hold_one_path_for_all_ticks():
    fig = Figure(figsize=(3, 2))
    ax = fig.add_subplot()
    ax.add_artist(tick_patch(tick_path(np.arange(50.0), np.zeros(50), 0.4), fill=False, gid="raster_test"))
    buffer = io.BytesIO()
    fig.savefig(buffer, format="svg")
    svg = buffer.getvalue().decode()
    group = svg[svg.index('id="raster_test"'):]
    assert group[:group.index("</g>")].count("<path") == 1
