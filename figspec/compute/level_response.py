"""``level_response`` panels: evoked response per level (intensity-response), a per-level test
against baseline and an optional Naka-Rushton fit."""

from __future__ import annotations

import numpy as np

from figspec.compute import level_checks
from figspec.compute.conditions import matched_rank_biserial, trial_tests
from figspec.compute.describe import OFFSET_SENTENCE, About, count_text, unit_text, window_columns
from figspec.compute.fit_tables import UnitPoints, empty_params, fit_rows, fit_sentence, fit_tables
from figspec.compute.resampling import generator
from figspec.compute.selection import select, spanning
from figspec.compute.stats import CORRECTION_SHORT, CORRECTION_TEXT, ZERO_TEXT, bootstrap_ci, corrected, sem, signed_rank_p
from figspec.compute.trial_counts import counts_in
from figspec.data.recording import Recording
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LevelResponsePanel

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

check = level_checks.check


def per_trial_responses(rec: Recording, unit: str, panel: LevelResponsePanel):
    """(levels, evoked counts, baseline counts) of every trial presented, trials in presentation
    order within each level (so resampling depends neither on the order of rows nor on key spelling)."""
    sel = select(rec, unit, spanning(panel.response_ms, panel.baseline_ms), panel.levels)
    order = np.lexsort((sel.trials["sequence"], sel.trial_level))       # by level, then presentation
    return (sel.trials["level"][order], counts_in(sel, panel.response_ms)[order],
            counts_in(sel, panel.baseline_ms)[order])


def unit_values(rec: Recording, panel: LevelResponsePanel, unit: str):
    """(levels, per-trial responses of each level, per-trial evoked and baseline values of each
    level): counts, or rates (count / window length, s) for ``spikes_per_s``, which may compare
    windows of any lengths."""
    level, evoked, base = per_trial_responses(rec, unit, panel)
    scale_e, scale_b = 1.0, 1.0
    if panel.measure == "spikes_per_s":
        scale_e = 1e3 / (panel.response_ms[1] - panel.response_ms[0])
        scale_b = 1e3 / (panel.baseline_ms[1] - panel.baseline_ms[0])
    levels = np.unique(level)
    pairs = [(evoked[level == lv] * scale_e, base[level == lv] * scale_b) for lv in levels]
    values = [e - b if panel.subtract_baseline else e.astype(float) for e, b in pairs]
    return levels, values, pairs


