"""Reproducible resampling: every random draw is seeded from the panel's seed, the unit and the
level, and trials are taken in the order of their keys, so a bootstrap interval depends neither
on the order of rows in the data files nor on which other units share the panel."""

from __future__ import annotations

import zlib

import numpy as np


def generator(seed: int, unit: str, level: float) -> np.random.Generator:
    """A generator for one (unit, level) of a panel: numpy's SeedSequence mixes the panel seed,
    a CRC-32 of the unit name and the level (in thousandths) into independent streams."""
    level_code = int(round(float(level) * 1000)) % (1 << 63)
    return np.random.default_rng(np.random.SeedSequence([int(seed) % (1 << 63), zlib.crc32(unit.encode()), level_code]))


def key_order(keys) -> np.ndarray:
    """Indices that put trials in the order of their keys (as text, so any key type sorts)."""
    return np.argsort(np.asarray([str(k) for k in keys]), kind="stable")
