"""Tests of wavebench.sea.seastate against WMO-No. 306 code table 3700.

Table rows (code: height band in m, term), WMO-No. 306 Manual on Codes, Vol. I.1,
Part A, code table 3700 "State of the sea": 0: 0 Calm (glassy); 1: 0-0.1 Calm
(rippled); 2: 0.1-0.5 Smooth (wavelets); 3: 0.5-1.25 Slight; 4: 1.25-2.5
Moderate; 5: 2.5-4 Rough; 6: 4-6 Very rough; 7: 6-9 High; 8: 9-14 Very high;
9: over 14 Phenomenal. A height exactly on a band edge takes the lower code
(the table's note; from memory, consistent with WMO-derived registries that
define code 1 as "> 0 and <= 0.10 m").
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from wavebench.core.errors import ParameterError
from wavebench.sea.seastate import SEA_STATE_BANDS, sea_state_band, sea_state_code


@pytest.mark.parametrize(
    ("hs_m", "code"),
    [
        (0.0, 0),  # WMO-No. 306 code table 3700: 0 m is code 0, calm (glassy)
        (0.01, 1),  # WMO-No. 306 code table 3700: 0-0.1 m is code 1
        (0.1, 1),  # WMO-No. 306 code table 3700: upper bound 0.1 m inclusive -> code 1
        (0.11, 2),  # WMO-No. 306 code table 3700: 0.1-0.5 m is code 2
        (0.5, 2),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (0.51, 3),  # WMO-No. 306 code table 3700: 0.5-1.25 m is code 3
        (1.25, 3),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (1.26, 4),  # WMO-No. 306 code table 3700: 1.25-2.5 m is code 4
        (2.5, 4),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (2.51, 5),  # WMO-No. 306 code table 3700: 2.5-4 m is code 5
        (4.0, 5),  # WMO-No. 306 code table 3700: note example (from memory) 4 m -> 5
        (4.01, 6),  # WMO-No. 306 code table 3700: 4-6 m is code 6
        (6.0, 6),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (6.01, 7),  # WMO-No. 306 code table 3700: 6-9 m is code 7
        (9.0, 7),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (9.01, 8),  # WMO-No. 306 code table 3700: 9-14 m is code 8
        (14.0, 8),  # WMO-No. 306 code table 3700: bounding height to the lower code
        (14.1, 9),  # WMO-No. 306 code table 3700: over 14 m is code 9, phenomenal
        (30.0, 9),  # WMO-No. 306 code table 3700: over 14 m is code 9
    ],
)
def test_band_edges(hs_m, code):
    result = sea_state_code(hs_m)
    assert result == code
    assert isinstance(result, int)


# WMO-No. 306 code table 3700: inclusive upper bounds of codes 0..8 [m].
WMO_UPPER_M = [0.0, 0.1, 0.5, 1.25, 2.5, 4.0, 6.0, 9.0, 14.0]


def test_just_above_each_edge_is_the_next_code():
    # WMO-No. 306 code table 3700: any height above a band's upper bound is in the next band.
    for code, upper in enumerate(WMO_UPPER_M):
        assert sea_state_code(upper) == code
        assert sea_state_code(math.nextafter(upper, math.inf)) == code + 1


def test_vectorised_codes_keep_shape():
    # WMO-No. 306 code table 3700 bands, applied elementwise.
    hs = np.array([[0.0, 0.3, 1.0], [2.0, 5.0, 20.0]])
    codes = sea_state_code(hs)
    assert codes.shape == (2, 3)
    assert codes.dtype == np.int64
    np.testing.assert_array_equal(codes, [[0, 2, 3], [4, 6, 9]])
    assert sea_state_code([]).shape == (0,)


@pytest.mark.parametrize(
    ("code", "lower", "upper", "term"),
    [
        (0, 0.0, 0.0, "Calm (glassy)"),  # WMO-No. 306 code table 3700
        (1, 0.0, 0.1, "Calm (rippled)"),  # WMO-No. 306 code table 3700
        (2, 0.1, 0.5, "Smooth (wavelets)"),  # WMO-No. 306 code table 3700
        (3, 0.5, 1.25, "Slight"),  # WMO-No. 306 code table 3700
        (4, 1.25, 2.5, "Moderate"),  # WMO-No. 306 code table 3700
        (5, 2.5, 4.0, "Rough"),  # WMO-No. 306 code table 3700
        (6, 4.0, 6.0, "Very rough"),  # WMO-No. 306 code table 3700
        (7, 6.0, 9.0, "High"),  # WMO-No. 306 code table 3700
        (8, 9.0, 14.0, "Very high"),  # WMO-No. 306 code table 3700
        (9, 14.0, math.inf, "Phenomenal"),  # WMO-No. 306 code table 3700: "over 14"
    ],
)
def test_band_rows(code, lower, upper, term):
    band = sea_state_band(code)
    assert band == (lower, upper, term)
    assert (band.lower_m, band.upper_m, band.description) == (lower, upper, term)
    assert SEA_STATE_BANDS[code] == band
    assert sea_state_band(np.int64(code)) == band


def test_band_midpoints_round_trip():
    # Consistency of the two functions over the WMO-No. 306 code table 3700 rows.
    for code in range(1, 9):
        lo, hi, _ = sea_state_band(code)
        assert sea_state_code(0.5 * (lo + hi)) == code


@pytest.mark.parametrize(
    "bad", [-0.1, -1e-12, float("nan"), float("inf"), "1.0", True, None, np.array([1.0, np.nan])]
)
def test_bad_heights_rejected_naming_hs_m(bad):
    with pytest.raises(ParameterError) as info:
        sea_state_code(bad)
    assert info.value.field == "hs_m"
    assert "hs_m" in str(info.value)
    assert ">= 0" in str(info.value)


def test_one_bad_element_in_a_batch_is_rejected():
    hs = np.full(1000, 1.0)
    hs[517] = -2.0
    with pytest.raises(ParameterError, match="hs_m"):
        sea_state_code(hs)


@pytest.mark.parametrize("bad", [-1, 10, 3.0, True, "3", None])
def test_bad_codes_rejected(bad):
    with pytest.raises(ParameterError) as info:
        sea_state_band(bad)
    assert info.value.field == "code"
