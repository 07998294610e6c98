"""``population_response``: many units' response vs level on one normalised scale.

Each unit's response per level is its mean evoked rate over the trials presented (less the same
trials' baseline rate with ``subtract_baseline``), as ``level_response`` computes it. Dividing by
the unit's own maximum (over the levels, or of its Naka-Rushton fit) puts units of very different
rates on one 0-1 scale, the normalised contrast-response functions of Albrecht & Hamilton (1982,
J Neurophysiol 48:217) and Sclar, Maunsell & Lennie (1990, Vision Res 30:1); the population
point per level is the mean ± SEM (ddof = 1) across units, or the median and interquartile range.
The population curve is fitted with the Naka-Rushton function, weighted by 1/SEM² across units.
"""

from __future__ import annotations

import warnings

import numpy as np

from figspec.compute.conditions import FEWEST_PAIRS, paired_tests, stack
from figspec.compute.describe import About, shown_unit, window_columns
from figspec.compute.fit_tables import UnitPoints, empty_params, fit_rows, fit_tables, fitted_on
from figspec.compute.level_response import WEIGHTING, unit_values
from figspec.data.recording import Recording
from figspec.errors import FigspecWarning, Problem
from figspec.optional import deferred
from figspec.spec.models import LevelSpec
from figspec.spec.panels import PopulationResponsePanel

pd = deferred("pandas")

POPULATION = "population"
SUMMARY_TEXT = {"mean_sem": "mean ± SEM across units", "median_iqr": "median and interquartile range across units"}


def _units(rec: Recording, panel: PopulationResponsePanel) -> list[str]:
    return panel.unit_names() or list(rec.units)


def divisors(by_unit: dict, panel: PopulationResponsePanel, fits: pd.DataFrame) -> dict[str, tuple[float, str]]:
    """Each unit's divisor and how it was found (or NaN and why the unit is left out); ``fits``
    holds each unit's own Naka-Rushton parameters (``fit_max``)."""
    out = {}
    for unit, data in by_unit.items():
        top = float(np.max(data.points)) if data.points.size else np.nan
        how = "its maximum over the levels"
        if panel.normalise == "fit_max":
            mine = fits[fits["unit"] == unit].set_index("quantity")
            status = str(mine.loc["status", "note"]) if "status" in mine.index else "failed: not fitted"
            if status.startswith("failed"):
                if panel.failed_fits == "leave_out":
                    out[unit] = (np.nan, f"left out: its Naka-Rushton fit {status}")
                    continue
                how = f"its maximum over the levels (its Naka-Rushton fit {status})"
            else:
                top, how = float(mine.loc["R0", "value"] + mine.loc["Rmax", "value"]), "the maximum of its Naka-Rushton fit"
        out[unit] = (top, how) if top > 0 else (np.nan, "left out: no response above baseline at any level")
    return out


def compute(rec: Recording, panel: PopulationResponsePanel, levels: LevelSpec,
            fixed: dict[str, tuple[float, str]] | None = None) -> dict[str, pd.DataFrame]:
    """``units`` (per unit and level: n_trials, response in spikes/s, divisor, normalised,
    included, note), ``points`` (per level: n_units, value, error_low, error_high, summary),
    ``fit`` (the population curve: unit "population", level, value, status) and ``params`` (the
    population fit's and each unit's own fit's parameters, as ``level_response`` lists them).
    ``fixed`` gives each unit's divisor instead (unit -> (divisor, how)): a split panel divides
    every condition by the first condition's, so a smaller response stays smaller."""
    window_s = (panel.response_ms[1] - panel.response_ms[0]) * 1e-3
    by_unit = {}
    for unit in _units(rec, panel):
        lv, per_trial, _ = unit_values(rec, panel, unit)
        n = np.array([v.size for v in per_trial], dtype=float)
        by_unit[unit] = UnitPoints(lv, per_trial, np.array([v.mean() for v in per_trial]), np.mean, 1.0 / n / window_s)
    unit_params: list[list] = []
    if panel.fit != "none" and fixed is None:
        with warnings.catch_warnings():      # each unit's own fit is reported in the table and counted in the legend
            warnings.simplefilter("ignore", FigspecWarning)
            _, unit_params = fit_tables(by_unit, "response", panel.fit, levels, panel, "spikes/s", WEIGHTING)
    found = fixed if fixed is not None else divisors(by_unit, panel,
                                                     pd.DataFrame(unit_params, columns=empty_params().columns))
    rows = []
    for unit, data in by_unit.items():
        divisor, how = found.get(unit, (np.nan, "no divisor in the first condition"))
        for level, values, point in zip(data.levels, data.values, data.points):
            rows.append([unit, float(level), values.size, float(point), divisor, point / divisor if divisor > 0 else np.nan,
                         bool(divisor > 0), how])
    units = pd.DataFrame(rows, columns=["unit", "level", "n_trials", "response", "divisor", "normalised", "included",
                                        "note"]).assign(**window_columns(panel))
    kept = units[units["included"]]
    points = []
    for level, group in kept.groupby("level"):
        v = group["normalised"].to_numpy(dtype=float)
        if panel.summary == "mean_sem":
            centre = float(v.mean())
            spread = float(v.std(ddof=1) / np.sqrt(v.size)) if v.size > 1 else np.nan
            low, high = centre - spread, centre + spread
        else:
            centre, low, high = (float(q) for q in np.percentile(v, [50, 25, 75]))
        points.append([float(level), v.size, centre, low, high, SUMMARY_TEXT[panel.summary]])
    points = pd.DataFrame(points, columns=["level", "n_units", "value", "error_low", "error_high", "summary"])
    curve = pd.DataFrame(columns=["unit", "level", "value", "status"])
    params: list[list] = []
    if panel.fit != "none" and len(points):
        sem = ((points["error_high"] - points["error_low"]) / 2).to_numpy(dtype=float)
        floor = np.where(np.isfinite(sem) & (sem > 0), sem, np.nanmax(sem) if np.isfinite(sem).any() else 1.0)
        population = {POPULATION: UnitPoints(points["level"].to_numpy(), None, points["value"].to_numpy(), None,
                                             sigma=floor if panel.summary == "mean_sem" else None,
                                             why_no_interval="the points summarise units (each unit's own fit, "
                                                             "with intervals over its trials, is listed)")}
        curve, params = fit_tables(population, "value", panel.fit, levels, panel, "fraction of unit's maximum",
                                   "weighted by 1/SEM² across units" if panel.summary == "mean_sem" else "unweighted")
        params += unit_params
    table = pd.DataFrame(params, columns=empty_params().columns) if params else empty_params()
    return {"units": units, "points": points, "fit": curve, "params": table}


