"""Wording of the JSON vocabulary's notes: why a statistic is null (``not-computable``)."""

from __future__ import annotations

VOCABULARY: dict[str, str] = {
    "not-computable": "{statistic} could not be computed: {reason}",
}

#: the words of each ``reason`` of a ``not-computable`` note
NOT_COMPUTABLE_REASONS: dict[str, str] = {
    "model-not-fitted": "the model was not fitted",
    "least-squares-estimator": "a least-squares fit has no likelihood, so no chi-square test",
    "no-degrees-of-freedom": "the model has no degrees of freedom (it reproduces the covariances exactly)",
    "not-finite": "the computation gave no finite value",
    "not-two-levels": "it compares exactly two levels",
    "fewer-than-2-levels": "fewer than two levels are described",
    "no-variance": "the answers or scores it rests on do not vary",
    "fewer-than-2-items": "it needs at least 2 items",
    "fewer-than-3-items": "a one-factor model needs at least 3 items",
    "fewer-than-4-items": "without one item, fewer than the 3 items a one-factor model needs would be left",
    "fewer-than-3-rows": "it needs at least 3 usable rows",
    "incomplete-covariance": "some item pairs have fewer than 2 rows in common",
    "singular-covariance": "the item covariance matrix is singular",
    "one-factor-fit-failed": "the one-factor model could not be fitted",
    "fewer-than-2-answers": "it needs at least 2 answers",
    "item-answers-not-given": "only the covariance matrix was given, not the answers",
    "mahalanobis-not-computable": "too few answered items or respondents for the distance (see the notes)",
    "fewer-than-3-scales-with-both-halves-or-no-spread": ("fewer than three scales with both halves answered, "
                                                          "or half means that do not vary"),
    "fewer-than-3-answers-or-no-spread": "fewer than three answered items, or answers that do not vary",
    "no-completion-time": "no completion time was given",
    "nothing-missing": "no answer is missing",
    "fewer-than-3-bands": "the scores fill fewer than three bands",
    "no-valley": "no band lies lower than a peak on each side of it",
    "fewer-than-4-points": "each respondent's correlation would rest on fewer than 4 values",
    "zero-second-eigenvalue": "the second eigenvalue is zero (perfectly correlated items)",
    "mcar-test-not-computable": "the EM estimates did not converge, no item varies, or no degrees of freedom remain",
}
