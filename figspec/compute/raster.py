"""Raster table: every spike in the window, and every trial presented."""

from __future__ import annotations

import numpy as np

from figspec.compute.conditions import stack
from figspec.compute.describe import About, count_text, unit_text
from figspec.compute.selection import select
from figspec.data.recording import Recording
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import RasterPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

COLUMNS = ("unit", "level", "trial", "row", "time_ms")


def compute(rec: Recording, panel: RasterPanel, levels: LevelSpec) -> pd.DataFrame:
    """The raster table of the panel's unit, or of each of its ``units`` in turn: spikes (see
    :func:`unit_raster`), or density cells when the panel is drawn as a density image (see
    :func:`unit_density`)."""
    each = unit_density if panel.draw_as == "density" else unit_raster
    return pd.concat([each(rec, u, panel) for u in panel.unit_names()], ignore_index=True)


MM_PER_INCH = 25.4
DECORATION = 0.8       # common practice: about a fifth of a panel's box goes to labels, titles and gaps


def fit_page(rec: Recording, panel: RasterPanel, box: tuple[float, float, int, float]) -> RasterPanel:
    """Decide how the raster is drawn on the page: ``box`` is (width mm, height mm, png_dpi,
    the style's tick height as a fraction of a line). With ``draw_as = "auto"``, a raster whose
    ticks would be thinner than one pixel at png_dpi is drawn as a density image, with one cell
    per device pixel (about) unless ``density_bins`` says otherwise."""
    if panel.draw_as == "ticks" or panel.trials_shown is not None:
        return panel.model_copy(update={"draw_as": "ticks"})
    width_mm, height_mm, dpi, tick_height = box
    unit = rec.units.index(panel.unit_names()[0])
    level = rec.pair_level()[rec.pair_unit == unit]
    if panel.levels is not None:
        level = level[np.isin(level, panel.levels)]
    per_level = np.unique(level, return_counts=True)[1] if level.size else np.array([1])
    groups = len(panel.units) if panel.repeat == "unit" else per_level.size
    columns = panel.arrange == "columns"
    axes_w = width_mm * DECORATION / (groups if columns else 1)
    axes_h = height_mm * DECORATION / (1 if columns else groups)
    line_px = axes_h / MM_PER_INCH * dpi / max(int(per_level.max()), 1)
    dense = panel.draw_as == "density" or line_px * tick_height < 1.0
    if not dense:
        return panel.model_copy(update={"draw_as": "ticks"})
    bins = panel.density_bins or (int(np.clip(round(axes_w / MM_PER_INCH * dpi), 20, 2000)),
                                  int(np.clip(round(axes_h / MM_PER_INCH * dpi), 1, 2000)))
    return panel.model_copy(update={"draw_as": "density", "density_bins": bins})


def shown_rows(sel, panel: RasterPanel) -> tuple[np.ndarray, np.ndarray]:
    """(mask of the selection's trials that are drawn, their line numbers): every trial, or a
    random subset of ``trials_shown`` per level drawn from a generator seeded by the panel's
    seed, kept in presentation order and numbered again from 0."""
    keep = np.ones(len(sel.trials), dtype=bool)
    if panel.trials_shown is None:
        return keep, sel.trials["row"]
    rng = np.random.default_rng(panel.seed)
    order = np.lexsort((rng.random(len(sel.trials)), sel.trial_level))      # a random order within each level
    rank = np.empty(len(sel.trials), dtype=np.int64)
    starts = np.r_[0, np.cumsum(sel.n_trials)[:-1]]
    rank[order] = np.arange(len(sel.trials)) - np.repeat(starts, sel.n_trials)
    keep = rank < panel.trials_shown
    rows = np.cumsum(keep) - 1 - np.repeat(np.r_[0, np.cumsum(np.bincount(sel.trial_level[keep],
                                                                         minlength=sel.levels.size))[:-1]],
                                           sel.n_trials)
    return keep, rows


def unit_raster(rec: Recording, unit: str, panel: RasterPanel) -> pd.DataFrame:
    """One row per spike in ``panel.window_ms``, plus one row per trial without a spike.

    Columns
    -------
    unit : unit name.
    level : stimulus level (the spec's level unit).
    trial : trial id from the data.
    row : 0-based line of the trial within its level, in presentation order.
    n_trials : trials presented at the level (lines drawn).
    time_ms : spike time from stimulus onset (ms); empty (NaN) for a trial with no spike in
        the window, so the trial is still counted and drawn as an empty line.
    """
    sel = select(rec, unit, panel.window_ms, panel.levels)
    keep, rows = shown_rows(sel, panel)
    has_spike = np.zeros(len(sel.trials), dtype=bool)
    has_spike[sel.spike_trial] = True
    spiking = keep[sel.spike_trial]
    idx = np.concatenate([sel.spike_trial[spiking], np.flatnonzero(~has_spike & keep)])
    times = np.concatenate([sel.time_ms[spiking], np.full(int((~has_spike & keep).sum()), np.nan)])
    order = np.lexsort((times, idx))   # NaN sorts last; empty trials have only NaN
    idx, times = idx[order], times[order]
    t = sel.trials
    table = pd.DataFrame({"unit": unit, "level": t["level"][idx],
                          "trial": t["trial"][idx], "row": rows[idx],
                          "n_trials": sel.n_trials[sel.trial_level[idx]], "time_ms": times})
    if panel.trials_shown is not None:
        table.insert(5, "n_shown", np.minimum(table["n_trials"].to_numpy(), panel.trials_shown))
    return table


