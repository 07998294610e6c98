"""Panels split into conditions: each kind's tables computed per condition and stacked with a
``condition`` column, and the tests between conditions in one table shape (``TEST_COLUMNS``) that
the statistics table and the legend read.

Tests (scipy.stats is the reference implementation of both):

- within a unit, across trials: a two-sided Mann-Whitney U test per level between each
  condition and the first (trials are independent draws), Holm-corrected across the levels (and
  comparisons) of the unit; effect size Cliff's delta, equal to the rank-biserial correlation
  r = 2U/(n1 n2) - 1 (Cliff 1993, Psychol Bull 114:494; Kerby 2014, Compr Psychol 3:11), with a
  percentile bootstrap interval over trials resampled within each condition.
- across units, paired: a two-sided Wilcoxon signed-rank test on each unit's value in two
  conditions (Wilcoxon 1945), per level where there are levels, Holm-corrected across them;
  effect size the matched-pairs rank-biserial correlation r = (T+ - T-)/(T+ + T-) (Kerby 2014),
  with a percentile bootstrap interval over units.
"""

from __future__ import annotations

import warnings

import numpy as np

from figspec.compute.describe import count_text
from figspec.compute.resampling import generator
from figspec.compute.stats import CORRECTION_SHORT, corrected
from figspec.optional import deferred

pd = deferred("pandas")          # imported on first use: checking a spec needs no pandas

TEST_COLUMNS = ["unit", "level", "comparison", "test", "statistic_name", "statistic", "n", "per_condition", "counted",
                "p", "p_corrected", "correction", "effect_name", "effect_size", "effect_low", "effect_high", "confidence"]
FEWEST_PAIRS = 6           # a two-sided signed-rank test of 5 pairs or fewer cannot reach p < 0.05 (exact null)


def stack(parts: list, names: list[str]):
    """The tables of each condition (one table, or {part: table}) as one, with a ``condition``
    column (the condition's display name) placed after ``unit``."""
    def tagged(frames):
        out = []
        for name, frame in zip(names, frames):
            frame = frame.copy()
            at = list(frame.columns).index("unit") + 1 if "unit" in frame.columns else 0
            frame.insert(at, "condition", name)
            out.append(frame)
        return pd.concat(out, ignore_index=True)

    if isinstance(parts[0], dict):
        return {key: tagged([p[key] for p in parts]) for key in parts[0]}
    return tagged(parts)


def empty_tests() -> pd.DataFrame:
    return pd.DataFrame(columns=TEST_COLUMNS)


