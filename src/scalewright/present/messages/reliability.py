"""Sentences of the reliability flags (miskeyed, weak and redundant items; low or excess alpha)."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ...notes import Note

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

#: notes of one scale's reliability (what could not be computed, how missing answers were handled)
RELIABILITY_NOTES: dict[str, str] = {
    "bootstrap-too-small": "bootstrap needs at least 3 rows and 2 items",
    "bootstrap-resamples-without-alpha": "{count} resample(s) gave no alpha (no variance) and were left out",
    "bootstrap-too-few-usable": "too few usable resamples for a bootstrap interval",
    "bootstrap-bca-undefined": "BCa interval undefined: every resample fell on one side of the estimate",
    "reliability-one-item": "only one item: alpha, omega and the other consistency statistics need at least 2 items",
    "reliability-too-few-rows": "only {n_used} usable row(s): the statistics need at least {needed}",
    "covariance-incomplete": "some item pairs have fewer than 2 rows in common: the covariance matrix is incomplete",
    "items-no-variance": "no variance among the rows used for {items}: item-rest r, standardized alpha, inter-item "
                         "correlations, lambda6 and omega are undefined",
    "total-no-variance": "the scale's total has no variance among the rows used: alpha is undefined",
    "covariance-singular": "the item covariance matrix is singular (an item is an exact linear combination of "
                           "others): lambda6 and omega are undefined",
    "pairwise-not-positive-semidefinite": "the pairwise covariance matrix is not positive semi-definite: treat the "
                                          "results with caution",
    "omega-needs-three-items": "omega needs at least 3 items for a one-factor model",
    "omega-if-deleted-needs-four-items": "omega if deleted needs at least 4 items (a one-factor model needs 3)",
    "omega-not-fitted": "the one-factor model could not be fitted: omega is undefined",
    "omega-ml-not-converged": "maximum-likelihood one-factor fit did not converge; minres used instead",
    "omega-minres-not-converged": "minres one-factor fit did not converge either; omega is uncertain",
    "omega-heywood": "improper one-factor solution (Heywood case): the uniqueness of {items} reached the fitting "
                     "bound of .005; omega may be overstated",
    "pairwise-deletion": "pairwise deletion: each covariance uses the rows that answered both items ({n_min} to "
                         "{n_max} rows); the confidence interval uses the smallest count, {n_min}",
    "reliability-listwise-set-aside": "listwise deletion: {set_aside} of {n_rows} row(s) did not answer every item "
                                      "and were set aside",
    "off-level-answers": "{count} answer(s) are not whole answer codes from {low} to {high}; they are left out of "
                         "the answer counts",
    "alphas-not-compared": "{column}: fewer than two levels with at least {min_size} respondents; no comparison of "
                           "alphas",
}


def reliability_note_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one reliability note from its values (the answer range as written: 1, 0.5)."""
    from .values import _plain

    shown = {key: (f"{value:g}" if key in ("low", "high") and isinstance(value, (int, float)) else _plain(value))
             for key, value in values.items()}
    return RELIABILITY_NOTES[code].format(**shown)


def reliability_flag_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one reliability flag (``miskey-suspect``, ``weak-item``, ...) from its values.

    Values beside a cut-off are shown with as many decimals as the comparison needs to read true; the
    alpha a reversal would give is said only when it differs from today's alpha as shown.
    """
    from ..numbers import format_against, format_value

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
    from .wording import describe

    return describe(Note(code=code, values=values))
