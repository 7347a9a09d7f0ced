"""Rank tests from value counts against scipy.stats on the rows."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from scalewright.stats.rank_counts import kruskal_wallis_from_counts, mann_whitney_from_counts


def _counts(sample: np.ndarray):
    return np.unique(sample, return_counts=True)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_mann_whitney_from_counts_equals_scipy(seed):
    rng = np.random.default_rng(seed)
    a = rng.integers(4, 21, size=300) / 4.0
    b = rng.integers(5, 21, size=250) / 4.0
    result = mann_whitney_from_counts(*_counts(a), *_counts(b))
    # reference: scipy.stats.mannwhitneyu, normal approximation with continuity and tie corrections
    expected = stats.mannwhitneyu(a, b, alternative="two-sided", method="asymptotic")
    np.testing.assert_allclose(result.statistic, expected.statistic, rtol=1e-12)
    np.testing.assert_allclose(result.pvalue, expected.pvalue, rtol=1e-9)


@pytest.mark.parametrize("seed", [0, 1])
def test_kruskal_wallis_from_counts_equals_scipy(seed):
    rng = np.random.default_rng(seed)
    groups = [rng.integers(low, 21, size=size) / 4.0 for low, size in ((4, 200), (5, 150), (6, 90))]
    result = kruskal_wallis_from_counts([_counts(g)[0] for g in groups], [_counts(g)[1] for g in groups])
    expected = stats.kruskal(*groups)  # reference: scipy.stats.kruskal (tie-corrected H)
    np.testing.assert_allclose(result.statistic, expected.statistic, rtol=1e-12)
    np.testing.assert_allclose(result.pvalue, expected.pvalue, rtol=1e-9)
    assert result.df == 2


def test_an_empty_group_gives_nan_not_an_error():
    result = mann_whitney_from_counts(np.array([1.0]), np.array([3]), np.array([]), np.array([], dtype=int))
    assert np.isnan(result.pvalue)
