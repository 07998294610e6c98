"""``level_response`` panels: evoked response per level (intensity-response), a per-level test
against baseline and an optional Naka-Rushton fit."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd

from figspec.compute import level_checks
from figspec.compute.describe import About, count_text, unit_text
from figspec.compute.fit_tables import empty_params, fit_rows, fit_sentence, fit_tables
from figspec.compute.selection import select, spanning
from figspec.compute.stats import bootstrap_ci, holm, sem
from figspec.compute.trial_counts import counts_in
from figspec.data.recording import Recording
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LevelResponsePanel

# the spec's names for how trials with equal evoked and baseline counts are treated, and
# scipy.stats.wilcoxon's: dropped (Wilcoxon 1945), kept in the ranking (Pratt 1959), or their
# ranks split between the signs
ZERO_DIFFERENCES = {"drop": "wilcox", "keep": "pratt", "split": "zsplit"}
ZERO_TEXT = {"drop": "dropped", "keep": "kept in the ranking (Pratt)", "split": "ranked and split between signs"}

check = level_checks.check


def per_trial_responses(rec: Recording, unit: str, panel: LevelResponsePanel):
    """(levels of the trials, evoked counts, baseline counts) for every trial presented."""
    sel = select(rec, unit, spanning(panel.response_ms, panel.baseline_ms), panel.levels)
    return sel.trials["level"].to_numpy(), counts_in(sel, panel.response_ms), counts_in(sel, panel.baseline_ms)


def signed_rank_p(evoked: np.ndarray, baseline: np.ndarray, zero_differences: str) -> tuple[float, float]:
    """One-sided Wilcoxon signed-rank test, evoked > baseline (scipy.stats.wilcoxon), zero
    differences treated as ``zero_differences`` says. Returns (statistic, p); NaNs when every
    difference is zero or fewer than two trials."""
    from scipy.stats import wilcoxon

    d = evoked.astype(float) - baseline
    if d.size < 2 or np.all(d == 0):
        return np.nan, np.nan
    zero_method = ZERO_DIFFERENCES[zero_differences]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")          # scipy notes ties and small samples; stated in docs
        result = wilcoxon(evoked, baseline, alternative="greater", zero_method=zero_method)
    return float(result.statistic), float(result.pvalue)


def response_points(rec: Recording, panel: LevelResponsePanel) -> pd.DataFrame:
    """Response per unit and level in the response window.

    The per-trial response is the count in ``response_ms`` (or count / window length in s for
    ``spikes_per_s``), less the same trial's baseline count over the equally long
    ``baseline_ms`` when ``subtract_baseline``. Every trial presented counts, with or without
    spikes.

    Columns
    -------
    unit, level, n_trials : as elsewhere.
    response : mean per-trial response (``response_unit``).
    error_low, error_high : mean - SEM and mean + SEM (``error`` = "sem", ddof = 1), or the
        percentile bootstrap CI of the mean.
    baseline : mean baseline response in the same unit.
    error_kind : what the error bounds are.
    statistic, p : one-sided Wilcoxon signed-rank test of evoked > baseline counts per trial
        (zero differences treated as ``zero_differences`` says), empty when all differences
        are zero.
    p_holm : p adjusted by Holm across the levels of the unit.
    significant : p_holm < alpha.
    """
    duration_s = (panel.response_ms[1] - panel.response_ms[0]) * 1e-3
    scale = 1.0 / duration_s if panel.measure == "spikes_per_s" else 1.0
    rng = np.random.default_rng(panel.seed)
    rows = []
    for unit in panel.unit_names():
        level, evoked, base = per_trial_responses(rec, unit, panel)
        unit_rows = []
        for lv in np.unique(level):
            e, b = evoked[level == lv], base[level == lv]
            values = (e - b if panel.subtract_baseline else e) * scale
            mean = float(values.mean())
            if panel.error == "sem":
                s = sem(values)
                low, high, kind = mean - s, mean + s, "mean +/- SEM"
            else:
                low, high = bootstrap_ci(values, np.mean, panel.confidence, panel.resamples, rng)
                kind = f"{panel.confidence:.0%} bootstrap CI of the mean"
            stat, p = signed_rank_p(e, b, panel.zero_differences) if panel.test == "wilcoxon" else (np.nan, np.nan)
            unit_rows.append([unit, lv, e.size, mean, low, high, float(b.mean() * scale), kind, stat, p])
        frame = pd.DataFrame(unit_rows, columns=["unit", "level", "n_trials", "response", "error_low",
                                                 "error_high", "baseline", "error_kind", "statistic", "p"])
        frame["p_holm"] = holm(frame["p"].to_numpy())
        frame["significant"] = frame["p_holm"] < panel.alpha
        rows.append(frame)
    out = pd.concat(rows, ignore_index=True)
    out["response_unit"] = "spikes/s" if panel.measure == "spikes_per_s" else "spikes"
    out["test"] = (f"Wilcoxon signed-rank, one-sided, zero differences {ZERO_TEXT[panel.zero_differences]}, Holm"
                   if panel.test == "wilcoxon" else "none")
    return out


def compute(rec: Recording, panel: LevelResponsePanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`response_points`), ``fit`` (unit, level, response on a fine grid,
    only for fits that worked) and ``params`` (long table: fit parameters with CIs, status,
    goodness of fit, derived levels, and the threshold by test: the lowest level whose
    Holm-corrected test is significant)."""
    points = response_points(rec, panel)
    value_unit = str(points["response_unit"].iloc[0])
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "response"])
    if panel.fit != "none":
        sigma = points["error_high"] - points["response"] if panel.error == "sem" else None
        curve, params = fit_tables(points, "response", sigma, panel.fit, levels, panel.confidence, value_unit)
    if panel.test != "none":
        for unit, rows in points.groupby("unit", sort=False):
            sig = rows.loc[rows["significant"], "level"]
            params.append([unit, "test", "threshold_by_test", float(sig.min()) if len(sig) else np.nan,
                           np.nan, np.nan, levels.unit,
                           "lowest level significant after Holm" if len(sig) else "no level significant"])
    table = pd.DataFrame(params, columns=empty_params().columns) if params else empty_params()
    return {"points": points, "fit": curve, "params": table}


