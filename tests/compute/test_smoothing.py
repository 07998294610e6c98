import numpy as np
import pytest
from scipy.ndimage import gaussian_filter1d

from figspec.compute.smoothing import causal_smooth, causal_weights, gaussian_smooth


@pytest.mark.parametrize("sigma", [0.7, 1.0, 2.5, 6.0])
def test_gaussian_equals_scipy_gaussian_filter1d(rng, sigma):
    # reference: scipy.ndimage.gaussian_filter1d, mode='reflect', truncate=4.0 (its defaults)
    values = rng.poisson(3.0, size=(3, 40)).astype(float)
    ref = gaussian_filter1d(values, sigma, axis=-1, mode="reflect", truncate=4.0)
    np.testing.assert_allclose(gaussian_smooth(values, sigma), ref, rtol=1e-12, atol=1e-12)


def test_causal_kernel_never_moves_rate_earlier():
    impulse = np.zeros(30)
    impulse[10] = 1.0
    out = causal_smooth(impulse, 2.0)
    assert np.all(out[:10] == 0)
    assert out[10] > 0
    assert causal_weights(2.0).sum() == pytest.approx(1.0)
    assert out.sum() == pytest.approx(1.0, abs=1e-3)   # mass kept (tail cut at 6 time constants)


def test_causal_smoothing_of_a_constant_is_the_constant():
    assert causal_smooth(np.full(20, 7.0), 3.0) == pytest.approx(np.full(20, 7.0))
