"""Exact weighted cross-products: the same covariance to the bit whatever the blocks and their order, and
numpy's weighted covariance to rounding."""
from __future__ import annotations

from itertools import pairwise

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.summaries.base import merge_all
from scalewright.summaries.exact_weighted import ExactWeightedCrossProducts


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
