"""``[analysis]``: one set of analysis windows and test settings for the whole figure.

Every panel that tests a response against its baseline (the kinds with level on x) takes each
of these keys from ``[analysis]`` unless it sets its own, so two panels of one figure cannot
disagree on significance by accident. A panel that does set its own gets a note from ``check``
when it tests the same unit and level as another panel with different settings.
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, ValidationError

from figspec.spec.fields import Frozen, WindowMs
from figspec.spec.panel_base import Probability, SummaryPanel
from figspec.spec.panels import PANEL_MODELS


class AnalysisSpec(Frozen):
    """``[analysis]``: the windows and test every testing panel uses unless it sets its own."""

    response_ms: WindowMs | None = Field(None, description="Evoked window, ms from stimulus onset, [start, stop).")
    baseline_ms: WindowMs | None = Field(None, description="Baseline window, ms from onset, ending by 0, [start, stop).")
    test: Literal["wilcoxon", "none"] | None = Field(None, description="Per-level test of evoked against baseline.")
    zero_differences: Literal["drop", "keep", "split"] | None = Field(
        None, description="How trials with equal evoked and baseline values enter the signed-rank test.")
    alpha: Probability | None = Field(None, description="Significance level after correction.")
    correction: Literal["holm", "none"] | None = Field(
        None, description="Correction across a unit's levels: Holm (1979) step-down, or none.")


TESTING_MODELS = {m.model_fields["kind"].annotation.__args__[0]: m for m in PANEL_MODELS if issubclass(m, SummaryPanel)}
COMPARED = ("response_ms", "baseline_ms", "test", "zero_differences", "alpha", "correction")


def with_analysis(data: dict[str, Any]) -> dict[str, Any]:
    """The parsed spec with each testing panel's missing keys filled in from ``[analysis]``. An
    ``[analysis]`` table that is not valid is left for the whole spec's validation to report."""
    table = data.get("analysis")
    if not isinstance(table, dict) or not isinstance(data.get("panels"), list):
        return data
    try:
        analysis = AnalysisSpec.model_validate(table)
    except ValidationError:
        return data
    given = analysis.model_dump(exclude_none=True)
    panels = []
    for panel in data["panels"]:
        model = TESTING_MODELS.get(panel.get("kind")) if isinstance(panel, dict) else None
        if model is not None:
            panel = {**{k: list(v) if isinstance(v, tuple) else v for k, v in given.items()
                        if k in model.model_fields and k not in panel}, **panel}
        panels.append(panel)
    return {**data, "panels": panels}


def settings_of(panel) -> dict[str, Any]:
    """The test settings a panel uses (only the keys its kind has)."""
    return {k: getattr(panel, k) for k in COMPARED if k in type(panel).model_fields}


def disagreements(panels: list) -> list[str]:
    """Notes for pairs of testing panels that test the same unit and level with different windows
    or test settings."""
    testing = [(i, p) for i, p in enumerate(panels) if isinstance(p, SummaryPanel) and getattr(p, "test", "wilcoxon") != "none"]
    notes = []
    for a, (i, p) in enumerate(testing):
        for j, q in testing[a + 1:]:
            units_p, units_q = set(p.unit_names()), set(q.unit_names())
            same_units = None in units_p or None in units_q or units_p & units_q
            same_levels = p.levels is None or q.levels is None or set(p.levels) & set(q.levels)
            sp, sq = settings_of(p), settings_of(q)
            differ = [k for k in sp if k in sq and sp[k] != sq[k]]
            if same_units and same_levels and differ:
                shown = "; ".join(f"{k} {_text(sp[k])} vs {_text(sq[k])}" for k in differ)
                notes.append(f"panels[{i}] ({p.name}) and panels[{j}] ({q.name}) test the same units and levels with "
                             f"different settings ({shown}): significance may disagree between them; set them once "
                             "in [analysis]")
    return notes


def _text(value) -> str:
    return f"[{value[0]:g}, {value[1]:g}]" if isinstance(value, tuple) else f"{value!r}" if isinstance(value, str) else f"{value:g}"
