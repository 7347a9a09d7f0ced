"""Sentences of survey weights."""
from __future__ import annotations

WEIGHTS: dict[str, str] = {
    "weights-not-used": "The scale file names the weight column {weight_column}, but `{command}` does not use "
                        "weights yet: its results are unweighted.",
    "weights-approximate-inference": "Estimates are weighted by {weight_column}. Confidence intervals and tests use "
                                     "Kish's effective sample size, which is approximate unless the weights are "
                                     "the whole design; for strata or clusters use design-based survey software.",
    "weights-zero": "{n_zero_weight} row(s) have weight 0 in {weight_column}: they stay in row-level outputs and "
                    "are left out of every estimate.",
    "weights-refused": "{count} row(s) have {kind} weight(s) in {weight_column}; read leniently, they are left out "
                       "of every estimate.",
    "weighted-quantiles": "Weighted quantiles take the smallest value whose cumulative share of the weight reaches "
                          "the probability (as statsmodels DescrStatsW.quantile does); they can differ from the "
                          "interpolated unweighted quantiles.",
    "weighted-fit-kish": "The weighted test uses Kish's effective sample size n_eff = {n_effective} (design effect "
                         "of the weights {design_effect}); it is approximate unless the weights are the whole design.",
    "weighted-fit-impossible": "Fewer than two categories with weight to compare: no weighted test.",
    "weighted-moments-undefined": "Weighted skewness and kurtosis need at least 3 rows with weight "
                                  "whose values are not all the same (found {n} row(s)).",
    "z-weighted": "z scores are taken from the weighted mean and sd of each score (weights {weight_column}; sd "
                  "with the divisor sum(w) - sum(w^2)/sum(w)); rows of weight 0 get a z score but do not enter "
                  "the mean and sd.",
    "z-unweighted": "z scores are taken from the unweighted mean and sd of each score in this file (sd with n - 1).",
    "report-parts-unweighted": "Two parts of this report are not weighted: the subgroup differences named in the "
                               "findings (chosen from the unweighted, Holm-adjusted tests; each scale's section "
                               "shows the weighted comparisons) and the bars of the answers to each item (counts "
                               "of respondents).",
    "screen-alpha-weighted": "Both alphas are weighted: from the weighted covariance matrix of the complete "
                             "answers (rows of weight 0 left out); n counts the respondents used.",
    "confirm-weighted": "Every model is fitted by maximum likelihood to the weighted covariance matrix (weights "
                        "{weight_column}; complete answers). The chi-square, the fit indices that use N and the "
                        "standard errors take Kish's effective sample size as N: this inference is approximate "
                        "without the sampling design (strata, clusters), for which design-based survey software "
                        "is needed.",
    "structure-weighted": "Every statistic uses the correlations of the weighted covariance matrix (weights "
                          "{weight_column}; complete answers, {n} respondents). Bartlett's test takes Kish's "
                          "effective sample size n_eff = {n_effective} as n and parallel analysis draws random data "
                          "of {parallel_n} rows: approximate without the sampling design (strata, clusters), for "
                          "which design-based survey software is needed.",
    "screen-weighted": "Flags are each respondent's own and do not depend on their weight; the Mahalanobis "
                       "distance is measured from the weighted means and covariance (weights {weight_column}), "
                       "so its flags can differ from an unweighted screen. The weighted share is the part of the "
                       "sum of weights the flagged respondents carry.",
    "invariance-not-weighted": "Measurement invariance across {by} is not tested with survey weights (the "
                               "multi-group models are not weighted yet).",
    "weighted-ci-kish": "Intervals and tests use Kish's effective sample size n_eff = {n_effective} in place of n "
                        "= {n} (design effect of the weights {design_effect}).",
}