def unit_density(rec: Recording, unit: str, panel: RasterPanel) -> pd.DataFrame:
    """Spike counts per cell of a grid over each level's trials (lines, in presentation order)
    and time, ``density_bins = (time bins, trial groups)``: the numbers a density raster draws.
    Only cells holding spikes are listed, plus one empty cell for a level without any.

    Columns
    -------
    unit, level, n_trials (trials presented at the level), row_start, row_stop (the cell's
    trial lines, [start, stop)), bin_start_ms, bin_stop_ms (its time span), count (spikes).
    """
    sel = select(rec, unit, panel.window_ms, panel.levels)
    n_time, n_groups = panel.density_bins
    lo, hi = sel.to_ticks(panel.window_ms)
    edges_t = lo + (hi - lo) * np.arange(n_time + 1) // n_time                  # whole ticks
    t_bin = np.searchsorted(edges_t, sel.ticks, side="right") - 1
    rows = sel.trials["row"]
    n_level = sel.n_trials[sel.trial_level]
    groups = np.minimum(n_groups, n_level)                                       # no cell thinner than a trial
    group_of_trial = rows * groups // n_level
    g = group_of_trial[sel.spike_trial]
    level = sel.trial_level[sel.spike_trial]
    cell = (level * n_groups + g) * n_time + t_bin
    counts = np.bincount(cell, minlength=sel.levels.size * n_groups * n_time)
    full = np.flatnonzero(counts)
    empty_levels = np.setdiff1d(np.arange(sel.levels.size), full // (n_groups * n_time))
    cells = np.concatenate([full, empty_levels * n_groups * n_time])
    li, rest = np.divmod(cells, n_groups * n_time)
    gi, ti = np.divmod(rest, n_time)
    n, k = sel.n_trials[li], np.minimum(n_groups, sel.n_trials[li])
    row_start = -(-gi * n // k)                                                  # first line of group gi
    row_stop = -(-(gi + 1) * n // k)
    ms = 1.0 / sel.ticks_per_ms
    return pd.DataFrame({"unit": unit, "level": sel.levels[li], "n_trials": n, "row_start": row_start,
                         "row_stop": row_stop, "bin_start_ms": edges_t[ti] * ms, "bin_stop_ms": edges_t[ti + 1] * ms,
                         "count": counts[cells]})


def legend(panel: RasterPanel, table: pd.DataFrame, about: About) -> str:
    window = f"time from stimulus onset, window {panel.window_ms[0]:g} to {panel.window_ms[1]:g} ms."
    if panel.draw_as == "density":
        n_time, n_groups = panel.density_bins
        cell_ms = (panel.window_ms[1] - panel.window_ms[0]) / n_time
        return (f"- *{about.label}*: Spike rasters drawn as density images (too many trials for one tick "
                f"per spike to show): grey level = spikes per cell of {cell_ms:.3g} ms x 1/{n_groups} of the "
                f"trials (in presentation order), one scale for every level; units {unit_text(table, about)}; "
                f"n = {count_text(table['n_trials'])} trials per level; {window}")
    shown = ""
    if panel.trials_shown is not None:
        shown = (f" {count_text(table['n_shown'])} of {count_text(table['n_trials'])} trials per level shown, a "
                 f"random subset (seed {panel.seed});")
    return (f"- *{about.label}*: Spike rasters (one line per trial presented, one tick per spike);{shown} "
            f"units {unit_text(table, about)}; n = {count_text(table['n_trials'])} trials per level; {window}")


def split(conditions, panel: RasterPanel, levels: LevelSpec) -> pd.DataFrame:
    """Each level's trials in blocks, one per condition in order (the first on top): a
    condition's lines follow the previous conditions' at that level, ``n_trials`` counts every
    condition's lines and ``n_condition`` the block's own."""
    parts = [compute(c.recording, panel, levels) for c in conditions]
    lines = ["row_start", "row_stop"] if panel.draw_as == "density" else ["row"]
    offset = None
    counts = [p.groupby(["unit", "level"])["n_trials"].first() for p in parts]
    total = counts[0]
    for n in counts[1:]:
        total = total.add(n, fill_value=0)
    for part, n in zip(parts, counts):
        key = pd.MultiIndex.from_frame(part[["unit", "level"]])
        shift = offset.reindex(key, fill_value=0).to_numpy() if offset is not None else 0
        for column in lines:
            part[column] = part[column].to_numpy() + shift
        part.insert(list(part.columns).index("n_trials") + 1, "n_condition", part["n_trials"].to_numpy())
        part["n_trials"] = total.reindex(key).to_numpy().astype(np.int64)
        offset = n if offset is None else offset.add(n, fill_value=0)
    table = stack(parts, [c.name for c in conditions])
    return table.sort_values(["unit", "level", lines[0]], kind="stable", ignore_index=True)
