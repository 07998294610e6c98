"""``unit_distribution``: one per-unit quantity across units, grouped by session.

Each unit's quantity comes from its own response-level analysis, made exactly as a
``level_response`` panel makes it (Naka-Rushton parameters with bootstrap intervals over
trials, or the threshold by test). The summary per group is the median and interquartile range
(numpy.percentile, linear interpolation). Two groups are compared with a two-sided Mann-Whitney U
test (scipy.stats.mannwhitneyu, the reference implementation), the effect size being the
rank-biserial correlation r = 2U / (n1 n2) - 1 (Kerby 2014, Compr Psychol 3:11; equal to Cliff's
delta) with a percentile bootstrap interval over units, resampled within each group.
"""

from __future__ import annotations

import warnings

import numpy as np

from figspec.compute import latency, level_response
from figspec.compute.conditions import FEWEST_PAIRS, paired_tests, stack
from figspec.compute.describe import About, shown_unit, trial_rows
from figspec.data.recording import Recording
from figspec.errors import FigspecWarning, Problem
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import LatencyPanel, LevelResponsePanel, UnitDistributionPanel

pd = deferred("pandas")

FEWEST_PER_GROUP = 3       # common practice: with fewer, a two-sided Mann-Whitney U test cannot reach p < 0.05 anyway
SHARED = ("levels", "response_ms", "baseline_ms", "subtract_baseline", "measure", "zero_differences", "alpha",
          "correction", "confidence", "resamples", "fit_resamples", "seed", "level_axis")


def _units(rec: Recording, panel: UnitDistributionPanel) -> list[str]:
    return panel.unit_names() or list(rec.units)


LATENCY_QUANTITIES = ("latency", "t0", "k", "beta")
LATENCY_SHARED = ("levels", "response_ms", "baseline_ms", "zero_differences", "alpha", "correction", "confidence",
                  "resamples", "fit_resamples", "seed", "level_axis")


def latency_panel(rec: Recording, panel: UnitDistributionPanel) -> LatencyPanel:
    """The first-spike latency analysis (with a Pieron fit for t0, k, beta) the latency quantities come from."""
    fields = {k: getattr(panel, k) for k in LATENCY_SHARED}
    return LatencyPanel.model_validate({**fields, "name": panel.name, "kind": "latency", "units": _units(rec, panel),
                                        "method": "first_spike",
                                        "fit": "none" if panel.quantity == "latency" else "pieron"})


def analysed_params(rec: Recording, panel: UnitDistributionPanel, levels: LevelSpec) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(trials per unit and level, a long table of per-unit quantities as the fit tables list
    them) from the analysis the panel's quantity comes from."""
    with warnings.catch_warnings():                 # each unit's fit is reported in the table, counted in the legend
        warnings.simplefilter("ignore", FigspecWarning)
        if panel.quantity not in LATENCY_QUANTITIES:
            analysed = level_response.compute(rec, analysis_panel(rec, panel), levels)
            return analysed["points"][["unit", "level", "n_trials"]], analysed["params"]
        analysed = latency.compute(rec, latency_panel(rec, panel), levels)
    params = analysed["params"]
    if panel.quantity == "latency":
        at = analysed["points"][analysed["points"]["level"] == panel.at_level]
        params = pd.DataFrame([[r.unit, "none", "latency", r.latency_ms, r.ci_low_ms, r.ci_high_ms, "ms",
                                f"median first-spike latency at {panel.at_level:g}; no spike in {r.n_no_spike} of "
                                f"{r.n_trials} trials"] for r in at.itertuples()], columns=params.columns)
    return analysed["points"][["unit", "level", "n_trials"]], params


def analysis_panel(rec: Recording, panel: UnitDistributionPanel) -> LevelResponsePanel:
    """The level_response analysis every unit's quantity comes from."""
    fields = {k: getattr(panel, k) for k in SHARED}
    return LevelResponsePanel.model_validate({**fields, "name": panel.name, "kind": "level_response",
                                              "units": _units(rec, panel), "test": "wilcoxon",
                                              "fit": "none" if panel.quantity == "threshold" else "naka_rushton"})


def group_of(unit: str, panel: UnitDistributionPanel) -> str:
    """The unit's group: its source (pooled sources), else one group (conditions regroup later)."""
    if panel.group_by == "source" and "/" in unit:
        return unit.split("/", 1)[0]
    return panel.source if isinstance(panel.source, str) else "all units"


