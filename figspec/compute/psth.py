"""Peri-stimulus time histogram (binned rate) table, optionally smoothed, z-scored or averaged
across units."""

from __future__ import annotations

import warnings

import numpy as np

from figspec.compute.describe import About, count_text, shown_unit, trial_rows, unit_text
from figspec.compute.optimal import choose_bandwidth, choose_bin_width
from figspec.compute.selection import Selection, select
from figspec.compute.smoothing import causal_smooth, gaussian_smooth
from figspec.compute.trial_counts import level_bin_counts, level_spike_times
from figspec.data.recording import Recording
from figspec.errors import DataError, FigspecWarning, Problem
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PsthPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

RATE_UNITS = {"spikes_per_s": "spikes/s", "spikes_per_trial": "spikes/trial", "count": "spikes",
              "z_score": "SD from baseline"}
KERNEL_RESOLUTION_MS = 0.05


def bin_edges(window_ms: tuple[float, float], bin_ms: float) -> np.ndarray:
    """Edges of whole bins of ``bin_ms`` covering ``window_ms`` (ms)."""
    n = int(round((window_ms[1] - window_ms[0]) / bin_ms))
    return window_ms[0] + bin_ms * np.arange(n + 1)


def _selections(rec: Recording, panel: PsthPanel) -> list[Selection]:
    return [select(rec, u, panel.window_ms, panel.levels) for u in panel.unit_names()]


def resolve(rec: Recording, panel: PsthPanel, levels: LevelSpec) -> PsthPanel:
    """The panel with ``"auto"`` bin and kernel widths replaced by the widths chosen from the
    data, so every output shows the value used."""
    if panel.bin_ms != "auto" and panel.kernel_ms != "auto":
        return panel
    bin_ms, kernel_ms = resolve_widths(_selections(rec, panel), panel)
    return panel.model_copy(update={"bin_ms": bin_ms, "kernel_ms": kernel_ms})


def resolve_widths(sels: list[Selection], panel: PsthPanel) -> tuple[float, float | None]:
    """The bin width and kernel width (ms) to use, choosing 'auto' ones from the units' data."""
    bin_ms = panel.bin_ms
    groups = [g for sel in sels for g in level_spike_times(sel)]
    if bin_ms == "auto":
        choice = choose_bin_width(groups, panel.window_ms, panel.bin_search_ms)
        if not choice.interior:
            raise DataError(Problem(
                "'auto' found no minimum of the Shimazaki & Shinomoto (2007) cost inside bin_search_ms "
                f"{list(panel.bin_search_ms)} (lowest cost at its edge, {choice.best:.3g} ms): usually too "
                "few trials or spikes; give bin_ms a number or widen bin_search_ms", ("bin_ms",), "'auto'"))
        bin_ms = choice.best
    kernel = panel.kernel_ms
    if kernel == "auto":
        length = panel.window_ms[1] - panel.window_ms[0]
        choice = choose_bandwidth(groups, (max(KERNEL_RESOLUTION_MS * 4, bin_ms / 4), length / 4),
                                  KERNEL_RESOLUTION_MS)
        if not choice.interior:
            raise DataError(Problem(
                "'auto' found no minimum of the Shimazaki & Shinomoto (2010) kernel cost between "
                f"{choice.candidates[0]:.3g} and {choice.candidates[-1]:.3g} ms: usually too few trials "
                "or spikes; give kernel_ms a number", ("kernel_ms",), "'auto'"))
        kernel = choice.best
    return float(bin_ms), kernel