def response_points(rec: Recording, panel: LevelResponsePanel, values: dict | None = None) -> pd.DataFrame:
    """Response per unit and level in the response window.

    The per-trial response is the count in ``response_ms`` (or count / window length in s for
    ``spikes_per_s``), less the same trial's baseline count (or rate) when ``subtract_baseline``.
    Every trial presented counts, with or without spikes.

    Columns
    -------
    unit, level, n_trials : as elsewhere.
    response : mean per-trial response (``response_unit``).
    error_low, error_high : mean - SEM and mean + SEM (``error`` = "sem", ddof = 1), or the
        percentile bootstrap CI of the mean (seeded per panel, unit and level).
    baseline : mean baseline response in the same unit.
    error_kind : what the error bounds are.
    statistic, p : one-sided Wilcoxon signed-rank test of evoked > baseline per trial (counts,
        or rates for ``spikes_per_s``; zero differences treated as ``zero_differences``
        says), empty when all differences are zero.
    effect_size, effect_low, effect_high : the matched-pairs rank-biserial correlation of evoked
        vs baseline per trial (Kerby 2014; zero differences dropped) with its percentile bootstrap
        interval over trials (``confidence``, ``resamples``).
    p_corrected : p corrected across the levels of the unit (``correction``: Holm, or none).
    correction : how.
    significant : p_corrected < alpha.

    ``values`` (unit -> :func:`unit_values`) spares selecting the trials again.
    """
    values = values or {unit: unit_values(rec, panel, unit) for unit in panel.unit_names()}
    rows = []
    for unit in panel.unit_names():
        levels, per_trial, pairs = values[unit]
        unit_rows = []
        for lv, v, (e, b) in zip(levels, per_trial, pairs):
            mean = float(v.mean())
            if panel.error == "sem":
                s = sem(v)
                low, high, kind = mean - s, mean + s, "mean ± SEM"
            else:
                low, high = bootstrap_ci(v, np.mean, panel.confidence, panel.resamples, generator(panel.seed, unit, lv))
                kind = f"{panel.confidence:.0%} bootstrap CI of the mean"
            stat, p = signed_rank_p(e, b, panel.zero_differences) if panel.test == "wilcoxon" else (np.nan, np.nan)
            effect = baseline_effect(e, b, panel, unit, lv) if panel.test == "wilcoxon" else (np.nan,) * 3
            unit_rows.append([unit, lv, e.size, mean, low, high, float(b.mean()), kind, stat, p, *effect])
        frame = pd.DataFrame(unit_rows, columns=["unit", "level", "n_trials", "response", "error_low",
                                                 "error_high", "baseline", "error_kind", "statistic", "p",
                                                 "effect_size", "effect_low", "effect_high"])
        frame["p_corrected"] = corrected(frame["p"].to_numpy(), panel.correction)
        frame["correction"] = CORRECTION_SHORT[panel.correction]
        frame["significant"] = frame["p_corrected"] < panel.alpha
        rows.append(frame)
    out = pd.concat(rows, ignore_index=True)
    out["response_unit"] = "spikes/s" if panel.measure == "spikes_per_s" else "spikes"
    out["test"] = (f"Wilcoxon signed-rank, one-sided, zero differences {ZERO_TEXT[panel.zero_differences]}, "
                   f"{CORRECTION_SHORT[panel.correction]}" if panel.test == "wilcoxon" else "none")
    return out.assign(**window_columns(panel))


def baseline_effect(evoked: np.ndarray, baseline: np.ndarray, panel, unit: str, level: float) -> tuple[float, ...]:
    """(r, low, high): the matched-pairs rank-biserial r of evoked vs baseline per trial and its
    percentile bootstrap interval over trials (seeded apart from the error bars' bootstrap)."""
    d = np.round(np.asarray(evoked, dtype=float) - baseline, 12)
    if d.size < 2 or np.all(d == 0):
        return np.nan, np.nan, np.nan
    rng = generator(panel.seed, f"{unit}:effect", level)
    boot = matched_rank_biserial(d[rng.integers(0, d.size, (panel.resamples, d.size))])
    tail = (1 - panel.confidence) / 2
    low, high = np.quantile(boot, [tail, 1 - tail])
    return float(matched_rank_biserial(d)[0]), float(low), float(high)


# SEM of one spike among n trials: values (1, 0, ..., 0) have SD sqrt(1/n) and SEM 1/n (spikes),
# i.e. 1/(n T) spikes/s over a window of T s: the smallest error a level's mean count can show.
WEIGHTING = ("weighted by 1/SE^2 of each level's mean, the SE floored at that of one spike among the "
             "level's trials (1/n spikes, 1/(n T) spikes/s)")


