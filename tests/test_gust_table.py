"""The compiled gust record against the plain sum of cosines it replaces in the loop."""

from __future__ import annotations

import numpy as np
import pytest

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sea.gust_table import REANCHOR_EVERY, gust_table, wind_speed_table
from wavebench.sea.wind import WindParams, gust_speed, init_wind, wind_speed


def _state(trials):
    return init_wind(WindParams(speed_mps=9.0, direction_from_deg=200.0), TrialStreams(17, trials))


def test_table_equals_the_cosine_sum_across_reanchoring() -> None:
    st = _state(range(5))
    n = 3 * REANCHOR_EVERY + 7
    tab = gust_table(st, 2.5, 0.1, n)
    for j in (0, 1, REANCHOR_EVERY - 1, REANCHOR_EVERY, 2 * REANCHOR_EVERY + 3, n - 1):
        np.testing.assert_allclose(tab[:, j], gust_speed(st, 2.5 + j * 0.1), rtol=0, atol=1e-11)
    np.testing.assert_allclose(wind_speed_table(st, 2.5, 0.1, 4)[:, 3], wind_speed(st, 2.8), rtol=0, atol=1e-11)


def test_a_trial_alone_equals_its_row_in_a_batch() -> None:
    batch = gust_table(_state(range(6)), 0.0, 0.1, 500)
    alone = gust_table(_state([4]), 0.0, 0.1, 500)
    np.testing.assert_array_equal(alone[0], batch[4])


def test_bad_grid_is_rejected() -> None:
    with pytest.raises(ParameterError, match="dt_s"):
        gust_table(_state([0]), 0.0, 0.0, 10)
    with pytest.raises(ParameterError, match="n_samples"):
        gust_table(_state([0]), 0.0, 0.1, 0)
