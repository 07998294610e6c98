"""``latency`` panels: response latency per level by first spike, threshold crossing of the
rate, or Poisson surprise, with an optional Pieron fit.

References: review of onset-latency estimators, Levakova, Tamborrino, Ditlevsen & Lansky 2015,
BioSystems 136:23-34; Poisson surprise, Legendy & Salcman 1985, J Neurophysiol 53:926-939.
"""

from __future__ import annotations

import numpy as np

from figspec.compute import level_checks
from figspec.compute.conditions import trial_tests
from figspec.compute.describe import (OFFSET_SENTENCE, About, count_text, shown_unit, unit_text, window_columns,
                                      window_text)
from figspec.compute.fit_tables import UnitPoints, empty_params, fit_rows, fit_sentence, fit_tables, linear_positive
from figspec.compute.resampling import generator, presentation_order
from figspec.compute.selection import select, spanning
from figspec.compute.stats import CORRECTION_SHORT, CORRECTION_TEXT, ZERO_TEXT, bootstrap_ci, corrected, signed_rank_p
from figspec.compute.trial_counts import counts_in, first_spikes, level_bin_counts
from figspec.data.recording import Recording
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

check = level_checks.check

COLUMNS = ("unit", "level", "n_trials", "n_no_spike", "latency_ms", "ci_low_ms", "ci_high_ms", "method", "note")


def _selection(rec: Recording, unit: str, panel: LatencyPanel):
    return select(rec, unit, spanning(panel.baseline_ms, panel.response_ms), panel.levels)


def first_spike_times(rec: Recording, unit: str, panel: LatencyPanel) -> dict[float, np.ndarray]:
    """Each level's first-spike time (ms; NaN without a spike) of every trial, in presentation order."""
    sel = _selection(rec, unit, panel)
    first = first_spikes(sel, panel.response_ms)
    out = {}
    for i, lv in enumerate(sel.levels):
        at = np.flatnonzero(sel.trial_level == i)
        out[float(lv)] = first[at[presentation_order(sel.trials["sequence"][at])]]
    return out


def first_spike_latency(rec: Recording, unit: str, panel: LatencyPanel,
                        times: dict[float, np.ndarray] | None = None) -> pd.DataFrame:
    """Median first-spike time per level in ``[response start, response stop)`` with a
    percentile bootstrap CI across trials. Trials with no spike there are counted in
    ``n_no_spike`` and left out of the median: they are not zero-latency trials."""
    rows = []
    for lv, level_times in (times or first_spike_times(rec, unit, panel)).items():
        valid = level_times[~np.isnan(level_times)]
        median = float(np.median(valid)) if valid.size else np.nan
        low, high = bootstrap_ci(valid, np.median, panel.confidence, panel.resamples, generator(panel.seed, unit, lv))
        note = "" if valid.size >= 2 else "fewer than two trials with a spike"
        rows.append((unit, lv, level_times.size, int(np.isnan(level_times).sum()), median, low, high, "first_spike",
                     note))
    return pd.DataFrame(rows, columns=list(COLUMNS))


def threshold_latency(rec: Recording, unit: str, panel: LatencyPanel) -> pd.DataFrame:
    """Onset as the start of the first bin in the response window that begins a run of
    ``threshold_bins`` consecutive bins above baseline mean + ``threshold_sd`` x baseline SD
    (ddof = 1) of the binned rate; baseline and response binned on one grid from
    ``baseline_ms`` start."""
    sel = _selection(rec, unit, panel)
    start, w = panel.baseline_ms[0], panel.bin_ms
    n = int(np.ceil((panel.response_ms[1] - start) / w - 1e-9))
    edges = start + w * np.arange(n + 1)
    levels, n_trials, counts = sel.levels, sel.n_trials, level_bin_counts(sel, edges)
    rate = counts / n_trials[:, None] / (w * 1e-3)
    base = edges[1:] <= panel.baseline_ms[1] + 1e-9
    resp = edges[:-1] >= panel.response_ms[0] - 1e-9
    m = panel.threshold_bins
    rows = []
    for i, lv in enumerate(levels):
        mu, sd = rate[i, base].mean(), rate[i, base].std(ddof=1)
        above = (rate[i] > mu + panel.threshold_sd * sd) & resp
        run = np.convolve(above.astype(int), np.ones(m, int), mode="full")[m - 1:]  # run[j]: bins j..j+m-1
        hits = np.flatnonzero(run[: above.size] >= m)
        latency = float(edges[hits[0]]) if hits.size else np.nan
        note = "" if hits.size else f"no run of {m} bins above mean + {panel.threshold_sd:g} SD"
        if sd == 0:
            note = (note + "; " if note else "") + "baseline SD is 0"
        rows.append((unit, lv, int(n_trials[i]), np.nan, latency, np.nan, np.nan, "threshold", note))
    return pd.DataFrame(rows, columns=list(COLUMNS))


