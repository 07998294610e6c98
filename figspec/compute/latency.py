"""``latency`` panels: response latency per level by first spike, threshold crossing of the
rate, or Poisson surprise, with an optional Pieron fit.

References: review of onset-latency estimators, Levakova, Tamborrino, Ditlevsen & Lansky 2015,
BioSystems 136:23-34; Poisson surprise, Legendy & Salcman 1985, J Neurophysiol 53:926-939.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from figspec.compute import level_checks
from figspec.compute.describe import About, count_text, unit_text
from figspec.compute.fit_tables import empty_params, fit_rows, fit_sentence, fit_tables
from figspec.compute.selection import select, spanning
from figspec.compute.stats import bootstrap_ci
from figspec.compute.trial_counts import counts_in, first_spikes, level_bin_counts
from figspec.data.recording import Recording
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel

check = level_checks.check

COLUMNS = ("unit", "level", "n_trials", "n_no_spike", "latency_ms", "ci_low_ms", "ci_high_ms", "method", "note")


def _selection(rec: Recording, unit: str, panel: LatencyPanel):
    return select(rec, unit, spanning(panel.baseline_ms, panel.response_ms), panel.levels)


def first_spike_latency(rec: Recording, unit: str, panel: LatencyPanel) -> pd.DataFrame:
    """Median first-spike time per level in ``[response start, response stop)`` with a
    percentile bootstrap CI across trials. Trials with no spike there are counted in
    ``n_no_spike`` and left out of the median: they are not zero-latency trials."""
    sel = _selection(rec, unit, panel)
    first = first_spikes(sel, panel.response_ms)
    rng = np.random.default_rng(panel.seed)
    rows = []
    for i, lv in enumerate(sel.levels):
        times = first[sel.trial_level == i]
        valid = times[~np.isnan(times)]
        median = float(np.median(valid)) if valid.size else np.nan
        low, high = bootstrap_ci(valid, np.median, panel.confidence, panel.resamples, rng)
        note = "" if valid.size >= 2 else "fewer than two trials with a spike"
        rows.append((unit, lv, times.size, int(np.isnan(times).sum()), median, low, high, "first_spike", note))
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


def latency_points(rec: Recording, panel: LatencyPanel) -> pd.DataFrame:
    """Latency per unit and level by the panel's method.

    Columns
    -------
    unit, level : as elsewhere.
    n_trials : trials presented.
    n_no_spike : (first_spike) trials with no spike in the response window; empty otherwise.
    latency_ms : median first spike, or onset by threshold crossing or surprise (ms from onset).
    ci_low_ms, ci_high_ms : (first_spike) percentile bootstrap CI of the median.
    method : which estimator.
    note : why a value is missing, or a caveat.
    """
    return pd.concat([METHODS[panel.method](rec, u, panel) for u in panel.unit_names()], ignore_index=True)


def compute(rec: Recording, panel: LatencyPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`latency_points`), ``fit`` (unit, level, latency_ms on a fine grid)
    and ``params`` (Pieron parameters with CIs, status and goodness of fit)."""
    from scipy.stats import norm

    points = latency_points(rec, panel)
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "latency_ms"])
    if panel.fit != "none":
        # the CI's half-width over the normal quantile stands in for the SD of each median
        sigma = (points["ci_high_ms"] - points["ci_low_ms"]) / 2 / norm.ppf(0.5 + panel.confidence / 2)
        curve, params = fit_tables(points, "latency_ms", sigma, "pieron", levels, panel.confidence, "ms")
    table = pd.DataFrame(params, columns=empty_params().columns) if params else empty_params()
    return {"points": points, "fit": curve, "params": table}


def statistics(panel: LatencyPanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    """Trials and latency per unit and level (with CI and trials without a spike), fit parameters."""
    rows = []
    for r in tables["points"].itertuples(index=False):
        note = f"{r.method}; no spike in {r.n_no_spike} trials" if pd.notna(r.n_no_spike) else r.method
        rows += [["trials", panel.name, r.unit, r.level, "n_trials", int(r.n_trials), None, None, ""],
                 ["latency", panel.name, r.unit, r.level, "latency_ms", r.latency_ms, r.ci_low_ms, r.ci_high_ms, note]]
    return rows + fit_rows(panel, tables["params"])


def legend(panel: LatencyPanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    points = tables["points"]
    text = (f"- *{about.label}*: {panel.method.replace('_', '-')} latency in "
            f"{panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms, n = {count_text(points['n_trials'])} trials "
            f"per level; units {unit_text(points)}.")
    if panel.method == "first_spike":
        text += (f" Points: median over trials with a spike; error bars: {panel.confidence:.0%} percentile "
                 f"bootstrap CI ({panel.resamples} resamples); trials without a spike are not counted as "
                 "zero latency.")
    if panel.fit != "none":
        text += fit_sentence(panel.fit, tables["params"], about.level_unit)
    return text
