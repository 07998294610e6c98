"""Reproducible resampling: every random draw is seeded from the panel's seed, the unit and the
level, and trials are taken in presentation order, so a bootstrap interval depends neither on
the order of rows in the data files, nor on how trial keys are spelled, nor on which other
units share the panel."""

from __future__ import annotations

import zlib

import numpy as np


def generator(seed: int, unit: str, level: float) -> np.random.Generator:
    """A generator for one (unit, level) of a panel: numpy's SeedSequence mixes the panel seed,
    a CRC-32 of the unit name and the level (in thousandths) into independent streams."""
    level_code = int(round(float(level) * 1000)) % (1 << 63)
    return np.random.default_rng(np.random.SeedSequence([int(seed) % (1 << 63), zlib.crc32(unit.encode()), level_code]))


def presentation_order(sequence: np.ndarray) -> np.ndarray:
    """Indices that put trials in presentation order (the recording's ``sequence``: by time on a
    session clock, else by key, numbers as numbers), so the same trials are resampled alike
    whatever the file format, the spelling of their keys or the order of rows."""
    return np.argsort(np.asarray(sequence), kind="stable")