def surprise_latency(rec: Recording, unit: str, panel: LatencyPanel) -> pd.DataFrame:
    """Onset by Poisson surprise: with background rate r (spikes/s per trial, from the
    baseline) and the level's spikes pooled over n trials, the k-th spike after response start,
    at t_k, has surprise S = -log10 P(N >= k), N ~ Poisson(r n t_k) (P = poisson.sf(k - 1, r n
    t_k)). The latency is the first t_k whose S reaches ``surprise``: the time at which the
    response becomes improbable as background. Spikes count in ``[start, stop)`` of the
    response window; a spike exactly at its start spans no time and is given S = 0."""
    from scipy.stats import poisson

    sel = _selection(rec, unit, panel)
    base = counts_in(sel, panel.baseline_ms)
    base_s = (panel.baseline_ms[1] - panel.baseline_ms[0]) * 1e-3
    inside = sel.inside(panel.response_ms)
    rows = []
    for i, lv in enumerate(sel.levels):
        at = sel.trial_level == i
        n = int(sel.n_trials[i])
        r = base[at].sum() / (n * base_s)
        times = np.sort(sel.time_ms[inside & at[sel.spike_trial]]) - panel.response_ms[0]
        k = np.arange(1, times.size + 1)
        with np.errstate(divide="ignore"):
            s = np.where(times > 0, -np.log10(poisson.sf(k - 1, r * n * times * 1e-3)), 0.0)
        hits = np.flatnonzero(s >= panel.surprise)
        latency = float(times[hits[0]] + panel.response_ms[0]) if hits.size else np.nan
        note = "" if hits.size else f"surprise never reaches {panel.surprise:g}"
        if r == 0:
            note = (note + "; " if note else "") + "no baseline spikes"
        rows.append((unit, lv, n, np.nan, latency, np.nan, np.nan, "surprise", note))
    return pd.DataFrame(rows, columns=list(COLUMNS))


METHODS = {"first_spike": first_spike_latency, "threshold": threshold_latency, "surprise": surprise_latency}


def latency_points(rec: Recording, panel: LatencyPanel, first_times: dict | None = None) -> pd.DataFrame:
    """Latency per unit and level by the panel's method, with the per-level response test.

    Columns
    -------
    unit, level : as elsewhere.
    n_trials : trials presented.
    n_no_spike : (first_spike) trials with no spike in the response window; empty otherwise.
    latency_ms : median first spike, or onset by threshold crossing or surprise (ms from onset).
    ci_low_ms, ci_high_ms : (first_spike) percentile bootstrap CI of the median.
    method : which estimator.
    note : why a value is missing, or a caveat.
    p_corrected : one-sided Wilcoxon signed-rank test of the response rate against the baseline
        rate per trial, corrected across the unit's levels as ``correction`` says (as the
        level_response panel tests).
    responsive : p_corrected < alpha: the level drives a response, so its latency means something.
    in_fit : the level's latency enters the Pieron fit (responsive unless ``fit_levels = "all"``,
        a latency, and a level whose linear quantity is > 0).
    """
    frames = []
    for unit in panel.unit_names():
        if first_times is not None:          # first-spike times already taken (see compute)
            frame = first_spike_latency(rec, unit, panel, first_times[unit])
        else:
            frame = METHODS[panel.method](rec, unit, panel)
        frame["p_corrected"] = _response_test(rec, unit, panel)
        frames.append(frame)
    out = pd.concat(frames, ignore_index=True)
    out["correction"] = CORRECTION_SHORT[panel.correction]
    out["responsive"] = out["p_corrected"] < panel.alpha
    out = out.assign(**window_columns(panel))
    out["in_fit"] = out["latency_ms"].notna() & (out["responsive"] | (panel.fit_levels == "all"))
    return out


def _response_test(rec: Recording, unit: str, panel: LatencyPanel) -> np.ndarray:
    """Corrected p of response rate > baseline rate per trial, per level (rates, so the
    windows may differ in length)."""
    sel = _selection(rec, unit, panel)
    evoked = counts_in(sel, panel.response_ms) / ((panel.response_ms[1] - panel.response_ms[0]) * 1e-3)
    base = counts_in(sel, panel.baseline_ms) / ((panel.baseline_ms[1] - panel.baseline_ms[0]) * 1e-3)
    p = [signed_rank_p(evoked[sel.trial_level == i], base[sel.trial_level == i], panel.zero_differences)[1]
         for i in range(sel.levels.size)]
    return corrected(np.asarray(p, dtype=float), panel.correction)