def compute(rec: Recording, panel: UnitDistributionPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """``units`` (unit, group, value, value_unit, fit_status, shown: filled / open / left out / no
    value), ``summary`` (group, n_units, median, q25, q75), ``trials`` (unit, level, n_trials)
    and, with a test, ``test`` (groups, n, U, p, rank-biserial r with its interval)."""
    trials, params = analysed_params(rec, panel, levels)
    key = "threshold_by_test" if panel.quantity == "threshold" else panel.quantity
    rows = []
    for unit in _units(rec, panel):
        mine = params[params["unit"] == unit].set_index("quantity")
        value = float(mine.loc[key, "value"]) if key in mine.index else np.nan
        status = "ok" if panel.quantity in ("threshold", "latency") else str(mine.loc["status", "note"]).split(":")[0] \
            if "status" in mine.index else "failed"
        if not np.isfinite(value) or status == "failed":
            shown = "no value"
        elif status == "poorly constrained" and panel.poorly_constrained != "include":
            shown = "open" if panel.poorly_constrained == "apart" else "left out"
        else:
            shown = "filled"
        value_unit = str(mine.loc[key, "unit_of_value"]) if key in mine.index else ""
        rows.append([unit, group_of(unit, panel), value, value_unit, status, shown])
    units = pd.DataFrame(rows, columns=["unit", "group", "value", "value_unit", "fit_status", "shown"])
    used = units[units["shown"].isin(["filled", "open"] if panel.poorly_constrained == "apart" else ["filled"])]
    summary = pd.DataFrame([[g, len(v), *np.percentile(v, [50, 25, 75])] if len(v) else [g, 0, np.nan, np.nan, np.nan]
                            for g, v in ((g, used.loc[used["group"] == g, "value"].to_numpy(dtype=float))
                                         for g in units["group"].unique())],
                           columns=["group", "n_units", "median", "q25", "q75"])
    out = {"units": units, "summary": summary, "trials": trials}
    if panel.test == "mann_whitney":
        out["test"] = mann_whitney(used, panel)
    return out


def rank_biserial(a: np.ndarray, b: np.ndarray) -> float:
    """2U/(n1 n2) - 1 with U the Mann-Whitney statistic of ``a`` (ties count one half)."""
    from scipy.stats import mannwhitneyu

    return float(2 * mannwhitneyu(a, b).statistic / (a.size * b.size) - 1)


def mann_whitney(used: pd.DataFrame, panel: UnitDistributionPanel) -> pd.DataFrame:
    from scipy.stats import mannwhitneyu

    from figspec.compute.resampling import generator

    (name_a, a), (name_b, b) = [(g, v["value"].to_numpy(dtype=float)) for g, v in used.groupby("group", sort=False)]
    result = mannwhitneyu(a, b, alternative="two-sided")
    rng = generator(panel.seed, "unit_distribution", 0.0)
    boot = [rank_biserial(rng.choice(a, a.size), rng.choice(b, b.size)) for _ in range(panel.resamples)]
    tail = (1 - panel.confidence) / 2
    low, high = np.quantile(boot, [tail, 1 - tail])
    return pd.DataFrame([{"group_a": name_a, "group_b": name_b, "n_a": a.size, "n_b": b.size,
                          "test": "Mann-Whitney U, two-sided", "U": float(result.statistic), "p": float(result.pvalue),
                          "effect": "rank-biserial r", "r": rank_biserial(a, b), "r_ci_low": float(low),
                          "r_ci_high": float(high), "confidence": panel.confidence}])


def check(rec: Recording, panel: UnitDistributionPanel, levels: LevelSpec) -> list[Problem]:
    units = _units(rec, panel)
    shown_levels = panel.levels if panel.levels is not None else rec.levels.tolist()
    if panel.at_level is not None and panel.at_level not in shown_levels:
        return [Problem(f"not a level the panel shows ({', '.join(f'{v:g}' for v in shown_levels)})", ("at_level",),
                        f"{panel.at_level:g}")]
    if len(set(units)) < 2:
        return [Problem(f"a distribution across units needs at least two units; it has {len(set(units))}", ("units",))]
    if panel.conditions is not None and panel.conditions.test and len(set(units)) < FEWEST_PAIRS:
        return [Problem(f"the paired test between conditions needs at least {FEWEST_PAIRS} units (with fewer, a "
                        f"two-sided Wilcoxon signed-rank test cannot reach p < 0.05); the panel has {len(set(units))}",
                        ("conditions", "test"), "true")]
    if panel.test != "none":
        groups = pd.Series([group_of(u, panel) for u in units]).value_counts()
        if len(groups) != 2:
            return [Problem(f"test = 'mann_whitney' compares two groups; the panel's units form {len(groups)} "
                            f"({', '.join(groups.index)})", ("test",))]
        few = groups[groups < FEWEST_PER_GROUP]
        if len(few):
            return [Problem(f"test = 'mann_whitney' needs at least {FEWEST_PER_GROUP} units per group; "
                            + ", ".join(f"{g} has {n}" for g, n in few.items()), ("test",))]
    return []


def statistics(panel: UnitDistributionPanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    rows = trial_rows(panel, {"trials": tables["trials"]})
    rows += [["population", panel.name, r.unit, None, panel.quantity, r.value, None, None,
             f"{r.group}; fit {r.fit_status}; {r.shown}"] for r in tables["units"].itertuples()]
    rows += [["population", panel.name, r.group, None, f"median {panel.quantity}", r.median, r.q25, r.q75,
              f"n = {r.n_units} units; interval: interquartile range"] for r in tables["summary"].itertuples()]
    for r in tables.get("test", pd.DataFrame()).itertuples():
        rows += [["test", panel.name, f"{r.group_a} vs {r.group_b}", None, "U", r.U, None, None, r.test],
                 ["test", panel.name, f"{r.group_a} vs {r.group_b}", None, "n", float(r.n_a + r.n_b), None, None,
                  f"units ({r.n_a} and {r.n_b} per group)"],
                 ["test", panel.name, f"{r.group_a} vs {r.group_b}", None, "p", r.p, None, None,
                  f"n = {r.n_a} and {r.n_b} units"],
                 ["test", panel.name, f"{r.group_a} vs {r.group_b}", None, "p_corrected", r.p, None, None,
                  "a single test: no correction"],
                 ["test", panel.name, f"{r.group_a} vs {r.group_b}", None, "rank-biserial r", r.r, r.r_ci_low,
                  r.r_ci_high, f"{r.confidence:.0%} percentile bootstrap over units"]]
    return rows


def legend(panel: UnitDistributionPanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    units, summary = tables["units"], tables["summary"]
    what = {"threshold": "threshold by test (the lowest level whose Holm-corrected test against baseline is significant)",
            "latency": f"median first-spike latency at {panel.at_level or 0:g} {about.level_unit} (trials with a spike)"}.get(
        panel.quantity, f"{'Piéron' if panel.quantity in LATENCY_QUANTITIES else 'Naka–Rushton'} {panel.quantity} "
                        "of each unit's own fit")
    counts = units["shown"].value_counts()
    what_counts = "unit-condition values" if "condition" in units.columns else "units"
    groups = "; ".join(f"{r.group}: n = {r.n_units}" for r in summary.itertuples())
    text = (f"- *{about.label}*: {what} (response {panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms after onset), "
            f"one point per unit{' and condition' if 'condition' in units.columns else ''} "
            f"({', '.join(shown_unit(u, about) for u in units['unit'].unique())}); bars: median and "
            f"interquartile range ({groups}).")
    if counts.get("open", 0):
        text += f" Open points: {counts['open']} {what_counts} whose fit is poorly constrained (included in the summary)."
    if counts.get("left out", 0):
        text += f" {counts['left out']} {what_counts} with a poorly constrained fit left out."
    if counts.get("no value", 0):
        text += f" {counts['no value']} {what_counts} without a value (a failed fit, or no significant level)."
    if "condition" in units.columns:
        text += " Grey lines join each unit's values across conditions."
    for r in tables.get("test", pd.DataFrame()).itertuples():
        text += (f" {r.group_a} vs {r.group_b}: two-sided Mann–Whitney U = {r.U:g}, p = {r.p:.3g} (n = {r.n_a} and "
                 f"{r.n_b} units); rank-biserial r = {r.r:.2f} ({r.confidence:.0%} bootstrap interval over units "
                 f"{r.r_ci_low:.2f} to {r.r_ci_high:.2f}).")
    return text


def split(conditions, panel: UnitDistributionPanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """Each condition's values (each unit analysed on that condition's trials), grouped by condition."""
    tables = stack([compute(c.recording, panel, levels) for c in conditions], [c.name for c in conditions])
    tables["units"]["group"] = tables["units"]["condition"]
    tables["summary"]["group"] = tables["summary"]["condition"]
    return tables


def compare(conditions, panel: UnitDistributionPanel, levels: LevelSpec, tables) -> pd.DataFrame:
    """Each condition against the first on the units' values (paired two-sided Wilcoxon
    signed-rank across the units with a value shown in both)."""
    units = tables["units"]
    used = units[units["shown"].isin(["filled", "open"] if panel.poorly_constrained == "apart" else ["filled"])]
    return paired_tests(used, "value", [c.name for c in conditions], panel, panel.quantity, by_level=False)
