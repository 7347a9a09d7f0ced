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
    "miskey-suspect": ("{item} runs against the rest of the scale: it loads {loading} on the scale's first "
                       "factor, on which most of the scale loads positively (item-rest r = {item_rest_r}); "
                       "{advice}.{alpha_text}"),
    "miskey-suspect-pair": ("{item} correlates negatively with the other item (r = {item_rest_r}); one of the "
                            "two may be keyed the wrong way; {advice}."),
    "miskey-advice-declared": "it is declared reverse-keyed: check that it should be",
    "miskey-advice-undeclared": "if its wording is reversed, list it under `reverse`",
    "miskey-alpha-one": " With it reversed, alpha would be {new} instead of {old}.",
    "miskey-alpha-together": " With {items} reversed together, alpha would be {new} instead of {old}.",
    "weak-item": ("{item} agrees little with the rest of the scale (item-rest r = {item_rest_r}, below {cutoff}); "
                  "check its wording."),
    "redundant-pair": "{item} and {other} correlate r = {r} (above {cutoff}): they may ask the same thing twice.",
    "low-reliability": "alpha = {alpha} is below {cutoff}: the score is noisy in this sample.",
    "excess-reliability": ("alpha = {alpha} is above {cutoff}: items may be near-duplicates; a shorter scale "
                           "may do."),
}


