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
}

# -- missing answers (EM) ------------------------------------------------------------------------------------
MISSING: dict[str, str] = {
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