def unit_rates(sel: Selection, unit: str, panel: PsthPanel, bin_ms: float, kernel_ms: float | None) -> pd.DataFrame:
    """One unit's PSTH table (see :func:`compute`) from its selected trials and spikes."""
    edges = bin_edges(panel.window_ms, bin_ms)
    n_bins = edges.size - 1
    levels, n_trials, counts = sel.levels, sel.n_trials, level_bin_counts(sel, edges)
    per_trial = counts / n_trials[:, None]
    if panel.measure == "count":
        rate = counts.astype(float)
    elif panel.measure == "spikes_per_trial":
        rate = per_trial
    else:
        rate = per_trial / (bin_ms * 1e-3)
    if panel.smooth == "gaussian":
        rate = gaussian_smooth(rate, kernel_ms / bin_ms)
    elif panel.smooth == "causal":
        rate = causal_smooth(rate, kernel_ms / bin_ms)
    if panel.measure == "z_score":
        rate = _z_score(rate, edges, panel, unit)
    if panel.normalise != "none":
        rate = _normalised(rate, edges, panel, unit)
    return pd.DataFrame({"unit": unit, "level": np.repeat(levels, n_bins),
                         "bin_start_ms": np.tile(edges[:-1], levels.size),
                         "bin_stop_ms": np.tile(edges[1:], levels.size),
                         "n_trials": np.repeat(n_trials, n_bins), "count": counts.ravel(),
                         "rate": rate.ravel(), "rate_unit": rate_unit(panel)})


NORMALISED = {"peak": "x unit's peak", "baseline": "x unit's baseline"}


def rate_unit(panel: PsthPanel) -> str:
    """What a rate value is in: the measure's unit, or a multiple of the unit's own peak or
    baseline rate when the panel normalises."""
    return NORMALISED[panel.normalise] if panel.normalise != "none" else RATE_UNITS[panel.measure]


def _normalised(rate: np.ndarray, edges: np.ndarray, panel: PsthPanel, unit: str) -> np.ndarray:
    """A unit's rate divided by its own peak (the highest bin at any level shown) or its own
    baseline (the mean over every level's bins wholly before onset, or in ``baseline_ms``), so
    units of different rates can be averaged in a population (common practice)."""
    if panel.normalise == "peak":
        divisor = float(np.nanmax(rate)) if rate.size else 0.0
    else:
        start, stop = panel.baseline_ms or (panel.window_ms[0], 0.0)
        base = (edges[:-1] >= start - 1e-9) & (edges[1:] <= stop + 1e-9)
        divisor = float(rate[:, base].mean()) if base.any() else 0.0
    if not divisor > 0:
        warnings.warn(f"unit {unit}: its {panel.normalise} rate is 0, so its normalised rate is undefined (left "
                      "empty)", FigspecWarning, stacklevel=3)
        return np.full_like(rate, np.nan, dtype=float)
    return rate / divisor


def _z_score(rate: np.ndarray, edges: np.ndarray, panel: PsthPanel, unit: str) -> np.ndarray:
    """(rate - baseline mean) / baseline SD (ddof = 1) per level, over the bins that lie wholly
    inside the baseline (``baseline_ms``, else every bin before onset)."""
    start, stop = panel.baseline_ms or (panel.window_ms[0], 0.0)
    base = (edges[:-1] >= start - 1e-9) & (edges[1:] <= stop + 1e-9)
    if base.sum() < 2:
        raise DataError(Problem("z-scores need at least two whole bins in the baseline", ("baseline_ms",)))
    mean = rate[:, base].mean(axis=1, keepdims=True)
    sd = rate[:, base].std(axis=1, ddof=1, keepdims=True)
    if np.any(sd == 0):
        warnings.warn(f"unit {unit}: the baseline rate does not vary at some levels, so their z-scores "
                      "are undefined (left empty)", FigspecWarning, stacklevel=3)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(sd > 0, (rate - mean) / np.where(sd > 0, sd, 1.0), np.nan)