def reliability_flag_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one reliability flag (``miskey-suspect``, ``weak-item``, ...) from its values.

    Values beside a cut-off are shown with as many decimals as the comparison needs to read true; the
    alpha a reversal would give is said only when it differs from today's alpha as shown.
    """
    from .numbers import format_against, format_value

    def bounded(value: Any) -> str:
        return format_value(value, "bounded")

    if code == "miskey-suspect":
        advice = RELIABILITY["miskey-advice-declared" if values.get("declared_reversed")
                             else "miskey-advice-undeclared"]
        new, old = bounded(values.get("alpha_reversed")), bounded(values.get("alpha"))
        together = tuple(values.get("reversed_together", ()))
        alpha_text = ""
        if new != old and new != "–" and old != "–":
            alpha_text = (RELIABILITY["miskey-alpha-together"].format(items=", ".join(together), new=new, old=old)
                          if len(together) > 1 else RELIABILITY["miskey-alpha-one"].format(new=new, old=old))
        loading = values.get("loading")
        if loading is None or loading != loading:  # two items: no factor, the pair's correlation says it
            return RELIABILITY["miskey-suspect-pair"].format(item=values["item"], advice=advice,
                                                             item_rest_r=bounded(values.get("item_rest_r")))
        return RELIABILITY[code].format(item=values["item"], loading=bounded(loading), advice=advice,
                                        item_rest_r=bounded(values.get("item_rest_r")), alpha_text=alpha_text)
    if code == "weak-item":
        shown, cutoff = format_against(values["item_rest_r"], values["cutoff"], "bounded")
        return RELIABILITY[code].format(item=values["item"], item_rest_r=shown, cutoff=cutoff)
    if code == "redundant-pair":
        shown, cutoff = format_against(values["r"], values["cutoff"], "bounded")
        return RELIABILITY[code].format(item=values["item"], other=values["other"], r=shown, cutoff=cutoff)
    if code in ("low-reliability", "excess-reliability"):
        shown, cutoff = format_against(values["alpha"], values["cutoff"], "bounded")
        return RELIABILITY[code].format(alpha=shown, cutoff=cutoff)
    return describe(Note(code=code, values=values))


def flag_message(flag: Any) -> str:
    """The sentence of a flag result (anything with ``code``, ``message`` and ``values``)."""
    values = getattr(flag, "values", None)
    if not getattr(flag, "message", "") and flag.code in STRUCTURE_FLAGS and hasattr(flag, "scale"):
        return structure_message(flag.code, {**(values or {}), "scale": flag.scale}, flag=True)
    if getattr(flag, "message", "") or not values:
        return str(getattr(flag, "message", ""))
    if flag.code in RELIABILITY:
        return reliability_flag_message(flag.code, values)
    if flag.code in STRUCTURE_FLAGS and hasattr(flag, "scale"):
        return structure_message(flag.code, {**values, "scale": flag.scale}, flag=True)
    return describe(Note(code=flag.code, values=values))


def word_document(document: Any) -> Any:
    """Fill in every empty ``message`` of a flag in a JSON document from its ``code`` and ``values``.

    Results record flags as codes with values; this is where a document gets their sentences, so a command's
    JSON and the report's results.json carry the same words as their tables.
    """
    if isinstance(document, dict):
        code = document.get("code")
        if document.get("message") == "" and code in STRUCTURE_FLAGS and "scale" in document:
            document["message"] = structure_message(code, {**document.get("values", {}), "scale": document["scale"]},
                                                    flag=True)
        elif document.get("message") == "" and code in STRUCTURE:  # a structure note: its values beside its code
            document["message"] = structure_message(code, {k: v for k, v in document.items()
                                                           if k not in ("code", "message")})
        elif document.get("message") == "" and code in SHAPE:  # a shape note or evidence: values beside its code
            document["message"] = shape_message(code, {k: v for k, v in document.items()
                                                       if k not in ("code", "message")})
        elif code == "not-computable" and not document.get("message"):  # why a statistic is null: its sentence
            document["message"] = describe(Note(code=code, values={k: v for k, v in document.items()
                                                                   if k not in ("code", "message")}))
        elif document.get("message") == "" and isinstance(document.get("values"), dict) and "code" in document:
            document["message"] = (reliability_flag_message(code, document["values"]) if code in RELIABILITY
                                   else describe(Note(code=code, values=document["values"])))
        for value in document.values():
            word_document(value)
    elif isinstance(document, list):
        for value in document:
            word_document(value)
    return document

# -- structure -----------------------------------------------------------------------------------------------
STRUCTURE: dict[str, str] = {
    # notes of one scale's unidimensionality
    "one-item-scale": "a scale of one item has no dimensionality to check",
    "eigen-ratio-undefined": "the second eigenvalue is zero (perfectly correlated items): the eigenvalue ratio is "
                             "undefined",
    "one-factor-not-fitted": "the one-factor model needs a non-singular correlation matrix and more respondents "
                             "than items",
    "one-factor-two-items": "a one-factor model of two items is not identified: variance explained by one factor "
                            "left out",
    "scale-listwise-set-aside": "{set_aside} respondent(s) with a missing answer set aside (listwise)",
    "too-few-complete": "only {n} complete respondent(s): at least {needed} are needed",
    "items-without-variance": "{count} item(s) have no variance: correlations are undefined",
    # notes of the whole structure
    "listwise-set-aside": "{set_aside} of {n_rows} respondent(s) with at least one missing answer set aside "
                          "(listwise); every statistic uses the remaining complete cases",
    "items-left-out": "{count} item(s) without variance left out: {items}",
    "structure-too-few-respondents": "only {n} complete respondent(s): the structure needs at least {needed}",
    "structure-too-few-items": "fewer than two items with variance: there is no structure to analyse",
    "correlations-incomplete": "some item pairs have no respondents in common: the correlation matrix is incomplete",
    "low-kmo-overall": "overall KMO {kmo} is below {cutoff} (Kaiser, 1974): the correlations may be too weak for "
                       "factor analysis",
    "bartlett-not-rejected": "Bartlett's test does not reject uncorrelated items (p >= {alpha}): factors may be "
                             "spurious",
    "parallel-no-factor": "parallel analysis found no eigenvalue above random data; one factor fitted anyway",
    "factors-not-unique": "{n_factors} factors exceed the {bound} that {p} items can identify; the solution is not "
                          "unique",
    "factors-reduced": "{n_factors} factors ({rule}) exceed the {bound} that {p} items can identify; {fitted} fitted",
    "correlation-singular": "the item correlation matrix is singular (an item duplicates others, or there are no more "
                            "respondents than items): no factor analysis",
    "scales-without-factor": "fewer factors ({n_factors}) than scales ({n_scales}): no factor of its own for "
                             "{scales}; its items are not checked against a factor",
    "factors-without-scale": "factor(s) {factors} belong to no scale: a dimension the scale file does not name, or a "
                             "method factor (e.g. the reverse-worded items)",
}

#: the structure's item and scale flags, keyed by flag code (kept apart from the notes: ``heywood-case`` is also
#: a note of the confirmatory models, worded differently)
STRUCTURE_FLAGS: dict[str, str] = {
    "no-variance": "every respondent used gave the same answer; left out of the analysis",
    "low-kmo": "item KMO {kmo} is below {cutoff} (Kaiser, 1974): it shares little with the other items",
    "heywood-case": "uniqueness at the lower bound: the factors reproduce this item almost entirely",
    "several-dimensions": "first-to-second eigenvalue ratio {eigen_ratio} is below {cutoff}: the items may measure "
                          "more than one thing",
    "off-scale-factor": "loads most on F{factor} ({loading}), not on F{own_factor} of its scale {scale} "
                        "({own_loading}); check that the item belongs to {scale}",
    "weak-loading": "loads {loading} on F{factor} of its scale {scale}, below {cutoff}{in_size}",
    "negative-loading": "loads {loading} on F{factor} of its scale {scale} after keying; check whether it should be "
                        "reverse-keyed",
    "cross-loading": "also loads {loading} on F{factor}, above {cutoff}{in_size}",
}


def _loading(value: Any) -> str:
    from .numbers import format_value

    return "undefined" if value is None or value != value else format_value(value, "bounded")


def _size_against(value: Any, cutoff: float, kind: str = "bounded", decimals: int = 2) -> tuple[str, str]:
    """A signed value's size beside its cut-off, signed again, with the decimals the comparison needs."""
    from .numbers import format_against, format_value

    if value is None or value != value:
        return "undefined", format_value(cutoff, kind, decimals)
    size, cut = format_against(abs(float(value)), cutoff, kind, decimals)
    return (f"-{size}" if float(value) < 0 else size), cut