def compute(rec: Recording, panel: LevelResponsePanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``points`` (see :func:`response_points`), ``fit`` (unit, level, response on a fine grid,
    status; for fits that are drawn) and ``params`` (long table: fit status with its reasons,
    weighting, parameters with bootstrap intervals, goodness of fit, derived levels, and the
    threshold by test: the lowest level whose corrected test is significant)."""
    values = {unit: unit_values(rec, panel, unit) for unit in panel.unit_names()}
    points = response_points(rec, panel, values)
    value_unit = str(points["response_unit"].iloc[0])
    params: list[list] = []
    curve = pd.DataFrame(columns=["unit", "level", "response", "status"])
    if panel.fit != "none":
        window_s = (panel.response_ms[1] - panel.response_ms[0]) * 1e-3
        by_unit = {}
        for unit, (lv, per_trial, _) in values.items():
            n = np.array([v.size for v in per_trial], dtype=float)
            floor = 1.0 / n / (window_s if panel.measure == "spikes_per_s" else 1.0)
            by_unit[unit] = UnitPoints(lv, per_trial, np.array([v.mean() for v in per_trial]), np.mean, floor)
        curve, params = fit_tables(by_unit, "response", panel.fit, levels, panel, value_unit, WEIGHTING)
    if panel.test != "none":
        for unit, rows in points.groupby("unit", sort=False):
            sig = rows.loc[rows["significant"], "level"]
            params.append([unit, "test", "threshold_by_test", float(sig.min()) if len(sig) else np.nan,
                           np.nan, np.nan, levels.unit,
                           f"lowest level significant ({CORRECTION_SHORT[panel.correction]})" if len(sig)
                           else "no level significant"])
    table = pd.DataFrame(params, columns=empty_params().columns) if params else empty_params()
    return {"points": points, "fit": curve, "params": table}


def statistics(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    """Trials, per-level tests (statistic, p, corrected p) and fit parameters."""
    rows = []
    for r in tables["points"].itertuples(index=False):
        rows.append(["trials", panel.name, r.unit, r.level, "n_trials", int(r.n_trials), None, None, ""])
        if pd.notna(r.p):
            note = f"{r.test}; significant={bool(r.significant)}"
            rows += [["test", panel.name, r.unit, r.level, name, value, None, None, note]
                     for name, value in (("statistic", r.statistic), ("n", float(r.n_trials)), ("p", r.p),
                                         ("p_corrected", r.p_corrected))]
            rows.append(["test", panel.name, r.unit, r.level, "matched-pairs rank-biserial r", r.effect_size,
                         r.effect_low, r.effect_high, f"evoked vs baseline per trial; {panel.confidence:.0%} "
                         "percentile bootstrap over trials"])
    return rows + fit_rows(panel, tables["params"])


def legend(panel: LevelResponsePanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    points = tables["points"]
    subtracted = ", baseline subtracted" if panel.subtract_baseline else ""
    text = (f"- *{about.label}*: response in {panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms after onset "
            f"({points['response_unit'].iloc[0]}{subtracted}), {points['error_kind'].iloc[0]}, "
            f"n = {count_text(points['n_trials'])} trials per level; units {unit_text(points, about)}.")
    if panel.test != "none":
        compared = "rates" if panel.measure == "spikes_per_s" else "counts"
        text += (f" One-sided Wilcoxon signed-rank test of evoked vs baseline {compared} per trial "
                 f"({panel.baseline_ms[0]:g}–{panel.baseline_ms[1]:g} ms) per level, trials with equal values "
                 f"{ZERO_TEXT[panel.zero_differences]}, {CORRECTION_TEXT[panel.correction]}; filled "
                 f"markers: p < {panel.alpha:g}; n = the trials of each level; each test's statistic, raw and "
                 "corrected p and effect size (matched-pairs rank-biserial r with its "
                 f"{panel.confidence:.0%} bootstrap interval) are in the statistics table.")
    if points["unit"].nunique() > 1:
        text += f" {OFFSET_SENTENCE}"
    if panel.fit != "none":
        text += fit_sentence(panel.fit, tables["params"], about, panel.confidence)
    return text


def compare(conditions, panel: LevelResponsePanel, levels: LevelSpec, tables) -> pd.DataFrame:
    """Per unit and level, each condition's per-trial responses against the first condition's
    (two-sided Mann-Whitney U, Holm-corrected across the unit's levels; see compute.conditions)."""
    names = [c.name for c in conditions]
    frames = []
    for unit in panel.unit_names():
        values = {}
        for c in conditions:
            lv, per_trial, _ = unit_values(c.recording, panel, unit)
            values.update({(c.name, float(v)): x for v, x in zip(lv, per_trial)})
        frames.append(trial_tests(values, unit, names, panel, "response"))
    return pd.concat(frames, ignore_index=True)
