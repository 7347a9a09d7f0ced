"""Sentences of missing answers (listwise, pairwise, EM; the MCAR test)."""
from __future__ import annotations

MISSING: dict[str, str] = {
    "method-listwise": "listwise deletion (only respondents who answered every item)",
    "method-pairwise": "pairwise deletion (each covariance from the respondents who answered both items)",
    "method-em": "maximum likelihood by the EM algorithm (everyone who answered at least one item)",
    "missing-summary": "Missing answers: {method}. The estimates rest on {n_used} of {n_rows} respondents. "
                       "Respondents by number of answers missing: {patterns}.",
    "mcar-test-consistent": "Little's test of missing completely at random: chi2 = {chi2}, df = {df}, p {pvalue}. "
                            "Respondents with gaps answer the other items much as everyone else does, so the "
                            "gaps look unrelated to the answers (the test cannot prove it).",
    "mcar-test-rejects": "Little's test of missing completely at random: chi2 = {chi2}, df = {df}, p {pvalue}. "
                         "Respondents with gaps answer the other items differently from the rest, so the gaps "
                         "are related to the answers: listwise or pairwise results may be biased, and "
                         "--missing em is the safer choice when the gaps depend on answers that were given.",
    "listwise-many-set-aside": "Listwise deletion set aside {set_aside} of {n_rows} respondents ({set_aside_pct}%, "
                               "more than {threshold_pct}%): the results rest on fewer people and may be biased. "
                               "--missing em keeps everyone who answered at least one item.",
    "em-basis-scale": "Means and covariances come from the EM algorithm (maximum likelihood under missing at "
                      "random) over this scale's own items, using the {n_used} respondents who answered at least "
                      "one of them. The alpha interval is Feldt's with n = {n_used}: the simplest interval that "
                      "uses everyone who contributed; it counts them as complete, so with many gaps it is a little "
                      "too narrow. A bootstrap would have to rerun EM on every resample and is not offered.",
    "em-basis-file": "Means and covariances come from the EM algorithm (maximum likelihood under missing at "
                     "random) over every item of the file together, using the {n_used} respondents who answered "
                     "at least one item; Bartlett's test and parallel analysis take n = {n_used}.",
    "em-not-converged": "EM did not settle within {iterations} iterations: the estimates are the last ones "
                        "reached and may be imprecise.",
    "em-singular": "EM stopped: the covariance matrix became singular (an item is a linear combination of "
                   "others, or too few respondents for the pattern of gaps), so the statistics are undefined.",
    "em-too-few": "EM needs more respondents with an answer than items; {n_used} answered at least one of "
                  "{k} items.",
    "em-item-never-answered": "EM cannot estimate {items}: nobody answered it.",
    "em-constant-items": "{items}: everyone who answered gave the same answer; EM kept its mean and gave it no "
                         "variance.",
}