def statistics(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    """Trials, per-level tests (statistic, p, Holm-adjusted p) and fit parameters."""
    rows = []
    for r in tables["points"].itertuples(index=False):
        rows.append(["trials", panel.name, r.unit, r.level, "n_trials", int(r.n_trials), None, None, ""])
        if pd.notna(r.p):
            note = f"{r.test}; significant={bool(r.significant)}"
            rows += [["test", panel.name, r.unit, r.level, name, value, None, None, note]
                     for name, value in (("statistic", r.statistic), ("p", r.p), ("p_holm", r.p_holm))]
    return rows + fit_rows(panel, tables["params"])


def legend(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    points = tables["points"]
    subtracted = ", baseline subtracted" if panel.subtract_baseline else ""
    text = (f"- *{about.label}*: response in {panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms after onset "
            f"({points['response_unit'].iloc[0]}{subtracted}), {points['error_kind'].iloc[0]}, "
            f"n = {count_text(points['n_trials'])} trials per level; units {unit_text(points)}.")
    if panel.test != "none":
        text += (f" One-sided Wilcoxon signed-rank test of evoked vs baseline counts "
                 f"({panel.baseline_ms[0]:g}–{panel.baseline_ms[1]:g} ms) per level, trials with equal counts "
                 f"{ZERO_TEXT[panel.zero_differences]}, Holm-corrected across levels within each unit; filled "
                 f"markers: p < {panel.alpha:g}.")
    if panel.fit != "none":
        text += fit_sentence(panel.fit, tables["params"], about.level_unit)
    return text