def check(rec: Recording, panel: PopulationResponsePanel, levels: LevelSpec) -> list[Problem]:
    units = _units(rec, panel)
    if len(set(units)) < 2:
        return [Problem(f"a population response needs at least two different units; it has {len(set(units))}",
                        ("units",), ", ".join(dict.fromkeys(units)))]
    if panel.conditions is not None and panel.conditions.test and len(set(units)) < FEWEST_PAIRS:
        return [Problem(f"the paired test between conditions needs at least {FEWEST_PAIRS} units (with fewer, a "
                        f"two-sided Wilcoxon signed-rank test cannot reach p < 0.05); the panel has {len(set(units))}",
                        ("conditions", "test"), "true")]
    return []


def statistics(panel: PopulationResponsePanel, tables: dict[str, pd.DataFrame]) -> list[list]:
    units = tables["units"]
    rows = [["trials", panel.name, r.unit, r.level, "n_trials", int(r.n_trials), None, None, ""]
            for r in units.itertuples()]
    rows += [["population", panel.name, POPULATION, r.level, "n_units", int(r.n_units), None, None, ""]
             for r in tables["points"].itertuples()]
    rows += [["population", panel.name, POPULATION, r.level, "normalised response", r.value, r.error_low,
              r.error_high, r.summary] for r in tables["points"].itertuples()]
    left = units.drop_duplicates("unit")
    rows += [["population", panel.name, r.unit, None, "included", 1.0 if r.included else 0.0, None, None,
              f"1: in the population; {r.note}" if r.included else r.note] for r in left.itertuples()]
    return rows + fit_rows(panel, tables["params"])


def legend(panel: PopulationResponsePanel, tables: dict[str, pd.DataFrame], about: About) -> str:
    units = tables["units"].drop_duplicates("unit")
    kept, gone = units[units["included"]], units[~units["included"]]
    base = " less its baseline rate (" + "–".join(f"{v:g}" for v in panel.baseline_ms) + " ms)" \
        if panel.subtract_baseline else ""
    divided = "its own maximum over the levels" if panel.normalise == "max" else (
        "the maximum of its own Naka-Rushton fit (R0 + Rmax)")
    text = (f"- *{about.label}*: each unit's mean rate in {panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms after "
            f"onset{base}, over the trials presented at each level, divided by {divided}; points: "
            f"{SUMMARY_TEXT[panel.summary]} (n = {len(kept)} units: "
            f"{', '.join(shown_unit(u, about) for u in kept['unit'])}); thin lines: each unit.")
    if len(gone):
        text += f" {len(gone)} units left out ({'; '.join(f'{r.unit}: {r.note}' for r in gone.itertuples())})."
    params = tables["params"]
    if panel.fit != "none" and len(params):
        status = params[(params["unit"] == POPULATION) & (params["quantity"] == "status")]["note"]
        weighting = params[(params["unit"] == POPULATION) & (params["quantity"] == "weighting")]["note"]
        state = str(status.iloc[0]).split(":")[0] if len(status) else "failed"
        drawn = {"ok": "solid", "poorly constrained": "dashed: poorly constrained"}.get(state, "not drawn: it failed")
        text += (f" Curve ({drawn}): Naka–Rushton fit to the population points "
                 f"{fitted_on(about.level_scale, about.level_unit)}, {weighting.iloc[0] if len(weighting) else ''}; "
                 "no interval, since the points summarise units. Each unit's own fit, with intervals over its "
                 "trials, is in the statistics table")
        own = params[(params["unit"] != POPULATION) & (params["quantity"] == "status")]["note"].str.split(":").str[0]
        counts = ", ".join(f"{n} {state}" for state, n in own.value_counts().items())
        text += f" ({counts})." if counts else "."
    return text


def split(conditions, panel: PopulationResponsePanel, levels: LevelSpec) -> dict[str, pd.DataFrame]:
    """Every condition normalised by the first condition's divisors (each unit's maximum, or its
    fitted maximum, in the first condition): normalising each condition by its own maximum would
    make a halved response look unchanged."""
    first = compute(conditions[0].recording, panel, levels)
    units = first["units"].drop_duplicates("unit")
    fixed = {r.unit: (float(r.divisor) if r.included else 0.0, f"{r.note} in {conditions[0].name}")
             for r in units.itertuples()}
    parts = [first] + [compute(c.recording, panel, levels, fixed) for c in conditions[1:]]
    return stack(parts, [c.name for c in conditions])


def compare(conditions, panel: PopulationResponsePanel, levels: LevelSpec, tables) -> pd.DataFrame:
    """Per level, each condition against the first on the units' normalised responses (paired
    two-sided Wilcoxon signed-rank across units, Holm-corrected across levels)."""
    units = tables["units"]
    return paired_tests(units[units["included"]], "normalised", [c.name for c in conditions], panel,
                        "normalised response")
