"""A branch-free float64 sine/cosine for compiled kernels.

The wave sum evaluates two trigonometric functions per component per
derivative evaluation; compiled with the C library's ``sin``/``cos`` the
loop cannot be vectorised and the trigonometry dominates the cost of a
trial step. :func:`sincos` is written so that LLVM can vectorise it across
components: Cody–Waite reduction by pi/2 in two parts, then the minimax
kernel polynomials of fdlibm on [-pi/4, pi/4], and the quadrant handled with
arithmetic selects instead of branches.

Accuracy: within a few units in the last place of :func:`numpy.sin` /
:func:`numpy.cos` for ``|x| < 1e5`` (checked in ``tests/test_trig.py``);
the phases of a wave sum over a run stay far below that bound.

References
----------
Cody, W. J. & Waite, W. (1980). Software Manual for the Elementary
Functions. Prentice-Hall — argument reduction. Sun Microsystems fdlibm 5.3,
``k_sin.c`` and ``k_cos.c`` — the kernel polynomial coefficients (freely
distributable, used here as published constants).
"""

from __future__ import annotations

import numba
import numpy as np

__all__ = ["sincos", "sincos_array"]

# pi/2 split in two parts: PIO2_1 has 33 significant bits, so q * PIO2_1 is
# exact for |q| < 2^20 (fdlibm's pio2_1); PIO2_2 is the rounded remainder,
# whose own rounding (~2e-21) costs |q| * 2e-21 rad, below 1e-16 for the
# |x| < 1e5 stated above.
_PIO2_1 = 1.5707963267341256
_PIO2_2 = 6.077100506506192e-11
_TWO_OVER_PI = 0.6366197723675814

# fdlibm k_sin.c
_S1 = -1.66666666666666324348e-01
_S2 = 8.33333333332248946124e-03
_S3 = -1.98412698298579493134e-04
_S4 = 2.75573137070700676789e-06
_S5 = -2.50507602534068634195e-08
_S6 = 1.58969099521155010221e-10
# fdlibm k_cos.c
_C1 = 4.16666666666666019037e-02
_C2 = -1.38888888888741095749e-03
_C3 = 2.48015872894767294178e-05
_C4 = -2.75573143513906633035e-07
_C5 = 2.08757232129817482790e-09
_C6 = -1.13596475577881948265e-11


@numba.njit(inline="always", cache=True)
def sincos(x: float) -> tuple[float, float]:
    """Sine and cosine of ``x`` [rad] without branches.

    Parameters
    ----------
    x : float
        Angle [rad], ``|x| < 1e5`` for full accuracy.

    Returns
    -------
    (float, float)
        ``(sin x, cos x)``.
    """
    q = np.floor(x * _TWO_OVER_PI + 0.5)
    r = (x - q * _PIO2_1) - q * _PIO2_2
    z = r * r
    sin_r = r + r * z * (_S1 + z * (_S2 + z * (_S3 + z * (_S4 + z * (_S5 + z * _S6)))))
    cos_r = 1.0 - 0.5 * z + z * z * (_C1 + z * (_C2 + z * (_C3 + z * (_C4 + z * (_C5 + z * _C6)))))
    # Quadrant n = q mod 4 in {0, 1, 2, 3} as hi = n // 2 and odd = n % 2, as floats.
    n = q - 4.0 * np.floor(q * 0.25)
    hi = np.floor(n * 0.5)
    odd = n - 2.0 * hi
    s = sin_r + odd * (cos_r - sin_r)  # cos_r in odd quadrants
    c = cos_r + odd * (sin_r - cos_r)
    # sin < 0 in quadrants 2, 3 (hi = 1); cos < 0 in quadrants 1, 2 (odd xor hi).
    return (1.0 - 2.0 * hi) * s, (1.0 - 2.0 * (odd + hi - 2.0 * odd * hi)) * c


@numba.njit(cache=True)
def sincos_array(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Elementwise :func:`sincos` of a 1-D array (for tests and tools).

    Parameters
    ----------
    x : ndarray of shape (n,)
        Angles [rad].

    Returns
    -------
    (ndarray, ndarray)
        Sines and cosines, each of shape (n,).
    """
    s = np.empty_like(x)
    c = np.empty_like(x)
    for i in range(x.shape[0]):
        s[i], c[i] = sincos(x[i])
    return s, c
