"""Sentences of the structure's notes and of its item and scale flags."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .values import _plain

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
    "item-keyed-both-ways": "item {item} is reverse-keyed in some scales and not in others; analysed as {scale} keys it",
    "report-structure-not-analysed": "the structure needs at least two items; it was not analysed",
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
    # notes of the factor extraction and rotation, and of Bartlett's test
    "extraction-not-converged": "the {method} extraction did not converge ({detail}); treat the loadings as "
                                "provisional",
    "rotation-not-settled": "the {rotation} rotation did not settle within {iterations} iteration(s); treat the "
                            "loadings as provisional",
    "factor-heywood": "{count} item(s) reached the lowest allowed uniqueness ({floor}), a Heywood case: the model "
                      "explains them almost entirely, often a sign of too many factors, too few respondents or "
                      "near-duplicate items",
    "kmo-too-few-items": "KMO needs at least two items",
    "kmo-singular": "KMO is undefined: the item correlation matrix is singular (an item is a linear combination of "
                    "others, or fewer respondents than items)",
    "kmo-zero-correlations": "KMO is undefined: all correlations are zero",
    "bartlett-singular": "Bartlett's test is undefined: the item correlation matrix is singular",
    "bartlett-too-few-items": "Bartlett's test needs at least two items",
    "bartlett-too-few-respondents": "Bartlett's test needs more respondents than (2p + 11)/6 = {needed} for {p} "
                                    "items; {n} were used",
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
    from ..numbers import format_value

    return "undefined" if value is None or value != value else format_value(value, "bounded")


def _size_against(value: Any, cutoff: float, kind: str = "bounded", decimals: int = 2) -> tuple[str, str]:
    """A signed value's size beside its cut-off, signed again, with the decimals the comparison needs."""
    from ..numbers import format_against, format_value

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
    if code == "factor-heywood":  # the bound as set, not rounded
        return STRUCTURE[code].format(count=values["count"], floor=f"{values['floor']:g}")
    if code == "bartlett-too-few-respondents":
        return STRUCTURE[code].format(needed=f"{values['needed']:.1f}", p=values["p"], n=values["n"])
    if code == "bartlett-not-rejected":
        from ..numbers import format_value

        return STRUCTURE[code].format(alpha=format_value(values.get("alpha", 0.05), "bounded"))
    return STRUCTURE[code].format(**{key: _plain(value) for key, value in values.items()})
