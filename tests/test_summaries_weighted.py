"""Weighted summaries and pair tables: merging is associative and order-independent (exact for counts,
to 1e-12 for sums of float weights), and the weighted covariance is numpy's ``cov(aweights=...)``."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.answer_codes import MISSING
from scalewright.stats.pair_tables import pair_tables
from scalewright.summaries import ScoreCounts, Summary, merge_all
from scalewright.summaries.weighted import (
    WeightedAnswers,
    WeightedCrossProducts,
    WeightedScoreCounts,
    WeightReading,
    block_weights,
)

LOW, HIGH = 1, 5
REVERSED = np.array([False, True, False])


def _data(rng: np.random.Generator, n: int) -> tuple[np.ndarray, np.ndarray]:
    codes = rng.integers(0, HIGH - LOW + 1, size=(n, 3)).astype(np.uint8)
    codes[rng.random((n, 3)) < 0.1] = MISSING
    weights = rng.gamma(2.0, 0.5, n)
    weights[rng.random(n) < 0.1] = 0.0
    return codes, weights


def _summary(codes: np.ndarray, weights: np.ndarray) -> Summary:
    return Summary({"cross": WeightedCrossProducts.from_codes(codes, weights),
                    "answers": WeightedAnswers.from_codes(codes, weights, HIGH - LOW + 1),
                    "scores": WeightedScoreCounts.from_codes(codes, weights, low=LOW, high=HIGH, reversed_mask=REVERSED),
                    "tables": pair_tables(np.ascontiguousarray(codes), HIGH - LOW + 1)})


def _same(a: Summary, b: Summary) -> None:
    for name in a.members:
        for field, value in vars(a[name]).items():
            other = getattr(b[name], field)
            if isinstance(value, np.ndarray) and value.dtype.kind in "iu":
                assert np.array_equal(value, other), (name, field)  # counts: exact
            else:
                assert np.allclose(value, other, rtol=1e-12, atol=1e-12), (name, field)


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), cuts=st.lists(st.integers(0, 80), min_size=1, max_size=5),
       order=st.randoms(use_true_random=False))
def test_weighted_merging_is_associative_and_order_independent(seed, cuts, order):
    codes, weights = _data(np.random.default_rng(seed), 80)
    bounds = [0, *sorted(cuts), 80]
    blocks = [_summary(codes[lo:hi], weights[lo:hi]) for lo, hi in zip(bounds, bounds[1:], strict=False)]
    whole = _summary(codes, weights)
    _same(merge_all(blocks), whole)
    shuffled = list(blocks)
    order.shuffle(shuffled)
    _same(merge_all(shuffled), whole)
    if len(blocks) >= 3:
        a, b, c = blocks[0], blocks[1], merge_all(blocks[2:])
        _same(a.merge(b).merge(c), a.merge(b.merge(c)))


def test_weighted_covariance_is_numpys():
    # reference: numpy.cov(aweights=w, ddof=1) of the keyed answers of the complete rows with w > 0
    codes, weights = _data(np.random.default_rng(4), 500)
    cross = WeightedCrossProducts.from_codes(codes, weights)
    complete = (codes != MISSING).all(axis=1) & (weights > 0)
    keyed = codes[complete].astype(float) + LOW
    keyed[:, REVERSED] = LOW + HIGH - keyed[:, REVERSED]
    expected = np.cov(keyed, rowvar=False, aweights=weights[complete], ddof=1)
    assert np.allclose(cross.covariance(REVERSED), expected, rtol=1e-12, atol=1e-14)
    assert cross.n_used == int(complete.sum())


def test_weighted_score_values_give_numpys_weighted_mean():
    # reference: numpy.average(weights=w) of the scores of the rows with a score and w > 0
    codes, weights = _data(np.random.default_rng(5), 400)
    counts = ScoreCounts.from_codes(codes, low=LOW, high=HIGH, reversed_mask=REVERSED, required=2)
    values, sum_w, _, rows = WeightedScoreCounts.from_codes(codes, weights, low=LOW, high=HIGH,
                                                            reversed_mask=REVERSED).values(counts)
    keyed = np.where(codes == MISSING, np.nan, codes.astype(float) + LOW)
    keyed[:, REVERSED] = LOW + HIGH - keyed[:, REVERSED]
    answered = np.isfinite(keyed).sum(axis=1)
    scores = np.where(answered >= 2, np.nanmean(keyed, axis=1), np.nan)
    usable = np.isfinite(scores) & (weights > 0)
    assert float(sum_w @ values) / sum_w.sum() == pytest.approx(np.average(scores[usable], weights=weights[usable]),
                                                                rel=1e-12)
    assert int(rows.sum()) == int(usable.sum())


def test_weight_reading_counts_kinds_and_keeps_the_first_places_in_row_order():
    import pandas as pd

    first = block_weights(pd.Series(["1", "x", "", "-2", "0", "inf"]), (0, 2, ""))
    second = block_weights(pd.Series(["0", "y"]), (0, 8, ""))
    merged = second[1].merge(first[1])
    assert merged.refused == {"not_numeric": 2, "missing": 1, "negative": 1, "not_finite": 1}
    assert [place[1] for place, _, _ in merged.first] == [3, 4, 5, 7, 9]
    assert merged.n_zero_weight == 2
    assert first[0].tolist() == [1.0, 0.0, 0.0, 0.0, 0.0, 0.0]
    assert isinstance(merged, WeightReading)