def structure_message(code: str, values: Mapping[str, Any], *, flag: bool = False) -> str:
    """The sentence of one structure note (or, with ``flag``, item or scale flag) from its values."""
    values = dict(values)
    if flag:
        template = STRUCTURE_FLAGS[code]
        if code in ("weak-loading", "cross-loading"):
            loading = values["loading"]
            values["loading"], values["cutoff"] = _size_against(loading, values["cutoff"])
            values["in_size"] = " in size" if loading is not None and loading < 0 else ""
        elif code == "low-kmo":
            values["kmo"], values["cutoff"] = _size_against(values["kmo"], values["cutoff"])
        elif code == "several-dimensions":
            values["eigen_ratio"], values["cutoff"] = _size_against(values["eigen_ratio"], values["cutoff"], "num", 1)
        for key in ("loading", "own_loading"):
            if key in values and not isinstance(values[key], str):
                values[key] = _loading(values[key])
        return template.format(**values)
    if code == "low-kmo-overall":
        values["kmo"], values["cutoff"] = _size_against(values["kmo"], values["cutoff"])
        return STRUCTURE[code].format(**values)
    if code == "bartlett-not-rejected":
        from .numbers import format_value

        return STRUCTURE[code].format(alpha=format_value(values.get("alpha", 0.05), "bounded"))
    return STRUCTURE[code].format(**{key: _plain(value) for key, value in values.items()})

