"""``population_heatmap``: one row per unit, time on x, each unit's rate as colour.

Each unit's rate per bin is its spike count over the trials presented at each level, per second,
averaged over the panel's levels with equal weight per level. The colour is that rate z-scored
against the unit's own baseline (mean and SD, ddof = 1, across the bins wholly inside the
baseline window) or divided by the unit's own peak (its highest bin): common practice for
population displays, since units differ in rate by orders of magnitude and raw rates would
show only the busiest. Rows are sorted by a per-unit quantity, earliest or smallest on top.
"""

from __future__ import annotations

import numpy as np

from figspec.compute.describe import About, shown_unit, trial_rows, window_text
from figspec.compute.psth import bin_edges
from figspec.compute.selection import select, spanning
from figspec.compute.trial_counts import first_spikes, level_bin_counts
from figspec.data.recording import Recording, natural_key
from figspec.errors import DataError, Problem
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PopulationHeatmapPanel

pd = deferred("pandas")

SORT_TEXT = {"latency": "median first-spike latency", "peak_time": "time of the rate's peak", "name": "name"}
SCALE_TEXT = {"z_score": "z-score against the unit's baseline", "peak": "fraction of the unit's peak rate"}


def baseline(panel: PopulationHeatmapPanel) -> tuple[float, float]:
    return panel.baseline_ms or (panel.window_ms[0], 0.0)


def unit_row(rec: Recording, unit: str, panel: PopulationHeatmapPanel, edges: np.ndarray) -> dict:
    """One unit's mean rate per bin (spikes/s), its coloured value, its sort quantities and trials."""
    sel = select(rec, unit, spanning(panel.window_ms, panel.response_ms), panel.levels)
    seconds = np.diff(edges) / 1000.0
    per_level = level_bin_counts(sel, edges) / sel.n_trials[:, None] / seconds[None, :]
    rate = per_level.mean(axis=0) if per_level.size else np.full(edges.size - 1, np.nan)
    note = ""
    if panel.scale == "z_score":
        start, stop = baseline(panel)
        base = (edges[:-1] >= start - 1e-9) & (edges[1:] <= stop + 1e-9)
        mean, sd = rate[base].mean(), rate[base].std(ddof=1)
        value = (rate - mean) / sd if sd > 0 else np.full_like(rate, np.nan)
        note = "" if sd > 0 else "baseline rate does not vary: z-score undefined"
    else:
        top = float(np.nanmax(rate)) if rate.size else 0.0
        value = rate / top if top > 0 else np.full_like(rate, np.nan)
        note = "" if top > 0 else "no spike in the window: fraction of peak undefined"
    first = first_spikes(sel, panel.response_ms)
    latency = float(np.nanmedian(first)) if np.isfinite(first).any() else np.nan
    lo, hi = panel.response_ms
    inside = (edges[:-1] >= lo - 1e-9) & (edges[1:] <= hi + 1e-9)
    peak_time = float(edges[:-1][inside][np.nanargmax(rate[inside])]) if inside.any() and np.nansum(rate[inside]) > 0 \
        else np.nan
    return {"rate": rate, "value": value, "latency": latency, "peak_time": peak_time,
            "n_trials": int(sel.n_trials.sum()), "levels": ", ".join(f"{v:g}" for v in sel.levels), "note": note,
            "per_level": (sel.levels, sel.n_trials)}


def fitted_keys(rec: Recording, units: list[str], panel: PopulationHeatmapPanel,
                levels: LevelSpec) -> dict[str, tuple[float, str]]:
    """Each unit's Naka-Rushton parameter (and its fit status), fitted exactly as a level_response
    panel fits the unit's response in ``response_ms`` (rate, baseline not subtracted)."""
    import warnings

    from figspec.compute import level_response
    from figspec.errors import FigspecWarning
    from figspec.spec.panels import LevelResponsePanel

    baseline = panel.baseline_ms or (panel.window_ms[0], 0.0)
    analysis = LevelResponsePanel.model_validate({"name": panel.name, "kind": "level_response", "units": units,
                                                  "levels": panel.levels, "response_ms": panel.response_ms,
                                                  "baseline_ms": baseline, "fit": "naka_rushton", "test": "none"})
    with warnings.catch_warnings():                  # every unit's fit status is in the matrix's note
        warnings.simplefilter("ignore", FigspecWarning)
        params = level_response.compute(rec, analysis, levels)["params"]
    out = {}
    for unit in units:
        mine = params[params["unit"] == unit].set_index("quantity")
        status = str(mine.loc["status", "note"]).split(":")[0] if "status" in mine.index else "failed"
        value = float(mine.loc[panel.sort_parameter, "value"]) if panel.sort_parameter in mine.index else np.nan
        out[unit] = (value if status != "failed" else np.nan, status)
    return out


