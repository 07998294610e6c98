"""Image comparison: figspec's RMS against matplotlib's own, and the difference image."""

import io

import numpy as np
from matplotlib.testing.compare import calculate_rms
from PIL import Image

from figspec.output.compare import difference_image, rms, rms_difference


def png(array):
    buffer = io.BytesIO()
    Image.fromarray(array.astype(np.uint8), "RGB").save(buffer, format="PNG")
    return buffer.getvalue()


def test_rms_equals_matplotlibs_calculate_rms(rng):
    # reference: matplotlib.testing.compare.calculate_rms, RMS over every pixel and channel (0-255),
    # on int16 arrays as matplotlib's compare_images passes them
    a = rng.integers(0, 256, (40, 30, 3))
    b = np.clip(a + rng.integers(-20, 21, a.shape), 0, 255)
    assert rms(a.astype(float), b.astype(float)) == np.float64(calculate_rms(a.astype(np.int16), b.astype(np.int16)))


def test_a_difference_is_found_and_drawn(tmp_path, rng):
    a = rng.integers(0, 256, (20, 20, 3))
    b = a.copy()
    b[5:8, 5:8] = 0
    (tmp_path / "a.png").write_bytes(png(a))
    (tmp_path / "b.png").write_bytes(png(b))
    result = rms_difference(tmp_path / "a.png", tmp_path / "b.png", 0.5, tmp_path / "d.png")
    assert not result.passed and result.rms > 0.5
    diff = np.asarray(Image.open(tmp_path / "d.png"))
    assert diff[6, 6].max() > 0 and diff[0, 0].max() == 0
    same = rms_difference(tmp_path / "a.png", tmp_path / "a.png", 0.0)
    assert same.passed and same.rms == 0.0
