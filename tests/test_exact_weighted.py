"""Exact weighted cross-products: the same covariance to the bit whatever the blocks and their order, and
numpy's weighted covariance to rounding."""
from __future__ import annotations

from itertools import pairwise

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.summaries.base import merge_all
from scalewright.summaries.exact_weighted import ExactWeightedCrossProducts, ExactWeightedPairwise


def _data(seed: int, n: int = 400, k: int = 4) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, 5, (n, k)).astype(np.uint8)
    codes[rng.random((n, k)) < 0.05] = 255  # missing
    weights = np.exp(rng.uniform(-12, 12, n))  # weights across ten orders of magnitude
    weights[rng.random(n) < 0.03] = 0.0
    return codes, weights


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 10_000), cuts=st.lists(st.integers(1, 399), max_size=8), order=st.randoms())
def test_any_blocks_in_any_order_give_the_same_bits(seed, cuts, order):
    codes, weights = _data(seed)
    bounds = [0, *sorted(set(cuts)), len(weights)]
    parts = [ExactWeightedCrossProducts.from_codes(codes[a:b], weights[a:b]) for a, b in pairwise(bounds)]
    order.shuffle(parts)
    merged, whole = merge_all(parts), ExactWeightedCrossProducts.from_codes(codes, weights)
    mask = np.array([False, True, False, True])
    assert np.array_equal(merged.covariance(mask), whole.covariance(mask))
    assert merged.effective_n == whole.effective_n
    assert merged.sum_w == whole.sum_w
    assert merged.n_used == whole.n_used


def test_equals_numpy_weighted_covariance_and_kish():
    # reference: numpy.cov(aweights=w, ddof=1) and Kish (1965) n_eff = (sum w)^2 / sum w^2 on the rows used
    codes, weights = _data(7, n=3000)
    cross = ExactWeightedCrossProducts.from_codes(codes, weights)
    used = (codes != 255).all(axis=1) & (weights > 0)
    x = codes[used].astype(float)
    x[:, 2] *= -1  # a reversed item flips its signs
    w = weights[used]
    np.testing.assert_allclose(cross.covariance(np.array([False, False, True, False])),
                               np.cov(x.T, aweights=w), rtol=1e-12)
    assert cross.effective_n == pytest.approx(w.sum() ** 2 / (w @ w), rel=1e-13)
    assert cross.sum_w == pytest.approx(w.sum(), rel=1e-14)
    assert cross.n_used == int(used.sum())
    assert cross.n_zero_weight == int(((codes != 255).all(axis=1) & (weights == 0)).sum())


@settings(max_examples=20, deadline=None)
@given(seed=st.integers(0, 10_000), cuts=st.lists(st.integers(1, 399), max_size=8), order=st.randoms())
def test_pairwise_moments_of_any_blocks_in_any_order_are_the_same_bits(seed, cuts, order):
    codes, weights = _data(seed)
    lows = np.array([1, 1, 0, 2])
    bounds = [0, *sorted(set(cuts)), len(weights)]
    parts = [ExactWeightedPairwise.from_codes(codes[a:b], weights[a:b]) for a, b in pairwise(bounds)]
    order.shuffle(parts)
    merged, whole = merge_all(parts), ExactWeightedPairwise.from_codes(codes, weights)
    for found, expected in zip(merged.moments(lows), whole.moments(lows), strict=True):
        assert np.array_equal(found, expected, equal_nan=True)
    assert merged.n_used == whole.n_used
    if len(parts) >= 2:  # the sums of some rows subtract exactly from those of all
        rest = merged.without(parts[0])
        again = merge_all(parts[1:])
        assert np.array_equal(rest.moments(lows)[1], again.moments(lows)[1], equal_nan=True)
        assert rest.n_used == again.n_used


def test_pairwise_moments_equal_numpys_weighted_average_and_covariance():
    """Reference: numpy's ``average(weights=...)`` of each item and ``cov(aweights=..., ddof=1)`` of each pair
    over the rows answering both with a positive weight (the definition of
    ``stats.weighted.weighted_pairwise_moments``, the whole-file screen's weighted Mahalanobis centre)."""
    rng = np.random.default_rng(21)
    n, k = 700, 5
    codes = rng.integers(0, 5, size=(n, k)).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.1] = 255
    weights = rng.gamma(2.0, 0.7, n)
    weights[rng.random(n) < 0.05] = 0
    lows = np.array([1, 1, 0, 2, 1])
    means, cov = ExactWeightedPairwise.from_codes(codes, weights).moments(lows)
    values = np.where(codes == 255, np.nan, codes + lows.astype(float))
    for j in range(k):
        rows = ~np.isnan(values[:, j]) & (weights > 0)
        assert means[j] == pytest.approx(np.average(values[rows, j], weights=weights[rows]), rel=1e-14)
        for i in range(k):
            both = rows & ~np.isnan(values[:, i])
            expected = np.cov(values[both, i], values[both, j], aweights=weights[both], ddof=1)[0, 1]
            assert cov[i, j] == pytest.approx(expected, rel=1e-12, abs=1e-14)
    assert ExactWeightedPairwise.from_codes(codes, weights).n_used == int((weights > 0).sum())
    single = ExactWeightedPairwise.from_codes(codes[:1], np.array([1.5]))  # one row: no covariance
    assert np.isnan(single.moments(lows)[1]).all()
