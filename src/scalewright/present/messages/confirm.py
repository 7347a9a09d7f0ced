"""Sentences of the confirmatory models and of measurement invariance."""
from __future__ import annotations

CONFIRM: dict[str, str] = {
    "not-identified": "{model}: not identified: {parameters} free parameters but only {moments} sample moments "
                      "(a scale of two items needs other items beside it); nothing fitted",
    "not-identified-empirically": "{model}: not identified by these data (the information matrix is singular); "
                                  "estimates and standard errors are not reported",
    "no-usable-covariance": "{model}: too few complete answers to estimate the item covariances; nothing fitted",
    "covariance-not-positive-definite": "{model}: the item covariance matrix is not positive definite (an item "
                                        "without variance, or pairwise deletion); the ML fit needs one that is",
    "not-converged": "{model}: the search did not converge ({iterations} steps); treat the estimates with caution",
    "least-squares-no-standard-errors": "{model}: {estimator} gives estimates and SRMR only; standard errors and "
                                        "the chi-square need the full weight matrix",
    "heywood-case": "{model}: improper solution (Heywood case) at {items}: a negative residual variance or a "
                    "standardized loading beyond 1; the model may be misspecified or the sample too small",
    "model-not-fitted": "{model}: the model could not be fitted",
    "dwls-polychoric": "--ordinal: every model is fitted by diagonally weighted least squares (DWLS) to the "
                       "polychoric correlation matrix, each correlation weighted by 1/SE^2 (Muthén 1984, "
                       "Psychometrika 49:115-132; compared with other estimators for ordinal items by Flora & "
                       "Curran 2004, Psychological Methods 9:466-491). Loadings, SRMR and the model omega are "
                       "given; the chi-square, the indices built on it and the standard errors are not, because "
                       "they need the full weight matrix of the correlations",
    "em-basis-confirm-scale": "Covariances come from the EM algorithm (maximum likelihood under missing at random) "
                              "over this scale's own items; the fit takes n = {n_used}, the respondents who "
                              "answered at least one of them",
    "em-basis-confirm-file": "Covariances come from the EM algorithm (maximum likelihood under missing at random) "
                             "over every item of the file together; the fit takes n = {n_used}, the respondents "
                             "who answered at least one item",
    "fit-meets-cutoffs": "{model}: CFI {cfi}, RMSEA {rmsea}, SRMR {srmr}: within all three conventional cut-offs "
                         "(CFI >= {cfi_min}, RMSEA <= {rmsea_max}, SRMR <= {srmr_max}; Hu & Bentler 1999). "
                         "Cut-offs are conventions, not tests",
    "fit-mixed": "{model}: CFI {cfi}, RMSEA {rmsea}, SRMR {srmr}: {met} of the three conventional cut-offs met "
                 "(CFI >= {cfi_min}, RMSEA <= {rmsea_max}, SRMR <= {srmr_max}; Hu & Bentler 1999); read the "
                 "residuals and hints before relying on the structure. Cut-offs are conventions, not tests",
    "fit-misses-cutoffs": "{model}: CFI {cfi}, RMSEA {rmsea}, SRMR {srmr}: none of the conventional cut-offs met "
                          "(CFI >= {cfi_min}, RMSEA <= {rmsea_max}, SRMR <= {srmr_max}; Hu & Bentler 1999): the "
                          "intended structure does not describe these answers well. Cut-offs are conventions, "
                          "not tests",
    "fit-saturated": "{model}: saturated (df = 0): it reproduces the covariances exactly, so its fit cannot be "
                     "tested; the loadings and omega still hold",
    "fit-unknown": "{model}: fit indices could not be computed",
    "partial-search-skipped": "{model} by {column}: intercepts differ; the search for the items behind it runs per "
                              "scale (see each scale's own result)",
    "too-few-levels": "{model} by {column}: fewer than two levels large enough to fit; invariance not tested",
    "invariance-none": "{model} by {column}: the structure itself does not fit well in the groups (configural "
                       "model below the conventional cut-offs): neither relations nor means can be compared",
    "invariance-configural": "{model} by {column}: the same items go together in every group, but the loadings "
                             "differ: compare neither relations nor means across {column} without caution",
    "invariance-metric": "{model} by {column}: loadings hold but intercepts differ: compare relations (correlations, "
                         "regressions), not means, across {column}",
    "invariance-partial-scalar": "{model} by {column}: loadings hold, and intercepts hold once those of {items} "
                                 "are freed (partial scalar invariance): latent means can be compared across "
                                 "{column}; observed score means carry the bias of those items",
    "invariance-scalar": "{model} by {column}: loadings and intercepts hold: means can be compared across {column}",
    "invariance-strict": "{model} by {column}: loadings, intercepts and residual variances hold: means and observed "
                         "score variances can be compared across {column}",
}