def compute(rec: Recording, panel: LatencyPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`latency_points`), ``fit`` (unit, level, latency_ms on a fine grid,
    status) and ``params`` (Pieron status with reasons, parameters with bootstrap intervals,
    goodness of fit). Levels not in the fit are named in the points' ``note``."""
    first_times = ({unit: first_spike_times(rec, unit, panel) for unit in panel.unit_names()}
                   if panel.method == "first_spike" else None)
    points = latency_points(rec, panel, first_times)
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "latency_ms", "status"])
    if panel.fit != "none":
        scale = levels.scale or "linear"
        positive = linear_positive(points["level"].to_numpy(dtype=float), scale)
        points.loc[~positive & points["in_fit"], "note"] = _joined(points.loc[~positive & points["in_fit"], "note"],
                                                                   "left out of the Pieron fit: level <= 0 on its linear scale")
        points["in_fit"] &= positive
        left_out = points["latency_ms"].notna() & ~points["responsive"] & (panel.fit_levels == "responsive")
        points.loc[left_out, "note"] = _joined(points.loc[left_out, "note"], "left out of the fit: no significant response")
        by_unit = {}
        for unit, rows in points.groupby("unit", sort=False):
            rows = rows[rows["in_fit"]]
            samples = first_times[unit] if first_times is not None else None
            values = [samples[float(lv)][~np.isnan(samples[float(lv)])] for lv in rows["level"]] if samples else None
            by_unit[unit] = UnitPoints(rows["level"].to_numpy(dtype=float), values,
                                       rows["latency_ms"].to_numpy(dtype=float), np.median if samples else None)
        curve, params = fit_tables(by_unit, "latency_ms", "pieron", levels, panel, "ms", "unweighted")
    table = pd.DataFrame(params, columns=empty_params().columns) if params else empty_params()
    return {"points": points, "fit": curve, "params": table}


def _joined(notes: pd.Series, text: str) -> pd.Series:
    return notes.where(notes == "", notes + "; ") .fillna("") + text


def statistics(panel: LatencyPanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    """Trials and latency per unit and level (with CI and trials without a spike), fit parameters."""
    rows = []
    for r in tables["points"].itertuples(index=False):
        note = f"{r.method}; no spike in {r.n_no_spike} trials" if pd.notna(r.n_no_spike) else r.method
        rows += [["trials", panel.name, r.unit, r.level, "n_trials", int(r.n_trials), None, None, ""],
                 ["latency", panel.name, r.unit, r.level, "latency_ms", r.latency_ms, r.ci_low_ms, r.ci_high_ms, note],
                 ["test", panel.name, r.unit, r.level, "p_corrected", r.p_corrected, None, None,
                  f"one-sided Wilcoxon signed-rank, response vs baseline rate per trial, n = {int(r.n_trials)} trials; "
                  f"{r.correction}; open marker when p >= {panel.alpha:g}"]]
    return rows + fit_rows(panel, tables["params"])


def legend(panel: LatencyPanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    points = tables["points"]
    text = (f"- *{about.label}*: {panel.method.replace('_', '-')} latency in "
            f"{panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms, n = {count_text(points['n_trials'])} trials "
            f"per level; units {unit_text(points, about)}.")
    if panel.method == "first_spike":
        no_spike = points.groupby("unit")["n_no_spike"].sum().astype(int)
        text += (f" Points: median over trials with a spike; error bars: {panel.confidence:.0%} percentile "
                 f"bootstrap CI ({panel.resamples} resamples); trials without a spike are not counted as "
                 f"zero latency (trials without a spike: "
                 f"{', '.join(f'{shown_unit(u, about)} {n}' for u, n in no_spike.items())}).")
    if points["unit"].nunique() > 1:
        text += f" {OFFSET_SENTENCE}"
    left_out = points[~points["in_fit"] & points["latency_ms"].notna()] if panel.fit != "none" else points.iloc[:0]
    text += (f" Open markers: levels without a significant response (one-sided Wilcoxon signed-rank test of the "
             f"rate in {window_text(panel.response_ms)} vs the baseline rate in {window_text(panel.baseline_ms)} per trial, "
             f"trials with equal rates {ZERO_TEXT[panel.zero_differences]}, {CORRECTION_TEXT[panel.correction]}, "
             f"p ≥ {panel.alpha:g}).")
    if len(left_out):
        text += f" {len(left_out)} unit-levels were left out of the fit (named in the source data)."
    if panel.fit != "none":
        text += fit_sentence(panel.fit, tables["params"], about, panel.confidence)
    return text


def compare(conditions, panel: LatencyPanel, levels: LevelSpec, tables) -> pd.DataFrame | None:
    """First-spike latencies of the trials with a spike, per unit and level, each condition
    against the first (two-sided Mann-Whitney U, Holm-corrected across the unit's levels). The
    threshold and surprise methods give one latency per level, not per trial: no test."""
    if panel.method != "first_spike":
        return None
    names = [c.name for c in conditions]
    frames = []
    for unit in panel.unit_names():
        values = {}
        for c in conditions:
            for lv, times in first_spike_times(c.recording, unit, panel).items():
                values[(c.name, float(lv))] = times[~np.isnan(times)]
        frames.append(trial_tests(values, unit, names, panel, "first-spike latency (trials with a spike)"))
    return pd.concat(frames, ignore_index=True)
