"""Data checks shared by the kinds with level on x (key paths relative to the panel)."""

from __future__ import annotations

import numpy as np

from figspec.data.recording import Recording
from figspec.errors import Problem
from figspec.spec.models import LevelSpec
from figspec.spec.panels import FIT_PARAMETERS


def check(rec: Recording, panel, levels: LevelSpec) -> list[Problem]:
    """A fit needs at least as many levels as parameters; a log level axis needs levels > 0."""
    shown = rec.levels if panel.levels is None else np.asarray(panel.levels, dtype=float)
    problems = []
    model = panel.fitted_model()
    if model is not None and len(shown) <= FIT_PARAMETERS[model]:
        problems.append(Problem(f"a {model} fit has {FIT_PARAMETERS[model]} parameters but the panel shows "
                                f"only {len(shown)} levels (at least {FIT_PARAMETERS[model] + 1} are needed)",
                                ("fit",), repr(model)))
    if panel.level_axis == "log" and (np.any(shown < 0) or not np.any(shown > 0)):
        problems.append(Problem("a logarithmic level axis needs levels >= 0 and some > 0 (a level of 0 is drawn "
                                "left of the log range, after an axis break)", ("level_axis",),
                                f"levels from {shown.min():g}"))
    return problems
