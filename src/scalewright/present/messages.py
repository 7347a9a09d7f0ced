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
    # setting respondents aside (--exclude FILE)
    "respondents-set-aside": "{n} respondent(s) set aside from {file} ({listed} id(s) listed, {not_found} not "
                             "found in the data)",
    "exclusion-column": "the ids to set aside were read from column '{column}' of {file}",
    "exclusion-flagged-only": "the list has a '{column}' column: only its {flagged} row(s) flagged yes were "
                              "set aside; {not_flagged} row(s) not flagged were kept",
    "exclusion-ids-not-found": "{n} listed id(s) are not in the data (first: {first})",
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
    # a check that could not run: its count is "not checked", never 0
    "fast-not-checked": "fast: not checked, as no column of completion times was named (--duration-column)",
    "fast-no-durations": "fast: not checked, as no respondent who answered most items has a completion time",
    "duplicates-not-checked": "duplicate-answers: not checked, as the questionnaire has {items} item(s) and "
                              "identical rows are flagged only from {min_items} answered items (shorter rows "
                              "can be alike by chance)",
    "distance-not-checked": "{flags}: not checked, as the Mahalanobis distance could not be computed",
    "halves-not-checked": "uneven-halves: not checked, as even-odd consistency needs at least three scales of "
                          "two or more items",
    "profile-not-checked": "against-sample: not checked, as no respondent answered three items that vary",
    # one account of identical answer rows, matching the flag count and the Duplicate records table
    "duplicates-account": "{groups} group(s) of identical answer rows ({respondents} respondents) are listed "
                          "under Duplicate records; {flagged} of these respondents carry duplicate-answers",
    "duplicates-long-run": "{groups} group(s) ({respondents} respondents) are alike through a long run of one "
                           "answer: they are counted under long-run, not duplicate-answers, as straight lines "
                           "are often identical",
    "duplicates-few-answers": "{groups} group(s) ({respondents} respondents) answered fewer than {min_items} "
                              "items: rows that short can be alike by chance, so they are listed, not flagged",
}

# -- confirmatory models and invariance ----------------------------------------------------------------------
CONFIRM: dict[str, str] = {
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
