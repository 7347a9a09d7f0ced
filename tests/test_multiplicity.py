"""Holm's adjusted p-values against statsmodels and pingouin, computed live."""
from __future__ import annotations

from unittest import mock

import numpy as np
import pingouin as pg
from hypothesis import given, settings
from hypothesis import strategies as st
from statsmodels.stats.multitest import multipletests

from scalewright.stats.multiplicity import holm_adjusted


@settings(max_examples=80, deadline=None)
@given(p=st.lists(st.floats(0, 1), min_size=1, max_size=12))
def test_holm_equals_statsmodels_and_pingouin(p):
    values = np.array(p)
    # references: statsmodels multipletests(method="holm") and pingouin multicomp(method="holm")
    with mock.patch("gc.collect", return_value=0):
        # multipletests runs a full garbage collection on every Holm call (0.3-0.6 s in a test session's
        # heap); it changes nothing in the result
        reference = multipletests(values, method="holm")[1]
    np.testing.assert_allclose(holm_adjusted(values), reference, rtol=1e-12)
    np.testing.assert_allclose(holm_adjusted(values), pg.multicomp(values, method="holm")[1], rtol=1e-12)


def test_missing_p_values_stay_missing_and_leave_the_family():
    adjusted = holm_adjusted([0.01, np.nan, 0.04])
    # two tests in the family (hand-worked): .01 x 2 = .02, then max(.02, .04 x 1) = .04
    np.testing.assert_allclose(adjusted[[0, 2]], [0.02, 0.04])
    assert np.isnan(adjusted[1])
    assert np.isnan(holm_adjusted([np.nan])).all()
