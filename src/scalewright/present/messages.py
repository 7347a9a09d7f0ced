"""Every sentence the tool writes about a note or flag, keyed by its code.

The statistics layer records :class:`scalewright.notes.Note` values (a code and numbers); this module is the one
place that words them. Templates use ``str.format`` fields named after the note's values; numbers are formatted
by :mod:`scalewright.present.numbers` before they are put in (``{name:bounded}`` style is not used: each
template's fields are pre-formatted by :func:`describe`).

Each area keeps its templates in its own block below, so work on one area does not touch another's lines.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..notes import Note

# -- reading and data ----------------------------------------------------------------------------------------
READING: dict[str, str] = {
}

# -- reliability ---------------------------------------------------------------------------------------------
RELIABILITY: dict[str, str] = {
}

# -- structure -----------------------------------------------------------------------------------------------
STRUCTURE: dict[str, str] = {
}

# -- shape ---------------------------------------------------------------------------------------------------
SHAPE: dict[str, str] = {
}

# -- subgroups, compare and tally ----------------------------------------------------------------------------
GROUPS: dict[str, str] = {
}

# -- screening -----------------------------------------------------------------------------------------------
SCREENING: dict[str, str] = {
}

# -- confirmatory models and invariance ----------------------------------------------------------------------
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

# -- ordinal items (polychoric) ------------------------------------------------------------------------------
ORDINAL: dict[str, str] = {
    "ordinal-few-options": "the items have {options} answer options, fewer than {min_options}: correlations, alpha "
                           "and omega that treat the answers as continuous are biased; the ordinal estimates "
                           "(--ordinal) are advised (Rhemtulla, Brosseau-Liard & Savalei, 2012)",
    "ordinal-skewed-items": "{n_items} item(s) with strongly skewed answers (|skewness| above {skew_limit}, largest "
                            "{max_abs_skewness}): {items}; the ordinal estimates (--ordinal) are advised "
                            "(Rhemtulla, Brosseau-Liard & Savalei, 2012)",
    "polychoric-undefined": "{n_pairs} polychoric correlation(s) undefined ({pairs}): an item was answered at one "
                            "level only among the rows used",
    "polychoric-empty-cells-corrected": "{n_pairs} pair table(s) ({pairs}) had empty cells that put the estimate at "
                                        "+-1; 0.5 was added to each empty cell (Haldane, 1956) before estimating",
    "polychoric-at-bound": "{n_pairs} polychoric correlation(s) ({pairs}) stay at the search bound of +-.9999 even "
                           "so (near-duplicate items); they have no standard error",
    "polychoric-smoothed": "the polychoric correlation matrix was not positive definite (smallest eigenvalue "
                           "{min_eigenvalue}); the nearest correlation matrix with eigenvalues of at least {floor} "
                           "(Higham, 2002) is used instead; largest change of a correlation {max_change}",
    "ordinal-no-factor-model": "no one-factor model could be fitted to the polychoric matrix of {k} item(s): "
                               "ordinal omega and the sum score's reliability are not available",
    "ordinal-factor-not-converged": "the one-factor fit ({method}) of the polychoric matrix did not converge; treat "
                                    "ordinal omega and the sum score's reliability as provisional",
    "ordinal-heywood": "the one-factor fit of the polychoric matrix left no unique variance for {items} (a Heywood "
                       "case)",
    "ordinal-sum-score": "sum-score reliability (Green & Yang, 2009) is the reliability of a score that is the sum "
                         "or mean of the answers: report it for such a score; ordinal alpha (Zumbo, Gadermann & "
                         "Zeisser, 2007) and ordinal omega describe the latent continuous responses behind the "
                         "answers, not the score",
}

# -- missing answers (EM) ------------------------------------------------------------------------------------
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

# -- survey weights ------------------------------------------------------------------------------------------
WEIGHTS: dict[str, str] = {
}

# -- engine (streaming, Dask) --------------------------------------------------------------------------------
ENGINE: dict[str, str] = {
}


def _all_templates() -> dict[str, str]:
    merged: dict[str, str] = {}
    for block in (READING, RELIABILITY, STRUCTURE, SHAPE, GROUPS, SCREENING, CONFIRM, ORDINAL, MISSING,
                  WEIGHTS, ENGINE):
        clash = merged.keys() & block.keys()
        if clash:
            raise RuntimeError(f"message codes defined twice: {sorted(clash)}")
        merged.update(block)
    return merged


def _plain(value: Any) -> Any:
    from .numbers import format_value

    if isinstance(value, float):
        return format_value(value, "num")
    if isinstance(value, (list, tuple)):
        return ", ".join(str(_plain(v)) for v in value)
    return value


def describe(note: Note | str, formatted: Mapping[str, str] | None = None) -> str:
    """The sentence for one note. ``formatted`` overrides how single values are shown (e.g. ``bounded``).

    A plain string (notes written before codes existed) is returned as it is.
    """
    if isinstance(note, str):
        return note
    template = _all_templates().get(note.code)
    values = {key: _plain(value) for key, value in note.values.items()}
    values.update(formatted or {})
    if template is None:
        detail = ", ".join(f"{key} {value}" for key, value in values.items())
        return f"{note.code}: {detail}" if detail else note.code
    return template.format(**values)
