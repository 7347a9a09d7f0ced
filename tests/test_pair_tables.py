"""Pair tables of answer codes: exact counts (numpy's add.at as the reference) and merging."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.answer_codes import MISSING
from scalewright.errors import DataError
from scalewright.stats.pair_tables import PairTables, pair_tables


def random_codes(rng: np.random.Generator, n: int, k: int, levels: int, missing: float) -> np.ndarray:
    codes = rng.integers(0, levels, (n, k)).astype(np.uint8)
    codes[rng.random((n, k)) < missing] = MISSING
    return codes


def reference_table(codes: np.ndarray, i: int, j: int, levels: int) -> np.ndarray:
    # numpy's unbuffered add.at, one row at a time: the plain definition of a contingency table
    table = np.zeros((levels + 1, levels + 1), dtype=np.int64)
    x = np.where(codes[:, i] == MISSING, levels, codes[:, i])
    y = np.where(codes[:, j] == MISSING, levels, codes[:, j])
    np.add.at(table, (x, y), 1)
    return table


@pytest.mark.parametrize(("levels", "k"), [(2, 7), (3, 5), (4, 9), (5, 8), (7, 4), (12, 3), (30, 2), (5, 1)])
def test_every_pair_table_equals_the_direct_count(levels: int, k: int) -> None:
    rng = np.random.default_rng(levels * 100 + k)
    codes = random_codes(rng, 700, k, levels, 0.1)
    tables = pair_tables(codes, levels)
    for i in range(k):
        for j in range(k):
            np.testing.assert_array_equal(tables.counts[i, j], reference_table(codes, i, j, levels))
    assert tables.n_rows == 700
    np.testing.assert_array_equal(tables.item_tallies()[0],
                                  np.bincount(codes[codes[:, 0] != MISSING, 0], minlength=levels))


def test_pair_counts_and_taking_items() -> None:
    rng = np.random.default_rng(1)
    codes = random_codes(rng, 300, 4, 5, 0.2)
    tables = pair_tables(codes, 5)
    answered = codes != MISSING
    np.testing.assert_array_equal(tables.pair_counts(), answered.T.astype(int) @ answered.astype(int))
    sub = tables.take([2, 0])
    np.testing.assert_array_equal(sub.counts, pair_tables(codes[:, [2, 0]], 5).counts)


def test_codes_beyond_the_levels_are_refused() -> None:
    codes = np.array([[0, 1], [5, 1]], dtype=np.uint8)
    with pytest.raises(DataError, match="answer code 5 of item 1"):
        pair_tables(codes, 5)
    with pytest.raises(DataError, match="same items"):
        pair_tables(codes[:, :1], 6).merge(pair_tables(codes, 6))


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 2**32 - 1), st.integers(1, 6), st.integers(2, 6),
       st.lists(st.integers(0, 60), min_size=3, max_size=3), st.permutations([0, 1, 2]))
def test_merging_is_associative_and_order_independent(seed: int, k: int, levels: int, sizes: list[int],
                                                      order: list[int]) -> None:
    rng = np.random.default_rng(seed)
    blocks = [random_codes(rng, n, k, levels, 0.15) for n in sizes]
    parts = [pair_tables(block, levels) for block in blocks]
    whole = pair_tables(np.concatenate(blocks), levels)
    left = parts[order[0]].merge(parts[order[1]]).merge(parts[order[2]])
    right = parts[order[0]].merge(parts[order[1]].merge(parts[order[2]]))
    for merged in (left, right):
        np.testing.assert_array_equal(merged.counts, whole.counts)


def test_tables_must_be_integer_counts() -> None:
    with pytest.raises(DataError):
        PairTables(np.zeros((2, 2, 3, 3)))
