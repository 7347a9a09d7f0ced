"""Sentences of screening: weak indices, checks that could not run, indices not computed."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

SCREENING: dict[str, str] = {
    "weak-index-used": ("{index} is used: an attentive respondent's {what} is expected near {typical}, and about "
                        "{below}% of attentive respondents below the cut-off {cutoff}"),
    "weak-index-set-aside": ("{index} is not used as a flag in this sample (its values are still listed): an "
                             "attentive respondent's {what} is expected near {typical}, so about {below}% of "
                             "attentive respondents would fall below the cut-off {cutoff} (the index is used "
                             "when at most 10% would){reason}"),
    "weak-index-undefined": "{index} is not used as a flag in this sample: {reason}",
    # a check that could not run: its count is "not checked", never 0
    "fast-not-checked": "fast: not checked, as no column of completion times was named (--duration-column)",
    "fast-no-durations": "fast: not checked, as no respondent who answered most items has a completion time",
    "long-run-not-checked": "long-run: not checked, as the questionnaire has {items} item(s) and long runs of one "
                            "answer are flagged only from {min_items} items (on fewer, attentive respondents "
                            "give them by chance)",
    "duplicates-not-checked": "duplicate-answers: not checked, as the questionnaire has {items} item(s) and "
                              "identical rows are flagged only from {min_items} answered items (shorter rows "
                              "can be alike by chance)",
    "distance-not-checked": "{flags}: not checked, as the Mahalanobis distance could not be computed",
    "halves-not-checked": "uneven-halves: not checked, as even-odd consistency needs at least three scales of "
                          "two or more items",
    "profile-not-checked": "against-sample: not checked, as no respondent answered three items that vary",
    # the indices that could not be computed, or only in part
    "distance-too-few": "Mahalanobis distance not computed: {respondents} respondent(s) and {items} item(s); it "
                        "needs at least 3 respondents and 1 item",
    "distance-items-without-spread": "Mahalanobis distance leaves out {items} item(s) without spread in the sample",
    "distance-too-few-respondents": "Mahalanobis distance not computed: {respondents} respondent(s) for {items} "
                                    "item(s); the covariance matrix needs more respondents than items and every "
                                    "pair of items answered together",
    "distance-singular": "Mahalanobis distance not computed: the item covariance matrix is singular (some items "
                         "are exact linear combinations of others)",
    "distance-no-answers": "Mahalanobis distance not computed for {respondents} respondent(s) with no answer",
    "distance-not-reweighted": "the Mahalanobis distance uses every respondent: too few were left to re-estimate it "
                               "without the first pass's outliers",
    "halves-no-scales": "even-odd consistency not computed: no scales",
    "halves-too-few-scales": "even-odd consistency not computed: it needs at least {min_scales} scales with 2 or "
                             "more items, and there are {scales}",
    "halves-single-item-scales": "even-odd consistency leaves out {scales} scale(s) with a single item",
    "durations-missing": "{respondents} respondent(s) without a duration were not checked for speed",
    # one account of identical answer rows, matching the flag count and the Duplicate records table
    "duplicates-account": "{groups} group(s) of identical answer rows ({respondents} respondents) are listed "
                          "under Duplicate records; {flagged} of these respondents carry duplicate-answers",
    "duplicates-long-run": "{groups} group(s) ({respondents} respondents) are alike through a long run of one "
                           "answer: they are counted under long-run, not duplicate-answers, as straight lines "
                           "are often identical",
    "duplicates-few-answers": "{groups} group(s) ({respondents} respondents) answered fewer than {min_items} "
                              "items: rows that short can be alike by chance, so they are listed, not flagged",
}


def weak_index_sentence(use: Mapping[str, Any]) -> str:
    """Whether a weak screening index (against-sample, uneven-halves) raises its flag here, and why."""
    from ..numbers import format_value

    index = use["index"]
    what = "person-total r" if index == "against-sample" else "even-odd half correlation"
    typical, below = use.get("typical"), use.get("expected_below_pct")
    if typical is None or below is None:
        reason = ("fewer than 4 scales with at least two items give each respondent's even-odd correlation too "
                  "few points" if index == "uneven-halves" else "too few items or respondents to judge it")
        return SCREENING["weak-index-undefined"].format(index=index, reason=reason)
    reason = "; the item means differ too little" if index == "against-sample" else \
        f"; it rests on {use['points']} scales per respondent"
    values = dict(index=index, what=what, typical=format_value(typical, "bounded"),
                  below=format_value(below, "pct"), cutoff=format_value(use["cutoff"], "bounded"))
    if use["used"]:
        return SCREENING["weak-index-used"].format(**values)
    return SCREENING["weak-index-set-aside"].format(**values, reason=reason)
