"""Mergeable summaries: merging blocks equals summarising the whole, in any order and grouping."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.answer_codes import MISSING, ItemAnswers
from scalewright.stats.coded import listwise_covariance, pairwise_covariance
from scalewright.summaries import (
    AnswerCounts,
    CategoryCounts,
    Keyed,
    ListwiseCrossProducts,
    PairwiseCrossProducts,
    ScoreCounts,
    Summary,
    merge_all,
)
from scalewright.summaries.scores import moments_from_counts, quantiles_from_counts

LOW, HIGH = 1, 5
REVERSED = np.array([False, True, False, False])


def _codes(rng: np.random.Generator, n: int, k: int = 4, missing: float = 0.1) -> np.ndarray:
    codes = rng.integers(0, HIGH - LOW + 1, size=(n, k)).astype(np.uint8)
    codes[rng.random((n, k)) < missing] = MISSING
    return codes


def _summary(codes: np.ndarray, groups: np.ndarray) -> Summary:
    def scale(rows: np.ndarray) -> Summary:
        part = codes[rows]
        return Summary({
            "answers": AnswerCounts.from_codes(part, HIGH - LOW + 1),
            "listwise": ListwiseCrossProducts.from_codes(part, span=HIGH - LOW),
            "pairwise": PairwiseCrossProducts.from_codes(part, span=HIGH - LOW),
            "scores": ScoreCounts.from_codes(part, low=LOW, high=HIGH, reversed_mask=REVERSED, required=3),
        })
    return Summary({"all": scale(np.arange(len(codes))),
                    "by_group": Keyed({level: scale(np.flatnonzero(groups == level)) for level in np.unique(groups)}),
                    "groups": CategoryCounts.from_values(pd.Series(groups))})


def _as_plain(summary: Summary) -> dict:
    """Every number of a summary as plain Python, to compare two summaries."""
    def plain(part):
        if isinstance(part, Summary):
            return {name: plain(member) for name, member in part.members.items()}
        if isinstance(part, Keyed):
            return {key: plain(member) for key, member in part.items()}
        if isinstance(part, CategoryCounts):
            return (dict(sorted(part.counts.items())), part.missing)
        fields = {name: value for name, value in vars(part).items()}
        return {name: (value.tolist() if isinstance(value, np.ndarray) else value) for name, value in fields.items()}
    return plain(summary)


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), cuts=st.lists(st.integers(0, 60), min_size=1, max_size=5),
       order=st.randoms(use_true_random=False))
def test_merging_is_associative_and_order_independent(seed, cuts, order):
    rng = np.random.default_rng(seed)
    codes = _codes(rng, 60)
    groups = rng.choice(np.array(["a", "b", "c"]), size=60)
    bounds = [0, *sorted(cuts), 60]
    blocks = [_summary(codes[lo:hi], groups[lo:hi]) for lo, hi in zip(bounds, bounds[1:], strict=False)]
    whole = _as_plain(_summary(codes, groups))
    assert _as_plain(merge_all(blocks)) == whole  # a balanced tree
    left_fold = blocks[0]
    for block in blocks[1:]:
        left_fold = left_fold.merge(block)
    assert _as_plain(left_fold) == whole
    shuffled = list(blocks)
    order.shuffle(shuffled)
    assert _as_plain(merge_all(shuffled)) == whole
    if len(blocks) >= 3:  # (a b) c == a (b c)
        a, b, c = blocks[0], blocks[1], merge_all(blocks[2:])
        assert _as_plain(a.merge(b).merge(c)) == _as_plain(a.merge(b.merge(c)))


def test_merged_cross_products_give_the_whole_files_covariance_bit_for_bit():
    rng = np.random.default_rng(3)
    codes = _codes(rng, 5000, k=6, missing=0.05)
    reversed_mask = np.array([False, True, False, False, True, False])
    pieces = [codes[i:i + 700] for i in range(0, 5000, 700)]
    listwise = merge_all([ListwiseCrossProducts.from_codes(p, span=4) for p in pieces])
    pairwise = merge_all([PairwiseCrossProducts.from_codes(p, span=4) for p in pieces])
    whole_l = listwise_covariance(ItemAnswers.from_codes(codes, 1, 5), low=1, high=5, reversed_mask=reversed_mask)
    whole_p = pairwise_covariance(ItemAnswers.from_codes(codes, 1, 5), low=1, high=5, reversed_mask=reversed_mask)
    merged_l = listwise.covariance(low=1, high=5, reversed_mask=reversed_mask)
    merged_p = pairwise.covariance(low=1, high=5, reversed_mask=reversed_mask)
    assert np.array_equal(merged_l.cov, whole_l.cov)
    assert merged_l.n_used == whole_l.n_used
    assert np.array_equal(merged_p.cov, whole_p.cov)
    assert np.array_equal(merged_p.pair_counts, whole_p.pair_counts)
    # reference: pandas' own covariance of the keyed float answers (pairwise = DataFrame.cov's definition)
    keyed = ItemAnswers.from_codes(codes, 1, 5).keyed_values(low=1, high=5, reversed_mask=reversed_mask)
    np.testing.assert_allclose(merged_p.cov, pd.DataFrame(keyed).cov().to_numpy(), rtol=1e-12)
    complete = keyed[~np.isnan(keyed).any(axis=1)]
    np.testing.assert_allclose(merged_l.cov, np.cov(complete, rowvar=False), rtol=1e-12)  # reference: numpy


def test_answer_counts_are_the_counts_of_each_level():
    rng = np.random.default_rng(4)
    codes = _codes(rng, 800, k=3)
    merged = merge_all([AnswerCounts.from_codes(codes[i:i + 99], 5) for i in range(0, 800, 99)])
    for j in range(3):
        # reference: numpy's bincount of the answered codes
        expected = np.bincount(codes[:, j][codes[:, j] != MISSING], minlength=5)
        assert merged.tally[j].tolist() == expected.tolist()
    assert merged.n_rows == 800


def _scores_by_composite(codes: np.ndarray, method: str, required: int) -> np.ndarray:
    from scalewright.scoring import composite
    keyed = ItemAnswers.from_codes(codes, LOW, HIGH).keyed_values(low=LOW, high=HIGH, reversed_mask=REVERSED)
    return composite(keyed, method=method, required=required)[0]


@pytest.mark.parametrize("method", ["mean", "sum"])
def test_score_counts_hold_every_score_exactly(method):
    rng = np.random.default_rng(5)
    codes = _codes(rng, 3000, missing=0.15)
    counts = merge_all([ScoreCounts.from_codes(codes[i:i + 512], low=LOW, high=HIGH, reversed_mask=REVERSED,
                                               method=method, required=3) for i in range(0, 3000, 512)])
    scores = _scores_by_composite(codes, method, 3)
    present = scores[~np.isnan(scores)]
    # the composite of the row-level route, sorted, equals the expanded counts value for value
    assert np.array_equal(counts.expand(), np.sort(present))
    assert counts.n_missing == int(np.isnan(scores).sum())
    values, tallies = counts.values_and_counts()
    # reference: numpy's unique with counts
    distinct, expected = np.unique(present, return_counts=True)
    assert np.array_equal(values, distinct)
    assert tallies.tolist() == expected.tolist()


@pytest.mark.parametrize("method", ["inverted_cdf", "averaged_inverted_cdf", "closest_observation",
                                    "interpolated_inverted_cdf", "hazen", "weibull", "linear", "median_unbiased",
                                    "normal_unbiased"])
def test_quantiles_from_counts_equal_numpys(method):
    rng = np.random.default_rng(6)
    for n in (1, 2, 7, 400):
        sample = rng.integers(0, 9, size=n) / 4.0
        values, counts = np.unique(sample, return_counts=True)
        probabilities = np.array([0, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 1, 1 / 3])
        # reference: numpy.quantile on the rows
        expected = np.quantile(sample, probabilities, method=method)
        np.testing.assert_allclose(quantiles_from_counts(values, counts, probabilities, method=method), expected,
                                   rtol=1e-13, atol=1e-13)


def test_moments_from_counts_equal_scipys():
    from scipy import stats
    rng = np.random.default_rng(7)
    sample = rng.integers(0, 21, size=5000) / 4.0 + (rng.random(5000) < 0.2) * 2
    values, counts = np.unique(sample, return_counts=True)
    moments = moments_from_counts(values, counts)
    # reference: scipy.stats skew/kurtosis with bias=False, numpy mean/std on the rows
    np.testing.assert_allclose(moments.mean, sample.mean(), rtol=1e-13)
    np.testing.assert_allclose(moments.sd, sample.std(ddof=1), rtol=1e-12)
    np.testing.assert_allclose(moments.skewness, stats.skew(sample, bias=False), rtol=1e-10)
    np.testing.assert_allclose(moments.kurtosis, stats.kurtosis(sample, bias=False), rtol=1e-10)


def test_summaries_of_different_kinds_do_not_merge():
    from scalewright.errors import DataError
    rng = np.random.default_rng(8)
    codes = _codes(rng, 10)
    with pytest.raises(DataError):
        Summary({"a": AnswerCounts.from_codes(codes, 5)}).merge(Summary({"b": AnswerCounts.from_codes(codes, 5)}))
    with pytest.raises(DataError):
        AnswerCounts.from_codes(codes, 5).merge(AnswerCounts.from_codes(codes[:, :2], 5))


def test_listwise_cross_products_from_the_complete_pattern():
    """The complete pattern of the per-pattern sums holds the listwise cross-products (the invariance models
    of a pairwise report): against numpy's own count, sums and products of the complete rows."""
    from scalewright.stats.missing_patterns import PatternSummary

    rng = np.random.default_rng(8)
    for rows, k in ((900, 4), (40, 3), (30, 20)):  # the complete pattern held as a matrix, and as rows
        codes = rng.integers(0, 5, size=(rows, k)).astype(np.uint8)
        codes[rng.random(codes.shape) < 0.08] = 255
        merged = merge_all([PatternSummary.from_codes(block) for block in np.array_split(codes, 7)])
        found = ListwiseCrossProducts.from_patterns(merged)
        complete = codes[(codes != 255).all(axis=1)].astype(np.int64)
        design = np.column_stack([np.ones(len(complete), dtype=np.int64), complete])
        np.testing.assert_array_equal(found.gram, design.T @ design)  # numpy on the complete rows
        assert found.n_rows == rows
