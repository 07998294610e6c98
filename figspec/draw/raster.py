"""Raster rows: one compound path per axes, one tick per spike, one line per trial."""

from __future__ import annotations

import numpy as np

from figspec.draw.context import DrawContext, Labels, at_page_resolution, group_key
from figspec.draw.psth import TIME_LABEL
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import RasterPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas


def draw(axes: dict, table: pd.DataFrame, panel: RasterPanel, ctx: DrawContext) -> None:
    """Draw each level's (or unit's) rows of the raster table into its axes.

    Trial 0 is the top line. Every trial presented has a line, so trials with no spike stay
    visible as empty lines and the y extent is the number of trials.
    """
    if panel.draw_as == "density":
        draw_density(axes, table, panel, ctx)
        return
    style = ctx.style
    half = style.raster.tick_height / 2
    looks = {}
    if "condition" in table.columns:
        names = list(dict.fromkeys(table["condition"]))
        looks = {n: colour for n, (colour, _) in zip(names, panel.conditions.looks(len(names), style.palette))}
    groups = table[panel.repeat].to_numpy()
    bounds = np.flatnonzero(np.r_[True, groups[1:] != groups[:-1], True])
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        ax = axes[group_key(panel.repeat, groups[lo])]
        rows = table["row"].to_numpy()[lo:hi]
        times = table["time_ms"].to_numpy()[lo:hi]
        n_trials = int(table["n_trials"].iloc[lo])
        spikes = ~np.isnan(times)
        width = tick_width(ax, n_trials, style)
        if looks:
            _condition_blocks(ax, table.iloc[lo:hi], looks, half, width, first=True, style=style)
        else:
            # add_artist, not add_patch: the limits are set below, and add_patch would walk every tick for them
            ax.add_artist(tick_patch(tick_path(times[spikes], rows[spikes].astype(float), half), fill=False,
                                     edgecolor=style.raster.colour, linewidth=width, capstyle="butt", gid="raster"))
        ax.set_ylim(n_trials - 0.5, -0.5)
        ax.set_xlim(*panel.window_ms)
        ax.set_yticks([])
        ax.spines["left"].set_visible(False)


def _condition_blocks(ax, rows: pd.DataFrame, looks: dict, half: float, width: float, first: bool, style) -> None:
    """One block of lines per condition, ticks in the condition's colour, a thin rule between
    blocks, and (in the top axes) each block's name at its right."""
    from matplotlib.transforms import blended_transform_factory

    edge = blended_transform_factory(ax.transAxes, ax.transData)
    for name, block in rows.groupby("condition", sort=False):
        times, lines = block["time_ms"].to_numpy(), block["row"].to_numpy().astype(float)
        spikes = ~np.isnan(times)
        ax.add_artist(tick_patch(tick_path(times[spikes], lines[spikes], half), fill=False, edgecolor=looks[name],
                                 linewidth=width, capstyle="butt", gid=f"raster:{name}"))
        _block_marks(ax, edge, name, float(lines.min()) - 0.5, float(lines.max()) + 0.5, looks[name], first, style)


def _block_marks(ax, edge, name, start: float, stop: float, colour, first: bool, style) -> None:
    """A condition's block of lines: a thin rule above it (but the first) and, when ``first``,
    its name at the right in the condition's colour."""
    if start > 0:
        ax.axhline(start, color="0.6", linewidth=style.axes.line_pt / 2, gid=f"condition_rule:{name}")
    if first:
        ax.text(1.01, (start + stop) / 2, str(name), transform=edge, ha="left", va="center",
                color=colour, fontsize=style.font.tick_pt, gid=f"condition_name:{name}")


TICK_ASPECT = 2.5      # a tick at least this many times as long as it is wide reads as a tick, not a dot
THINNEST_PT = 0.25     # no thinner than journals' thinnest printed line (Nature's figure guide: 0.25 pt)


def tick_width(ax, n_trials: int, style) -> float:
    """The style's tick width, made thinner (down to 0.25 pt) where trials are so close that
    ticks of that width would print as dots: a tick stays ``TICK_ASPECT`` times as long as wide.
    The axes' height is its grid share before the layout engine takes room for labels (about
    a fifth, common practice)."""
    sub = ax.get_figure(root=False)
    height_pt = ax.get_position().height * sub.bbox.height / sub.dpi * 72 * 0.8
    length_pt = height_pt / max(n_trials, 1) * style.raster.tick_height
    return float(min(style.raster.tick_width_pt, max(THINNEST_PT, length_pt / TICK_ASPECT)))


def cell_rates(table: pd.DataFrame) -> np.ndarray:
    """Each density cell's spikes per trial and second: what its grey level shows."""
    lines = (table["row_stop"] - table["row_start"]).to_numpy(dtype=float)
    seconds = (table["bin_stop_ms"] - table["bin_start_ms"]).to_numpy(dtype=float) / 1000.0
    return table["count"].to_numpy(dtype=float) / (lines * seconds)


