"""Per-figure reports drawn from the computed tables: a statistics summary (CSV), a legend
snippet (Markdown) and the manifest (JSON) with hashes and every resolved parameter."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import Any

import pandas as pd

SUMMARY_COLUMNS = ["section", "panel", "unit", "level", "quantity", "value", "ci_low", "ci_high", "note"]


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def statistics_summary(panels: list, tables: dict[str, Any]) -> pd.DataFrame:
    """One long table per figure: trials per level and unit, tests with statistics and p-values,
    fit parameters with CIs (columns: ``SUMMARY_COLUMNS``)."""
    rows: list[list] = []
    for panel in panels:
        table = tables[panel.name]
        if isinstance(table, pd.DataFrame):
            counts = table.groupby(["unit", "level"])["n_trials"].first() if "n_trials" in table else None
            if counts is None and "trial" in table:
                counts = table.groupby(["unit", "level"])["trial"].nunique()
            for (unit, level), n in (counts.items() if counts is not None else []):
                rows.append(["trials", panel.name, unit, level, "n_trials", int(n), None, None, ""])
            continue
        points = table["points"]
        for _, r in points.iterrows():
            rows.append(["trials", panel.name, r["unit"], r["level"], "n_trials", int(r["n_trials"]), None, None, ""])
            if "p" in points and pd.notna(r.get("p")):
                note = f"{r['test']}; significant={bool(r['significant'])}"
                rows.append(["test", panel.name, r["unit"], r["level"], "statistic", r["statistic"], None, None, note])
                rows.append(["test", panel.name, r["unit"], r["level"], "p", r["p"], None, None, note])
                rows.append(["test", panel.name, r["unit"], r["level"], "p_holm", r["p_holm"], None, None, note])
            if "latency_ms" in points:
                rows.append(["latency", panel.name, r["unit"], r["level"], "latency_ms", r["latency_ms"],
                             r["ci_low_ms"], r["ci_high_ms"], f"{r['method']}; no spike in {r['n_no_spike']} trials"
                             if pd.notna(r["n_no_spike"]) else r["method"]])
        for _, r in table["params"].iterrows():    # a fit's status is text: it goes in the note
            rows.append(["fit", panel.name, r["unit"], None, f"{r['model']}:{r['quantity']}", r["value"],
                         r["ci_low"], r["ci_high"], r["note"]])
    return pd.DataFrame(rows, columns=SUMMARY_COLUMNS)


def legend_snippet(title: str, panels: list, tables: dict[str, Any], level_unit: str) -> str:
    """A Markdown paragraph per panel stating n, what error bars mean, tests and corrections."""
    lines = [f"**{title or 'Figure'}.**"]
    for panel in panels:
        table = tables[panel.name]
        kind = panel.kind
        if kind in ("raster", "psth"):
            t = table
            n = sorted({int(v) for v in (t.groupby(["unit", "level"])["trial"].nunique() if kind == "raster"
                                          else t["n_trials"])})
            units = ", ".join(dict.fromkeys(str(u) for u in t["unit"]))
            what = "Spike rasters (one line per trial presented, one tick per spike)" if kind == "raster" else (
                f"Firing rate in {t['bin_stop_ms'].iloc[0] - t['bin_start_ms'].iloc[0]:g}-ms bins"
                f" ({t['rate_unit'].iloc[0]}), averaged over all trials presented")
            extra = ""
            if kind == "psth" and getattr(panel, "smooth", "none") != "none":
                extra += f", smoothed with a {panel.smooth} kernel ({panel.kernel_ms} ms)"
            pooled = ""
            if "rate_sem" in t:
                extra += f"; line and band: mean ± SEM across {int(t['n_units'].max())} units"
                units = ", ".join(getattr(panel, "units", None) or [units])
                pooled = f" (summed over {int(t['n_units'].max())} units)"
            n_text = "–".join(str(v) for v in (n[0], n[-1])) if len(n) > 1 else str(n[0])
            lines.append(f"- *{panel.name}*: {what}{extra}; units {units}; n = {n_text} trials per level{pooled}; "
                         f"time from stimulus onset, window {panel.window_ms[0]:g} to {panel.window_ms[1]:g} ms.")
            continue
        points = table["points"]
        n = sorted({int(v) for v in points["n_trials"]})
        n_text = f"{n[0]}" if len(n) == 1 else f"{n[0]}–{n[-1]}"
        units = ", ".join(dict.fromkeys(str(u) for u in points["unit"]))
        if kind == "level_response":
            text = (f"- *{panel.name}*: response in {panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms after onset "
                    f"({points['response_unit'].iloc[0]}{', baseline subtracted' if panel.subtract_baseline else ''}), "
                    f"{points['error_kind'].iloc[0]}, n = {n_text} trials per level; units {units}.")
            if panel.test != "none":
                text += (f" One-sided Wilcoxon signed-rank test of evoked vs baseline counts "
                         f"({panel.baseline_ms[0]:g}–{panel.baseline_ms[1]:g} ms) per level, zero_method "
                         f"'{panel.zero_method}', Holm-corrected across levels within each unit; filled markers: "
                         f"p < {panel.alpha:g}.")
        else:
            text = (f"- *{panel.name}*: {panel.method.replace('_', '-')} latency in "
                    f"{panel.response_ms[0]:g}–{panel.response_ms[1]:g} ms, n = {n_text} trials per level; units {units}.")
            if panel.method == "first_spike":
                text += (f" Points: median over trials with a spike; error bars: {panel.confidence:.0%} percentile "
                         f"bootstrap CI ({panel.resamples} resamples); trials without a spike are not counted as "
                         "zero latency.")
        if getattr(panel, "fit", "none") != "none":
            name = {"naka_rushton": "Naka–Rushton", "pieron": "Piéron"}[panel.fit]
            text += f" Curves: {name} fits by weighted least squares on the linear level ({level_unit})."
        lines.append(text)
    return "\n".join(lines) + "\n"


def manifest(inputs: list[dict], outputs: dict[str, bytes], parameters: dict[str, Any]) -> bytes:
    """The manifest as stable JSON bytes: inputs and outputs with sizes and sha256, and the
    resolved parameters."""
    body = {
        "inputs": inputs,
        "outputs": [{"path": name, "bytes": len(data), "sha256": sha256(data)} for name, data in sorted(outputs.items())],
        "parameters": parameters,
    }
    return (json.dumps(body, indent=2, sort_keys=True, default=_json_default) + "\n").encode()


def _json_default(value: Any) -> Any:
    if isinstance(value, Path):
        return str(value)
    if isinstance(value, tuple):
        return list(value)
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")