def compute(rec: Recording, panel: PsthPanel, levels: LevelSpec) -> pd.DataFrame:
    """Spike counts per level and bin, and the rate in the panel's measure.

    The rate divides by the number of trials *presented* at the level (from the trial table),
    not by the trials that happen to contain a spike: count / (n_trials x bin width) for
    ``spikes_per_s`` (common practice), count / n_trials for ``spikes_per_trial``, the raw
    summed count for ``count``; ``z_score`` is the spikes/s rate less its baseline mean, over
    its baseline SD. Smoothing (Gaussian or causal exponential) applies to the rate before any
    z-score. Bins are half-open, ``[start, stop)``.

    Columns
    -------
    unit, level : as in the raster table (``unit`` is "mean of ..." for a population).
    bin_start_ms, bin_stop_ms : bin edges from stimulus onset (ms).
    n_trials : trials presented at the level (summed over units for a population).
    count : spikes in the bin summed over those trials (and units).
    rate : the measure named in ``rate_unit`` (the mean across units for a population).
    rate_unit : ``spikes/s``, ``spikes/trial`` (per bin), ``spikes`` (per bin, summed) or
        ``SD from baseline``.
    rate_sem, n_units : population only: SEM across units (ddof = 1) and the number of units.
    """
    units = panel.unit_names()
    if panel.bin_ms == "auto" or panel.kernel_ms == "auto":
        raise ValueError("resolve the panel's automatic widths first (psth.resolve)")
    frames = [unit_rates(sel, u, panel, float(panel.bin_ms), panel.kernel_ms)
              for sel, u in zip(_selections(rec, panel), units)]
    if len(frames) == 1 or panel.repeat == "unit":
        return pd.concat(frames, ignore_index=True)
    both = pd.concat(frames, ignore_index=True)
    keys = ["level", "bin_start_ms", "bin_stop_ms"]
    grouped = both.groupby(keys, sort=True)
    out = grouped.agg(n_trials=("n_trials", "sum"), count=("count", "sum"), rate=("rate", "mean"),
                      rate_sem=("rate", lambda r: r.std(ddof=1) / np.sqrt(r.count())),
                      n_units=("rate", "count")).reset_index()
    out.insert(0, "unit", "mean of " + ", ".join(units))
    out["rate_unit"] = frames[0]["rate_unit"].iloc[0]
    return out[["unit", *keys, "n_trials", "count", "rate", "rate_unit", "rate_sem", "n_units"]]


def notes(panel: PsthPanel) -> list[str]:
    """What ``figspec check`` points out about the panel."""
    if not panel.lock_y and panel.arrange != "overlay":
        return ["lock_y = false, so its rows do not share one y scale: compare heights only within a row"]
    return []


def statistics(panel: PsthPanel, table: pd.DataFrame) -> list[list]:
    """Trials presented per unit and level (summed over units for a population)."""
    return trial_rows(panel, table)


def legend(panel: PsthPanel, table: pd.DataFrame, about: About) -> str:
    """The panel's legend sentence: bins, measure, smoothing (with the width used and how it
    was chosen), units and trials."""
    declared = about.declared
    auto_bin = " (chosen by the Shimazaki & Shinomoto 2007 cost)" if declared.bin_ms == "auto" else ""
    text = (f"Firing rate in {float(panel.bin_ms):g}-ms bins{auto_bin} ({table['rate_unit'].iloc[0]}), "
            "averaged over all trials presented")
    if panel.smooth != "none":
        how = " chosen by the Shimazaki & Shinomoto 2010 cost" if declared.kernel_ms == "auto" else ""
        width = "SD" if panel.smooth == "gaussian" else "time constant"
        text += f", smoothed with a {panel.smooth} kernel ({width} {panel.kernel_ms:.3g} ms{how})"
    units, pooled = unit_text(table, about), ""
    if panel.normalise != "none":
        text += (f"; each unit's rate divided by its own {panel.normalise} rate ("
                 + ("its highest bin at any level shown" if panel.normalise == "peak" else
                    "its mean over the baseline bins of every level") + ")")
    if "rate_sem" in table:
        n_units = int(table["n_units"].max())
        text += f"; line and band: mean ± SEM across {n_units} units"
        units, pooled = ", ".join(shown_unit(u, about) for u in panel.unit_names()), f" in all, over {n_units} units"
    return (f"- *{about.label}*: {text}; units {units}; n = {count_text(table['n_trials'])} trials per "
            f"level{pooled}; time from stimulus onset, window {panel.window_ms[0]:g} to {panel.window_ms[1]:g} ms.")