def sort_keys(rec: Recording, units: list[str], rows: dict, panel: PopulationHeatmapPanel,
              levels: LevelSpec | None = None) -> dict[str, float | str]:
    if panel.sort_by in ("latency", "peak_time"):
        return {u: rows[u][panel.sort_by] for u in units}
    if panel.sort_by == "name":
        return {u: u for u in units}
    if panel.sort_by == "fit":
        fitted = fitted_keys(rec, units, panel, levels)
        for unit, (_, status) in fitted.items():
            if status != "ok" and unit in rows:
                rows[unit]["note"] = "; ".join(filter(None, [rows[unit]["note"], f"Naka-Rushton fit {status}"]))
        return {u: fitted[u][0] for u in units}
    table = rec.unit_properties or {}
    column = table.get(panel.sort_column)
    if column is None:
        raise DataError(Problem(f"no per-unit table column {panel.sort_column!r} to sort by (columns: "
                                f"{', '.join(table) or 'no unit_table in the source'})", ("sort_column",)))
    missing = [u for u in units if u.split("/")[-1] not in column]
    if len(missing) == len(units):
        raise DataError(Problem("no unit of the panel is in the per-unit table", ("sort_column",),
                                ", ".join(missing[:3])))
    return {u: column.get(u.split("/")[-1], np.nan) for u in units}


def order(keys: dict) -> list[str]:
    """Units by key, smallest first; units whose key is missing (NaN) last, by name."""
    def rank(unit):
        key = keys[unit]
        if isinstance(key, str):
            return (0, natural_key(key), natural_key(unit))
        missing = key is None or not np.isfinite(key)
        return (1 if missing else 0, (0.0 if missing else float(key),), natural_key(unit))
    return sorted(keys, key=rank)