def draw_density(axes: dict, table: pd.DataFrame, panel: RasterPanel, ctx: DrawContext) -> None:
    """Each level as an image of spikes per trial and second in cells of trials x time, on one
    grey scale for every level of the panel (white: none; black: the panel's highest cell), with
    a key. The image is embedded as it is in PDF and SVG, so every format shows the same cells;
    its grey is linear in the rate, so mean ink over a window follows the mean rate."""
    import matplotlib as mpl
    from matplotlib.transforms import blended_transform_factory

    n_time, n_groups = panel.density_bins
    w0, w1 = panel.window_ms
    rates = cell_rates(table)
    top = float(rates.max()) if rates.size and rates.max() > 0 else 1.0
    norm = mpl.colors.Normalize(0.0, top)
    # white to the raster colour, linear in each channel: ink is proportional to the rate
    ink = mpl.colors.LinearSegmentedColormap.from_list("figspec_ink", ["#ffffff", ctx.style.raster.colour])
    groups = table[panel.repeat].to_numpy()
    bounds = np.flatnonzero(np.r_[True, groups[1:] != groups[:-1], True])
    looks = {}
    if "condition" in table.columns:                  # one grey scale for all; blocks ruled and named
        names = list(dict.fromkeys(table["condition"]))
        looks = {n: colour for n, (colour, _) in zip(names, panel.conditions.looks(len(names), ctx.style.palette))}
    image = None
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        ax = axes[group_key(panel.repeat, groups[lo])]
        n = int(table["n_trials"].iloc[lo])
        edge = blended_transform_factory(ax.transAxes, ax.transData)
        for name, block in table.iloc[lo:hi].groupby("condition", sort=False) if looks else ():
            _block_marks(ax, edge, name, float(block["row_start"].min()) - 0.5, float(block["row_stop"].max()) - 0.5,
                         looks[name], True, ctx.style)
        k = min(n_groups, n)
        grid = np.zeros((k, n_time))
        gi = table["row_start"].to_numpy()[lo:hi] * k // n
        ti = np.rint((table["bin_start_ms"].to_numpy()[lo:hi] - w0) / (w1 - w0) * n_time).astype(int)
        grid[gi, np.clip(ti, 0, n_time - 1)] = rates[lo:hi]
        grid = at_page_resolution(ax, grid)
        image = ax.imshow(grid, cmap=ink, norm=norm, extent=(w0, w1, n - 0.5, -0.5), aspect="auto",
                          interpolation="none", origin="upper", gid="raster_density", zorder=-1)  # shading over it
        ax.set_ylim(n - 0.5, -0.5)
        ax.set_xlim(w0, w1)
        ax.set_yticks([])
        ax.spines["left"].set_visible(False)
    if image is not None:
        first = next(iter(axes.values()))
        bar = first.get_figure(root=False).colorbar(image, ax=list(axes.values()), location="right", shrink=0.5,
                                                    aspect=30, pad=0.02)
        bar.set_label("Spikes/s per cell", fontsize=ctx.style.font.tick_pt)
        bar.ax.tick_params(labelsize=ctx.style.font.tick_pt)
        bar.ax.set_gid("raster_density_key")


def tick_patch(path, **properties):
    """One patch holding every tick of a raster as one compound path: PDF and SVG write it as one
    path, however many spikes. For pixels (PNG, Agg) the same ticks are stroked as one short
    vertical segment repeated at each tick's centre (Agg's path collection with offsets), which
    is several times faster than one path of thousands of subpaths (bench/raster_ticks.py); what
    is drawn is the same: the same centres, length, width, colour and clipping."""
    from matplotlib.backends.backend_agg import RendererAgg
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path
    from matplotlib.transforms import IdentityTransform

    class TickPatch(PathPatch):
        def draw(self, renderer):
            if not isinstance(renderer, RendererAgg) or not self.get_visible() or not len(self.get_path().vertices):
                return super().draw(renderer)
            vertices = self.get_path().vertices
            transform = self.get_transform()
            centres = transform.transform((vertices[0::2] + vertices[1::2]) / 2)
            ends = transform.transform(vertices[:2])
            half = (ends[1] - ends[0]) / 2
            segment = Path([-half, half], [Path.MOVETO, Path.LINETO])
            gc = renderer.new_gc()
            self._set_gc_clip(gc)
            gc.set_snap(self.get_snap())
            gc.set_capstyle(self.get_capstyle())
            gc.set_antialiased(self.get_antialiased())
            gc.set_alpha(self.get_alpha())
            identity = IdentityTransform().frozen()
            renderer.open_group("patch", self.get_gid())
            renderer.draw_path_collection(gc, identity, [segment], np.empty((0, 3, 3)), centres, identity,
                                          np.empty((0, 4)), np.array([self.get_edgecolor()]), [self.get_linewidth()],
                                          [(0, None)], [self.get_antialiased()], [None], "screen")
            renderer.close_group("patch")
            gc.restore()
            self.stale = False

    return TickPatch(path, **properties)


def tick_path(x: np.ndarray, y: np.ndarray, half: float):
    """One compound path of vertical ticks (a MOVETO and a LINETO per spike): a single artist
    that PDF and SVG write as one path, however many spikes."""
    from matplotlib.path import Path

    vertices = np.empty((2 * x.size, 2))
    vertices[0::2, 0] = vertices[1::2, 0] = x
    vertices[0::2, 1] = y - half
    vertices[1::2, 1] = y + half
    codes = np.full(2 * x.size, Path.LINETO, dtype=Path.code_type)
    codes[0::2] = Path.MOVETO
    return Path(vertices, codes)


def tick_positions(patch) -> np.ndarray:
    """The x of every tick of a raster patch drawn by :func:`tick_path` (for tests and checks)."""
    return patch.get_path().vertices[0::2, 0]


def labels(panel: RasterPanel, table: pd.DataFrame, levels: LevelSpec) -> Labels:
    return Labels("Spikes", TIME_LABEL)


def limits(panel: RasterPanel, table: pd.DataFrame) -> dict[str, tuple[float, float]]:
    """Only time is shareable: each repeat's y extent is its own number of trials."""
    return {"x": tuple(panel.window_ms)}