# -- shape ---------------------------------------------------------------------------------------------------
SHAPE: dict[str, str] = {
    # the evidence behind a shape label (see shape_message for the parts that depend on the values)
    "shape-bimodal": "two peaks near {low_peak} and {high_peak} with a valley near {valley_at} at {valley_ratio} of "
                     "the smaller peak ({valley_p}, windows of {window_cells} score value(s)); excess w {flat_w} "
                     "against flat; dip test {dip_p} on jittered scores; bimodality coefficient {bimodality}",
    "shape-uniform": "close to flat: excess w {flat_w} over {bands} bands (below {flat_cutoff}); {skew_text}; "
                     "bimodality coefficient {bimodality} (a flat distribution gives 5/9)",
    "shape-skewed": "{skew_text}, beyond ±{skew_cutoff}; {centre}{order}",
    "shape-skewed-order": "; the mean is not {side} the median although the skewness says so, common with tied "
                          "rating data (von Hippel 2005)",
    "shape-symmetric": "{skew_text}, within ±{skew_cutoff}; no clear valley between two peaks",
    "shape-symmetric-wide-se": "{skew_text}: beyond ±{skew_cutoff} but within twice its SE; no clear valley between "
                               "two peaks",
    "shape-skew-text": "skewness {skewness} (SE {skewness_se})",
    "shape-centre-same": "mean and median both {median}",
    "shape-centre": "mean {mean} {side} median {median}",
    "no-shape-constant": "no shape: every score is the same value",
    "no-shape-too-few": "no shape: too few scores",
    "no-shape-below-minimum": "no shape: {n} scores are too few for a label (at least {minimum})",
    # notes
    "mean-median-disagree": "mean and median disagree with the direction of the skewness (von Hippel 2005): report "
                            "the skewness, not the mean-median order",
    "scores-missing": "{n_missing} missing score(s) left out",
    "no-scores": "no scores to describe",
    "floor-effect": "floor effect: {share_pct}% of scores at the lowest attainable value (more than "
                    "{threshold_pct}%, Terwee et al. 2007)",
    "ceiling-effect": "ceiling effect: {share_pct}% of scores at the highest attainable value (more than "
                      "{threshold_pct}%, Terwee et al. 2007)",
    "floor-ceiling-no-range": "floor and ceiling shares need the attainable range (low, high)",
    "shape-not-given-constant": "shape label not given: every score is the same value",
    "shape-not-given-too-few": "shape label not given: too few scores",
    "shape-not-given-below-minimum": "shape label not given: fewer than {minimum} scores",
    "subgroup-unscored": "{unscored} respondent(s) without a score left out of the {column} subgroups",
}


def _finite(value: Any) -> bool:
    return value is not None and isinstance(value, (int, float)) and value == value and abs(value) != float("inf")


def _fixed(value: Any) -> str:
    """Two decimals, as the evidence shows its numbers; "n/a" when not computed."""
    from .numbers import format_value

    return format_value(value, "num", 2) if _finite(value) else "n/a"


def _p_text(value: Any) -> str:
    from .numbers import format_value

    if not _finite(value):
        return "n/a"
    shown = format_value(value, "p")
    return f"p {shown}" if shown.startswith("<") else f"p = {shown}"


def _signed_against(value: Any, cutoff: float) -> str:
    """A signed number beside its cut-off (in size), with the decimals the comparison needs to read true."""
    from .numbers import format_against

    if not _finite(value):
        return "n/a"
    size, _ = format_against(abs(float(value)), cutoff, "num", 2)
    return f"-{size}" if value < 0 and float(size) != 0 else size


