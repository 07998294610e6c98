"""Colour-vision deficiency simulation and colour distances, for the journal check.

Simulation after Machado, Oliveira & Fernandes (2009), IEEE TVCG 15(6):1291-1298, with the
authors' tabulated matrices for severity 1.0, applied to linear RGB (sRGB decoded by IEC
61966-2-1). Distances are CIE 1976 L*a*b* differences (D65 white).
"""

from __future__ import annotations

import numpy as np

MACHADO_2009 = {
    "protanopia": np.array([[0.152286, 1.052583, -0.204868],
                            [0.114503, 0.786281, 0.099216],
                            [-0.003882, -0.048116, 1.051998]]),
    "deuteranopia": np.array([[0.367322, 0.860646, -0.227968],
                              [0.280085, 0.672501, 0.047413],
                              [-0.011820, 0.042940, 0.968881]]),
}

# linear sRGB -> CIE XYZ (D65), IEC 61966-2-1
SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805],
                        [0.2126, 0.7152, 0.0722],
                        [0.0193, 0.1192, 0.9505]])
D65 = np.array([0.95047, 1.0, 1.08883])


def to_linear(srgb: np.ndarray) -> np.ndarray:
    srgb = np.asarray(srgb, dtype=float)
    return np.where(srgb <= 0.04045, srgb / 12.92, ((srgb + 0.055) / 1.055) ** 2.4)


def to_srgb(linear: np.ndarray) -> np.ndarray:
    linear = np.clip(np.asarray(linear, dtype=float), 0.0, 1.0)
    return np.where(linear <= 0.0031308, 12.92 * linear, 1.055 * linear ** (1 / 2.4) - 0.055)


def simulate(srgb: np.ndarray, deficiency: str) -> np.ndarray:
    """sRGB colours (..., 3) in 0-1 as seen with ``deficiency`` (protanopia, deuteranopia)."""
    return to_srgb(to_linear(srgb) @ MACHADO_2009[deficiency].T)


def lab(srgb: np.ndarray) -> np.ndarray:
    xyz = to_linear(srgb) @ SRGB_TO_XYZ.T / D65
    f = np.where(xyz > (6 / 29) ** 3, np.cbrt(xyz), xyz / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.stack([116 * f[..., 1] - 16, 500 * (f[..., 0] - f[..., 1]), 200 * (f[..., 1] - f[..., 2])], axis=-1)


def delta_e(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """CIE 1976 colour difference between sRGB colours."""
    return np.linalg.norm(lab(a) - lab(b), axis=-1)
