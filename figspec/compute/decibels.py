"""Levels on their linear scale: a level in dB is converted before any fit."""

from __future__ import annotations

import numpy as np

DB_DIVISOR = {"pressure_db": 20.0, "power_db": 10.0}


def to_linear(levels: np.ndarray, scale: str) -> np.ndarray:
    """The linear quantity behind ``levels``: 10^(L/20) for a pressure-like quantity (sound
    pressure, voltage, current), 10^(L/10) for a power-like one (power, intensity), the
    levels themselves for ``linear``."""
    levels = np.asarray(levels, dtype=float)
    if scale in DB_DIVISOR:
        return 10.0 ** (levels / DB_DIVISOR[scale])
    return levels
