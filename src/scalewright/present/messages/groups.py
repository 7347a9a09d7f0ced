"""Sentences of subgroups, compare and tally."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

GROUPS: dict[str, str] = {
    # notes of a split into subgroup levels
    "subgroup-too-small": "{column} = {level}: {n} respondent(s), fewer than {min_size}; not analysed",
    "subgroup-no-value": "{column}: {n} respondent(s) with no value; left out of the subgroups",
    # notes of a comparison of one score across the levels of a column
    "levels-too-small": "{levels}: fewer than {min_cell} respondents with a score; not shown and left out of the "
                        "tests",
    "unscored-left-out": "{n} respondent(s) without a score left out",
    "no-group-value-left-out": "{n} respondent(s) with a score but no {column} value left out",
    "single-score-levels-untested": "levels with a single score are described but left out of the tests",
    "compare-too-few-levels": "fewer than two levels of {column} with at least {min_size} scores: no test",
    "zero-variance-no-test": "every level has the same score throughout (zero variance): no test",
    "level-without-spread": "a level has no spread in its scores; tests that rely on its variance are fragile",
    "effect-direction": "Hedges' g and the rank-biserial r compare {first} with {second} (positive: {first} scores "
                        "higher)",
    # notes of a tally
    "cumulative-withheld": "cumulative percentages that would reveal a suppressed count are withheld",
    "column-no-rows": "{column} has no rows",
    "column-unanswered": "nobody answered {column}",
    "categories-suppressed": "{column}: {count} {categories} with fewer than {min_cell} respondents shown as {shown}",
    "complementary-suppression": "{column}: one more category withheld so the small one cannot be worked out from "
                                 "the total",
    # notes of a tally's fit to reference proportions
    "fit-suppressed-left-out": "suppressed categories ({categories}) left out of the test; the other reference "
                               "proportions rescaled to sum to 1",
    "fit-reference-zero-observed": "the reference gives proportion 0 to {categories}, which occur(s) in the data: "
                                   "the sample cannot match it",
    "fit-reference-zero-empty": "{categories}: proportion 0 and nobody in the data; left out of the test",
    "fit-too-few-categories": "fewer than two categories left to compare: no test",
    "fit-no-answers": "no answers to compare: no test",
    "fit-small-expected": "some expected counts are below 5, where the chi-square approximation is rough "
                          "(Cochran 1954)",
    "omega-squared-negative": "omega-squared can fall below zero when the groups differ less than chance would "
                              "make them; read such values as zero",
}


def groups_note_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one subgroup, compare or tally note from its values."""
    from .values import _plain

    shown = {key: _plain(value) for key, value in values.items()}
    if code == "levels-too-small":
        shown["levels"] = ", ".join(f"{values['column']} = {level}" for level in values["levels"])
    if code == "categories-suppressed":
        from ...stats.groups import suppressed_text

        shown["categories"] = "category" if values["count"] == 1 else "categories"
        shown["shown"] = suppressed_text(int(values["min_cell"]))
    return GROUPS[code].format(**shown)