def shape_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one shape note or of the evidence behind a shape label, from its values."""
    from .numbers import format_value

    v = dict(values)
    if code in ("shape-bimodal", "shape-uniform", "shape-skewed", "shape-symmetric"):
        skewness, cutoff = v.get("skewness"), v.get("skew_cutoff")
        skew_text = SHAPE["shape-skew-text"].format(skewness=_signed_against(skewness, cutoff),
                                                    skewness_se=_fixed(v.get("skewness_se")))
        if code == "shape-bimodal":
            ratio = v.get("valley_ratio")
            return SHAPE[code].format(low_peak=_fixed(v["low_peak"]), high_peak=_fixed(v["high_peak"]),
                                      valley_at=_fixed(v["valley_at"]),
                                      valley_ratio=f"{ratio:.0%}" if _finite(ratio) else "n/a",
                                      valley_p=_p_text(v.get("valley_pvalue")), window_cells=v["window_cells"],
                                      flat_w=_fixed(v.get("flat_w")), dip_p=_p_text(v.get("dip_pvalue")),
                                      bimodality=_fixed(v.get("bimodality")))
        if code == "shape-uniform":
            return SHAPE[code].format(flat_w=_signed_against(v.get("flat_w"), v["flat_cutoff"]), bands=v["bands"],
                                      flat_cutoff=f"{v['flat_cutoff']:g}", skew_text=skew_text,
                                      bimodality=_fixed(v.get("bimodality")))
        mean, median = v.get("mean"), v.get("median")
        if _fixed(mean) == _fixed(median):
            centre = SHAPE["shape-centre-same"].format(median=_fixed(median))
        else:
            side = "below" if _finite(mean) and _finite(median) and mean < median else "above"
            centre = SHAPE["shape-centre"].format(mean=_fixed(mean), side=side, median=_fixed(median))
        if code == "shape-skewed":
            order = "" if v.get("order_as_expected") else SHAPE["shape-skewed-order"].format(
                side="below" if skewness < 0 else "above")
            return SHAPE[code].format(skew_text=skew_text, skew_cutoff=f"{cutoff:g}", centre=centre, order=order)
        beyond = _finite(skewness) and abs(skewness) >= cutoff
        text = SHAPE["shape-symmetric-wide-se" if beyond else code].format(skew_text=skew_text,
                                                                            skew_cutoff=f"{cutoff:g}")
        if _finite(v.get("flat_w")) and not v.get("flat"):
            text += f"; not flat (excess w {_fixed(v['flat_w'])})"
        if _finite(mean) and _finite(median) and abs(mean - median) > 0 and _finite(skewness) and \
                abs(skewness) < cutoff:
            text += f"; {centre}"
        return text
    if code in ("floor-effect", "ceiling-effect"):
        return SHAPE[code].format(share_pct=format_value(v.get("share_pct"), "pct"),
                                  threshold_pct=f"{v.get('threshold_pct', 15):g}")
    return SHAPE[code].format(**{key: _plain(value) for key, value in v.items()})

# -- subgroups, compare and tally ----------------------------------------------------------------------------
GROUPS: dict[str, str] = {
}

# -- screening -----------------------------------------------------------------------------------------------
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
    from .numbers import format_value

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

# -- drafting a scale file ----------------------------------------------------------------------------------
DRAFTING: dict[str, str] = {
    "draft-weak-item": "{item}: item-rest r = {item_rest_r} with the proposed keying, weak: check its wording",
    "draft-uncorrelated-column": "does not correlate with the other {stem} items (mean |r| = {mean_abs_r}, below "
                                 "{threshold}): left out of every scale",
    "draft-weakly-related-item": "{item} correlates weakly with the other {stem} items (mean |r| = {mean_abs_r} "
                                 "with this group, below {threshold}); kept here as its likeliest scale, as "
                                 "worded: check its wording and direction, or remove it",
}

# -- engine (streaming, Dask) --------------------------------------------------------------------------------
ENGINE: dict[str, str] = {
}

# -- the JSON vocabulary: statistics that cannot be computed -------------------------------------------------
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


def _all_templates() -> dict[str, str]:
    merged: dict[str, str] = {}
    for block in (READING, RELIABILITY, STRUCTURE, SHAPE, GROUPS, SCREENING, CONFIRM, ORDINAL, MISSING,
                  WEIGHTS, ENGINE, DRAFTING, VOCABULARY):
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
    if note.code in STRUCTURE and not formatted:
        return structure_message(note.code, note.values)
    if note.code in SHAPE and not formatted:
        return shape_message(note.code, note.values)
    template = _all_templates().get(note.code)
    values = {key: _plain(value) for key, value in note.values.items()}
    values.update(formatted or {})
    if note.code == "not-computable":
        values["reason"] = NOT_COMPUTABLE_REASONS.get(values.get("reason"), values.get("reason"))
    if template is None:
        detail = ", ".join(f"{key} {value}" for key, value in values.items())
        return f"{note.code}: {detail}" if detail else note.code
    return template.format(**values)
