"""The compiled branch-free sincos against numpy's libm-backed sin and cos."""

import numpy as np
import pytest

from wavebench.core.trig import sincos_array


@pytest.mark.parametrize("scale", [1.0, 10.0, 1.0e3, 1.0e5])
def test_sincos_matches_numpy(scale: float) -> None:
    # numpy.sin / numpy.cos (reference library, correctly rounded to < 1 ulp):
    # the fdlibm kernels with Cody-Waite reduction stay within 2 ulp of 1.
    x = np.random.default_rng(12).uniform(-scale, scale, 200_000)
    s, c = sincos_array(x)
    assert np.max(np.abs(s - np.sin(x))) <= 4.5e-16
    assert np.max(np.abs(c - np.cos(x))) <= 4.5e-16


def test_sincos_quadrant_edges() -> None:
    # exact values at multiples of pi/2 (to the rounding of pi itself)
    x = np.array([0.0, 0.5 * np.pi, np.pi, 1.5 * np.pi, -0.5 * np.pi, 2.0 * np.pi])
    s, c = sincos_array(x)
    np.testing.assert_allclose(s, [0, 1, 0, -1, -1, 0], atol=1e-15)
    np.testing.assert_allclose(c, [1, 0, -1, 0, 0, 1], atol=1e-15)
    # Pythagorean identity everywhere
    y = np.linspace(-50.0, 50.0, 10_001)
    s, c = sincos_array(y)
    np.testing.assert_allclose(s**2 + c**2, 1.0, atol=5e-16)
