"""Text cells: blank and listed "no answer" texts become missing, counted; every other text is data."""
from __future__ import annotations

import numpy as np
import pandas as pd

from scalewright.text_cells import clear_missing_texts


def test_only_blank_and_listed_texts_are_missing_and_each_is_counted():
    frame = pd.DataFrame({"level": ["None", "NA", " ", "na", "-", None, "null"],
                          "id": ["NA", "x", "y", "z", "w", "v", "u"]})
    cleared, found = clear_missing_texts(frame, ["NA", "N/A"], skip=["id"])
    assert list(cleared["level"].fillna("<m>")) == ["None", "<m>", "<m>", "<m>", "-", "<m>", "null"]
    assert found.texts == {"level": {"NA": 2}}            # 'na' is the listed 'NA', ignoring case
    assert found.blank == {"level": 2}                     # the cell of spaces and the empty one
    assert list(cleared["id"]) == list(frame["id"])        # ids are left exactly as read
    assert frame["level"].iloc[1] == "NA"                  # the input frame is not changed


def test_a_column_of_numbers_with_listed_texts_becomes_numeric():
    frame = pd.DataFrame({"age": ["31", "NA", " 45 ", "#N/A"]})
    cleared, found = clear_missing_texts(frame, ["NA", "#N/A"])
    assert cleared["age"].dtype == np.float64
    np.testing.assert_array_equal(cleared["age"], [31, np.nan, 45, np.nan])
    assert found.texts == {"age": {"NA": 1, "#N/A": 1}}


def test_blank_counts_only_where_asked_and_nothing_listed_changes_nothing():
    frame = pd.DataFrame({"a": [1.0, np.nan], "b": ["x", None]})
    same, found = clear_missing_texts(frame, [], count_blank=["b"])
    assert same is frame
    assert found.blank == {"b": 1}
    assert not found.texts
