"""Sea-state code from significant wave height (WMO code table 3700).

The World Meteorological Organization's *Manual on Codes* (WMO-No. 306),
code table 3700 "State of the sea", sorts the sea into ten codes by wave
height. wavebench applies the bands to the significant wave height ``Hs``
(``hs_m``), as is common practice for specifying test conditions ("sea
state 3"). The table's heights refer to well-developed wind waves of the
open sea; swell and mixed seas are outside what a single code can describe.

======  ================  =================
code    height [m]        description
======  ================  =================
0       0                 Calm (glassy)
1       0 -- 0.1          Calm (rippled)
2       0.1 -- 0.5        Smooth (wavelets)
3       0.5 -- 1.25       Slight
4       1.25 -- 2.5       Moderate
5       2.5 -- 4          Rough
6       4 -- 6            Very rough
7       6 -- 9            High
8       9 -- 14           Very high
9       over 14           Phenomenal
======  ================  =================

A height exactly on a band edge belongs to the lower code (upper bounds are
inclusive): 0.5 m is code 2, 4 m is code 5.

References
----------
WMO-No. 306, Manual on Codes, Volume I.1, Part A, code table 3700 "State of
the sea" (bands and terms; the lower-code rule for exact bounding heights is
the table's note, quoted from memory and consistent with WMO-derived
registries that define code 1 as "greater than 0 and less than or equal to
0.10 m").
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError

__all__ = ["SEA_STATE_BANDS", "SeaStateBand", "sea_state_band", "sea_state_code"]


class SeaStateBand(NamedTuple):
    """One row of WMO code table 3700.

    Attributes
    ----------
    lower_m : float
        Lower height bound [m] (exclusive, except for code 0).
    upper_m : float
        Upper height bound [m] (inclusive); ``inf`` for code 9.
    description : str
        The WMO term for the state of the sea.
    """

    lower_m: float
    upper_m: float
    description: str


#: Rows of WMO code table 3700, indexed by code 0..9.
SEA_STATE_BANDS: tuple[SeaStateBand, ...] = (
    SeaStateBand(0.0, 0.0, "Calm (glassy)"),
    SeaStateBand(0.0, 0.1, "Calm (rippled)"),
    SeaStateBand(0.1, 0.5, "Smooth (wavelets)"),
    SeaStateBand(0.5, 1.25, "Slight"),
    SeaStateBand(1.25, 2.5, "Moderate"),
    SeaStateBand(2.5, 4.0, "Rough"),
    SeaStateBand(4.0, 6.0, "Very rough"),
    SeaStateBand(6.0, 9.0, "High"),
    SeaStateBand(9.0, 14.0, "Very high"),
    SeaStateBand(14.0, float("inf"), "Phenomenal"),
)

# Inclusive upper bounds of codes 0..8; code 9 is everything above 14 m.
_UPPER_EDGES_M = np.array([band.upper_m for band in SEA_STATE_BANDS[:-1]])


def sea_state_code(hs_m: ArrayLike) -> int | NDArray[np.int64]:
    """WMO sea-state code (0..9) of a significant wave height.

    Parameters
    ----------
    hs_m : float or array_like of shape (...)
        Significant wave height [m], finite and >= 0.

    Returns
    -------
    int or ndarray of int64 with the shape of ``hs_m``
        Code of WMO code table 3700; a height on a band edge gets the lower
        code.

    Raises
    ------
    ParameterError
        If any height is negative, NaN or infinite, or not a number.

    Examples
    --------
    >>> sea_state_code(1.25)
    3
    >>> sea_state_code([0.0, 0.05, 2.0, 20.0]).tolist()
    [0, 1, 4, 9]
    """
    allowed = "must be a finite number >= 0 (significant wave height in m)"
    if isinstance(hs_m, (bool, str, np.bool_)) or hs_m is None:
        raise ParameterError("hs_m", hs_m, allowed)
    try:
        hs = np.asarray(hs_m, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError("hs_m", hs_m, allowed) from None
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(hs) & (hs >= 0.0)
    if not np.all(ok):
        raise ParameterError("hs_m", hs if hs.ndim else float(hs), allowed)
    # side="left" gives the first edge >= hs, i.e. edge[k-1] < hs <= edge[k]:
    # upper bounds inclusive.
    codes = np.searchsorted(_UPPER_EDGES_M, hs, side="left").astype(np.int64)
    if codes.ndim == 0:
        return int(codes)
    return codes


def sea_state_band(code: int) -> SeaStateBand:
    """Height band and WMO description of a sea-state code.

    Parameters
    ----------
    code : int
        Code 0..9 of WMO code table 3700.

    Returns
    -------
    SeaStateBand
        ``(lower_m, upper_m, description)``: heights satisfying
        ``lower_m < Hs <= upper_m`` have this code (code 0 is exactly 0 m;
        code 9 has ``upper_m = inf``).

    Raises
    ------
    ParameterError
        If ``code`` is not an integer in 0..9.

    Examples
    --------
    >>> sea_state_band(3)
    SeaStateBand(lower_m=0.5, upper_m=1.25, description='Slight')
    """
    if (
        isinstance(code, (bool, np.bool_))
        or not isinstance(code, (int, np.integer))
        or not 0 <= int(code) <= 9
    ):
        raise ParameterError("code", code, "must be an integer sea-state code 0..9")
    return SEA_STATE_BANDS[int(code)]
