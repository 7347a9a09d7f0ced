"""Splitting respondents by a grouping column."""
from __future__ import annotations

import numpy as np
import pandas as pd

from scalewright.stats.subgroups import level_order, split_by


def test_small_levels_are_named_not_analysed_and_missing_is_counted():
    values = pd.Series(["a"] * 12 + ["b"] * 3 + [None, " "] + ["c"] * 10)
    split = split_by(values, min_size=10, column="unit")
    assert list(split.levels) == ["a", "c"] and split.too_small == {"b": 3} and split.missing == 2
    np.testing.assert_array_equal(split.levels["c"], np.arange(17, 27))
    assert any("unit = b: 3 respondent(s), fewer than 10" in n for n in split.notes())


def test_levels_keep_a_natural_order():
    assert level_order(pd.Series(["10+ years", "under 1 year", "5-9 years", "1-4 years"])) == \
        ["1-4 years", "5-9 years", "10+ years", "under 1 year"]  # digits compare as numbers
    assert level_order(pd.Series([3, 1, 2, 1])) == [1, 2, 3]
    ordered = pd.Series(pd.Categorical(["mid", "new", "long"], categories=["new", "mid", "long"], ordered=True))
    assert level_order(ordered) == ["new", "mid", "long"]
