"""Answers held as codes or floats: each form derived from the other gives back the same answers."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.answer_codes import MISSING, ItemAnswers
from scalewright.errors import DataError

NAN = np.nan


@settings(max_examples=60, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(0, 60), lows=st.lists(st.integers(-5, 5), min_size=1, max_size=5),
       span=st.integers(1, 12))
def test_codes_and_values_round_trip(seed, n, lows, span):
    rng = np.random.default_rng(seed)
    k = len(lows)
    codes = np.asfortranarray(rng.integers(0, span + 1, (n, k)).astype(np.uint8))
    codes[rng.random((n, k)) < 0.2] = MISSING
    highs = [low + span for low in lows]
    values = ItemAnswers.from_codes(codes, lows, highs).values
    # by hand: value = low + code, NaN where the code is MISSING (common practice, no source)
    expected = np.where(codes == MISSING, NAN, codes + np.array(lows))
    np.testing.assert_array_equal(values, expected)
    back = ItemAnswers.from_values(values, lows, highs).codes_of(range(k))
    np.testing.assert_array_equal(back, codes)


def test_items_without_whole_levels_have_no_codes():
    values = np.array([[1.0, 2.5, 3.0, 500.0], [2.0, 3.0, NAN, 20.0], [NAN, 1.0, 6.0, 0.0]])
    answers = ItemAnswers.from_values(values, lows=[1, 1, 1, 0], highs=[5, 5, 5, 1000])
    assert answers.codes_of([0]).tolist() == [[0], [1], [MISSING]]
    assert answers.codes_of([0, 1]) is None        # 2.5 is not a level
    assert answers.codes_of([2]) is None           # 6 lies above the range
    assert answers.codes_of([3]) is None           # 0-1000 is too wide for one byte
    np.testing.assert_array_equal(answers.subset(np.array([2, 0])).values, values[[2, 0]])


def test_a_subset_keeps_codes_and_the_row_order():
    codes = np.asfortranarray(np.array([[0, 4], [1, MISSING], [2, 3]], dtype=np.uint8))
    answers = ItemAnswers.from_codes(codes, lows=[1, 0], highs=[5, 4])
    part = answers.subset(np.array([2, 0]))
    assert part.n == 2
    assert part.codes_of([0, 1]).tolist() == [[2, 3], [0, 4]]
    np.testing.assert_array_equal(part.values, [[3.0, 3.0], [1.0, 4.0]])


def test_one_scale_read_as_codes_and_keyed_values():
    # one scale of range 1-5 given as codes (one number for every item's range), keyed by hand:
    # reversed item -> high - code, others -> low + code (common practice, no source)
    codes = np.array([[0, 4, 2], [MISSING, 1, 3], [4, MISSING, 0]], dtype=np.uint8)
    answers = ItemAnswers.from_codes(codes, 1, 5)
    assert answers.shape == (3, 3)
    assert not answers.codes.flags.writeable
    reversed_mask = np.array([False, True, False])
    expected = np.array([[1.0, 1.0, 3.0], [NAN, 4.0, 4.0], [5.0, NAN, 1.0]])
    np.testing.assert_array_equal(answers.keyed_values(low=1, high=5, reversed_mask=reversed_mask), expected)


def test_answers_off_the_levels_have_no_codes_matrix():
    answers = ItemAnswers.from_values(np.array([[1.0, 2.5], [2.0, 3.0]]), lows=[1, 1], highs=[5, 5])
    with pytest.raises(DataError, match="item 2 are not whole levels"):
        _ = answers.codes
    with pytest.raises(DataError, match="uint8"):
        ItemAnswers.from_codes(np.zeros((2, 2), dtype=np.int64), 1, 5)