def compute(rec: Recording, panel: PopulationHeatmapPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``matrix``: the picture in tidy form, one row per unit and bin; ``trials``: the trials
    presented per unit and level (``unit``, ``level``, ``n_trials``).

    Matrix columns: ``unit``, ``rank`` (0: top row), ``sort_by``, ``sort_key`` (the quantity sorted by; NaN
    when the unit has none, e.g. no first spike: those rows come last), ``bin_start_ms``,
    ``bin_stop_ms``, ``rate`` (spikes/s, mean over levels), ``value`` (the colour: z-score, or
    fraction of the unit's peak), ``scale``, ``n_trials_all`` (trials presented, all levels shown),
    ``levels`` (the levels averaged), ``latency_ms`` and ``peak_time_ms`` (each unit's), ``note``."""
    units = panel.unit_names() or list(rec.units)
    edges = bin_edges(panel.window_ms, panel.bin_ms)
    rows = {u: unit_row(rec, u, panel, edges) for u in units}
    keys = sort_keys(rec, units, rows, panel, levels)
    frames = []
    for rank, unit in enumerate(order(keys)):
        row = rows[unit]
        frames.append(pd.DataFrame({
            "unit": unit, "rank": rank, "sort_by": panel.sort_column if panel.sort_by == "table" else panel.sort_by,
            "sort_key": keys[unit], "bin_start_ms": edges[:-1], "bin_stop_ms": edges[1:], "rate": row["rate"],
            "value": row["value"], "scale": panel.scale, "n_trials_all": row["n_trials"], "levels": row["levels"],
            "latency_ms": row["latency"], "peak_time_ms": row["peak_time"], "note": row["note"]}))
    trials = pd.DataFrame([{"unit": u, "level": float(v), "n_trials": int(n)} for u in units
                           for v, n in zip(*rows[u]["per_level"])])
    return {"matrix": pd.concat(frames, ignore_index=True), "trials": trials}


SATURATE_PERCENTILE = 98      # common practice: a few extreme bins should not wash out every other unit


def colour_limits(panel: PopulationHeatmapPanel, values: np.ndarray) -> tuple[float, float]:
    """The colour scale's ends: 0 to 1 for fractions of the peak; for z-scores, -L to L with L the
    spec's ``colour_limit`` or the 98th percentile of |z| (bins beyond it show the end colour,
    and the legend says how many)."""
    if panel.scale == "peak":
        return 0.0, float(panel.colour_limit or 1.0)
    finite = np.abs(values[np.isfinite(values)])
    top = float(panel.colour_limit or (np.percentile(finite, SATURATE_PERCENTILE) if finite.size else 1.0)) or 1.0
    return -top, top


def check(rec: Recording, panel: PopulationHeatmapPanel, levels: LevelSpec) -> list[Problem]:
    units = panel.unit_names() or list(rec.units)
    if len(set(units)) < 2:
        return [Problem(f"a population heatmap needs at least two different units; it has {len(set(units))}",
                        ("units",), ", ".join(dict.fromkeys(units)))]
    if len(set(units)) < len(units):
        return [Problem("a unit is named twice", ("units",), ", ".join(units))]
    if panel.sort_by == "table":                  # a sort key no unit has: said by check, before any drawing
        try:
            sort_keys(rec, units, {}, panel)
        except DataError as err:
            return err.problems
    return []


def statistics(panel: PopulationHeatmapPanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    first = tables["matrix"].drop_duplicates("unit")
    numeric = first["sort_key"].dtype.kind in "iuf"          # statistics values are numbers (a name is in the note)
    rows = [["population", panel.name, r.unit, None, f"sort_key ({r.sort_by})", r.sort_key if numeric else None,
             None, None, f"rank {r.rank}" + ("" if numeric else f" by {r.sort_key}") + (f"; {r.note}" if r.note else "")]
            for r in first.itertuples()]
    return rows + trial_rows(panel, {"trials": tables["trials"]})


def legend(panel: PopulationHeatmapPanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    table = tables["matrix"]
    first = table.drop_duplicates("unit")
    sort = f"{panel.sort_column} in the per-unit table" if panel.sort_by == "table" else (
        f"{panel.sort_parameter} of each unit's own Naka-Rushton fit to its rate" if panel.sort_by == "fit"
        else SORT_TEXT[panel.sort_by])
    where = f" in {window_text(panel.response_ms)}" if panel.sort_by in ("latency", "peak_time", "fit") else ""
    scale = (f"z-scored against each unit's own baseline ({window_text(baseline(panel))}; mean and SD across its "
             "bins)" if panel.scale == "z_score" else "divided by each unit's own peak rate")
    missing = int(first["sort_key"].isna().sum()) if first["sort_key"].dtype.kind == "f" else 0
    values = table["value"].to_numpy(dtype=float)
    low, high = colour_limits(panel, values)
    beyond = int(np.count_nonzero(np.isfinite(values) & ((values < low) | (values > high))))
    how = "the spec's colour_limit" if panel.colour_limit else f"the {SATURATE_PERCENTILE}th percentile of |z|"
    limit = (f"; colours run from {low:g} to {high:g}" if panel.scale == "peak" else
             f"; colours run from -{high:.3g} to {high:.3g} ({how})") + (
        f", {beyond} of {int(np.isfinite(values).sum())} bins beyond them show the end colours" if beyond else "")
    undefined = first[first["note"] != ""]
    return (f"- *{about.label}*: firing rate in {panel.bin_ms:g}-ms bins, averaged over the trials presented at "
            f"each level and then over levels {first['levels'].iloc[0]} (equal weight per level), {scale}; one row "
            f"per unit (n = {len(first)} units: {', '.join(shown_unit(u, about) for u in first['unit'])}), sorted by "
            f"{sort}{where}, smallest at the top"
            + (f"; {missing} units without one at the bottom" if missing else "")
            + (f"; {len(undefined)} units left blank ({undefined['note'].iloc[0]})" if len(undefined) else "")
            + limit + f"; time from stimulus onset, window {window_text(panel.window_ms)}.")