def cliffs_delta(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Cliff's delta P(a > b) - P(a < b) over the last two axes' pairs (``a`` (..., n1), ``b`` (..., n2))."""
    return np.sign(a[..., :, None] - b[..., None, :]).mean(axis=(-2, -1))


def trial_tests(values: dict, unit: str, names: list[str], panel, what: str) -> pd.DataFrame:
    """Per-level tests of one unit between conditions, across trials. ``values`` maps
    (condition name, level) -> per-trial values (a condition missing at a level is not tested)."""
    from scipy.stats import mannwhitneyu

    rows = []
    tail = (1 - panel.confidence) / 2
    levels = sorted({lv for (_, lv) in values})
    for other in names[1:]:
        for lv in levels:
            a, b = values.get((other, lv)), values.get((names[0], lv))
            if a is None or b is None or a.size < 2 or b.size < 2:
                continue
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")          # scipy notes ties; the exact/asymptotic choice is its own
                result = mannwhitneyu(a, b, alternative="two-sided")
            rng = generator(panel.seed, f"{unit}:{other}", lv)
            boot = cliffs_delta(a[rng.integers(0, a.size, (panel.resamples, a.size))],
                                b[rng.integers(0, b.size, (panel.resamples, b.size))])
            low, high = np.quantile(boot, [tail, 1 - tail])
            rows.append([unit, float(lv), f"{other} vs {names[0]}", f"Mann-Whitney U, two-sided, {what} per trial",
                         "U", float(result.statistic), a.size + b.size, f"{a.size}, {b.size}", "trials", float(result.pvalue), np.nan,
                         "", "Cliff's delta (rank-biserial r)", float(cliffs_delta(a, b)), float(low), float(high),
                         panel.confidence])
    frame = pd.DataFrame(rows, columns=TEST_COLUMNS) if rows else empty_tests()
    if len(frame):
        frame["p_corrected"] = corrected(frame["p"].to_numpy(dtype=float), panel.correction)
        frame["correction"] = CORRECTION_SHORT[panel.correction]
    return frame


def matched_rank_biserial(d: np.ndarray) -> np.ndarray:
    """(T+ - T-)/(T+ + T-) of paired differences ``d`` (..., n): zero differences dropped, ties
    given their average rank (Kerby 2014)."""
    from scipy.stats import rankdata

    d = np.atleast_2d(d)
    ranks = rankdata(np.where(d == 0, np.nan, np.abs(d)), axis=-1, nan_policy="omit")
    ranks = np.where(d == 0, 0.0, ranks)
    plus = (ranks * (d > 0)).sum(axis=-1)
    minus = (ranks * (d < 0)).sum(axis=-1)
    total = plus + minus
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, (plus - minus) / np.where(total > 0, total, 1), 0.0)


def paired_tests(table: pd.DataFrame, value: str, names: list[str], panel, what: str,
                 by_level: bool = True) -> pd.DataFrame:
    """Across units: per level (or once), each condition vs the first, on each unit's ``value``
    in both (a unit missing a value in either condition is left out of that test)."""
    from scipy.stats import wilcoxon

    rows = []
    tail = (1 - panel.confidence) / 2
    groups = table.groupby("level", sort=True) if by_level else [(np.nan, table)]
    for other in names[1:]:
        for lv, rows_at in groups:
            wide = rows_at.pivot_table(index="unit", columns="condition", values=value, aggfunc="first")
            if other not in wide or names[0] not in wide:
                continue
            pairs = wide[[other, names[0]]].dropna()
            # equal means summed in another order differ by ~1e-17: such float noise is a tie, not a difference
            d = np.round((pairs[other] - pairs[names[0]]).to_numpy(dtype=float), 12)
            if d.size < 2 or np.all(d == 0):
                stat, p = np.nan, np.nan
            else:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    result = wilcoxon(d, alternative="two-sided")
                stat, p = float(result.statistic), float(result.pvalue)
            rng = generator(panel.seed, f"paired:{other}", 0.0 if not by_level else float(lv))
            boot = matched_rank_biserial(d[rng.integers(0, d.size, (panel.resamples, d.size))]) if d.size else [np.nan]
            low, high = np.quantile(boot, [tail, 1 - tail]) if d.size else (np.nan, np.nan)
            rows.append(["all units", float(lv), f"{other} vs {names[0]}",
                         f"Wilcoxon signed-rank, two-sided, paired across units, {what}", "W", stat, d.size, "",
                         "units", p, np.nan, "", "matched-pairs rank-biserial r",
                         float(matched_rank_biserial(d)[0]) if d.size else np.nan, float(low), float(high),
                         panel.confidence])
    frame = pd.DataFrame(rows, columns=TEST_COLUMNS) if rows else empty_tests()
    if len(frame):
        frame["p_corrected"] = corrected(frame["p"].to_numpy(dtype=float), panel.correction) if by_level \
            else frame["p"]
        frame["correction"] = CORRECTION_SHORT[panel.correction] if by_level else "single test"
    return frame


def test_rows(panel, tests: pd.DataFrame) -> list[list]:
    """Rows of the statistics table for each test: the statistic, n, raw and corrected p and the
    effect size with its interval, each row's note naming the test and comparison."""
    rows = []
    for r in tests.itertuples(index=False):
        level = None if pd.isna(r.level) else r.level
        about = f"{r.comparison}; {r.test}"
        rows += [["test", panel.name, r.unit, level, r.statistic_name, r.statistic, None, None, about],
                 ["test", panel.name, r.unit, level, "n", float(r.n), None, None,
                  f"{r.comparison}; {r.counted}" + (f" ({r.per_condition} per condition)" if r.per_condition else "")],
                 ["test", panel.name, r.unit, level, "p", r.p, None, None, about],
                 ["test", panel.name, r.unit, level, "p_corrected", r.p_corrected, None, None,
                  f"{r.comparison}; {r.correction}"],
                 ["test", panel.name, r.unit, level, r.effect_name, r.effect_size, r.effect_low, r.effect_high,
                  f"{r.comparison}; {r.confidence:.0%} percentile bootstrap over {r.counted}"]]
    return rows


def test_sentence(tests: pd.DataFrame, alpha: float) -> str:
    """The legend's account of the tests between conditions."""
    if tests is None or not len(tests):
        return ""
    first = tests.iloc[0]
    sig = tests[tests["p_corrected"] < alpha]
    where = ", ".join(f"{r.unit} at {r.level:g}" if not pd.isna(r.level) else str(r.unit)
                      for r in sig.itertuples()) or "none"
    return (f" Conditions compared ({first['comparison']}) by {first['test']} ({len(tests)} tests, "
            f"{first['correction']}); effect size {first['effect_name']} with its {first['confidence']:.0%} "
            f"percentile bootstrap interval; p < {alpha:g} after correction: {where}; every test's statistic, n, "
            "p and effect size are in the statistics table.")


def condition_names(tables) -> list[str]:
    """The conditions of a split panel's tables, in order."""
    frames = tables.values() if isinstance(tables, dict) else [tables]
    for frame in frames:
        if "condition" in frame.columns and len(frame):
            return list(dict.fromkeys(frame["condition"]))
    return []


def of_condition(tables, name: str):
    """One condition's tables, as the kind computed them (the tests between conditions left out)."""
    def one(frame):
        return frame[frame["condition"] == name].drop(columns="condition").reset_index(drop=True)

    if isinstance(tables, dict):
        return {k: one(v) if "condition" in v.columns else v for k, v in tables.items() if k != "tests"}
    return one(tables)


def split_statistics(statistics, panel, tables) -> list[list]:
    """The kind's statistics rows for each condition (the note naming the condition), then the tests."""
    rows = []
    for name in condition_names(tables):
        rows += [r[:8] + [f"{r[8]}; condition: {name}" if r[8] else f"condition: {name}"]
                 for r in statistics(panel, of_condition(tables, name))]
    if isinstance(tables, dict) and "tests" in tables:
        rows += test_rows(panel, tables["tests"])
    return rows


def split_legend(legend, panel, tables, about, palette, testing: bool = True) -> str:
    """The kind's sentence over every condition, then how conditions are drawn and tested
    (``testing``: whether the kind has a test between conditions at all)."""
    names = condition_names(tables)
    stacked = {k: v for k, v in tables.items() if k != "tests"} if isinstance(tables, dict) else tables
    text = legend(panel, stacked, about)
    looks = panel.conditions.looks(len(names), palette)
    frames = stacked.values() if isinstance(stacked, dict) else [stacked]
    counted = next((f for f in frames if "n_trials" in f.columns and "condition" in f.columns and len(f)), None)
    column = "n_condition" if counted is not None and "n_condition" in counted.columns else "n_trials"
    parts = []
    for i, (name, (_, line)) in enumerate(zip(names, looks)):
        how = f"block {i + 1} from the top" if column == "n_condition" else f"{line} line"
        n = ""
        if counted is not None:
            values = counted.loc[counted["condition"] == name, column].to_numpy()
            n = f", n = {count_text(values)} trials per level" if len(values) else ""
        parts.append(f"{name} ({how}{n})")
    text += f" Trials split by the trial-table column {panel.conditions.column}: {'; '.join(parts)}."
    if isinstance(tables, dict) and "tests" in tables:
        text += test_sentence(tables["tests"], getattr(panel, "alpha", 0.05))
    elif panel.conditions.test and testing:
        text += " No test between conditions (this measure gives one value per level, not one per trial)."
    return text

