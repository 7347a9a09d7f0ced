"""Splitting respondents by a grouping column."""
from __future__ import annotations

import numpy as np
import pandas as pd

from scalewright.stats.subgroups import level_order, split_by


def test_small_levels_are_named_not_analysed_and_missing_is_counted():
    values = pd.Series(["a"] * 12 + ["b"] * 3 + [None, " "] + ["c"] * 10)
    split = split_by(values, min_size=10, column="unit")
    assert list(split.levels) == ["a", "c"]
    assert split.too_small == {"b": 3}
    assert split.missing == 2
    np.testing.assert_array_equal(split.levels["c"], np.arange(17, 27))
    assert [(n.code, n.values) for n in split.notes()] == [
        ("subgroup-too-small", {"column": "unit", "level": "b", "n": 3, "min_size": 10}),
        ("subgroup-no-value", {"column": "unit", "n": 2})]


def test_levels_keep_a_natural_order():
    assert level_order(pd.Series(["10+ years", "under 1 year", "5-9 years", "1-4 years"])) == \
        ["1-4 years", "5-9 years", "10+ years", "under 1 year"]  # digits compare as numbers
    assert level_order(pd.Series([3, 1, 2, 1])) == [1, 2, 3]
    ordered = pd.Series(pd.Categorical(["mid", "new", "long"], categories=["new", "mid", "long"], ordered=True))
    assert level_order(ordered) == ["new", "mid", "long"]


# ---- counting a subgroup column's levels -------------------------------------------------------------------


def test_count_levels_tells_continuous_numbers_from_codes_and_texts():
    from scalewright.analyses.subgroup_columns import count_levels

    ages = count_levels(pd.Series(np.arange(18, 67).astype(str)), column="age")
    assert (ages.levels, ages.numeric, ages.low, ages.high, ages.looks_continuous) == (49, True, 18, 66, True)
    minutes = count_levels(pd.Series([1.5, 2.25, 3.0, None]), column="t")
    assert minutes.levels == 3
    assert minutes.looks_continuous
    codes = count_levels(pd.Series([100, 200, 300, 400, 500]), column="unit")
    assert codes.numeric
    assert not codes.looks_continuous
    same = count_levels(pd.Series(["3", "3.0", " 3 ", "", None, "4"]), column="x")
    assert same.levels == 2  # '3' and '3.0' are one number; blanks are no level
    words = count_levels(pd.Series(["a", "b", "a", " "]), column="w")
    assert (words.levels, words.numeric, words.looks_continuous) == (2, False, False)
