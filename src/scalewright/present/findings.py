"""The report's findings in plain sentences: what was found first, the statistics in brackets after it.

The findings are chosen in :mod:`scalewright.analyses.findings`; this module only words them. Sentences carry
no nested brackets: the statistics follow a colon inside one pair.
"""
from __future__ import annotations

from collections.abc import Sequence

from ..analyses.findings import Finding
from .numbers import format_value

_SYMBOL = {"Hedges' g": "g", "rank-biserial r": "r", "omega-squared": "ω²", "epsilon-squared": "ε²"}
_BOUNDED = {"rank-biserial r", "omega-squared", "epsilon-squared"}


def _b(value: float, decimals: int = 2) -> str:
    return format_value(value, "bounded", decimals)


def _p(value: float, holm: bool) -> str:
    text = format_value(value, "p")
    prefix = "Holm-adjusted p" if holm else "p"
    return f"{prefix} {text}" if text.startswith("<") else f"{prefix} = {text}"


def _join(names: Sequence[str]) -> str:
    names = list(names)
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


def _difference(values: dict, decimals: int) -> str:
    name = values["effect_name"]
    kind = "bounded" if name in _BOUNDED else "num"
    stats = (f"{values['magnitude']} difference: {_SYMBOL.get(name, name)} = "
             f"{format_value(values['effect'], kind, decimals)}, {_p(values['pvalue'], values['holm'])}")
    column, title = values["column"], values["title"]
    if values["n_levels"] == 2:
        return (f"Respondents with {column} {values['highest']} score higher on {title} than those with "
                f"{column} {values['lowest']} ({stats}).")
    return (f"{title} differs by {column}: highest for {values['highest']}, lowest for {values['lowest']} "
            f"({stats}).")


def _weighted_alpha(values: dict, decimals: int) -> str:
    return f" (weighted {_b(values['alpha_weighted'], decimals)})" if "alpha_weighted" in values else ""


def finding_sentence(finding: Finding, *, decimals: int = 2) -> str:
    """One finding as one or two plain sentences."""
    v = finding.values
    code = finding.code
    if code == "set-aside":
        source = f" as listed in {v['source']}" if v.get("source") else ""
        return (f"{v['n_excluded']} of {v['n_read']} respondents were set aside{source}; everything below "
                f"describes the other {v['n_analysed']}.")
    if code == "results-weighted":
        zero = f"; {v['n_zero_weight']} with weight 0 left out" if v["n_zero_weight"] else ""
        return (f"Estimates are weighted by {v['weight_column']} ({v['n']} respondents, effective n "
                f"{format_value(v['n_effective'], 'num', 1)}, design effect of the weights "
                f"{format_value(v['design_effect'], 'num', 2)}{zero}); intervals and tests use Kish's effective n, "
                "an approximation when the sample has strata or clusters.")
    if code == "scales-reliable":
        scales = v["scales"]
        listed = ", ".join(f"{s['title']} {_b(s['alpha'], decimals)}" + _weighted_alpha(s, decimals) for s in scales)
        subject = "The scale" if len(scales) == 1 else f"{len(scales)} scales"
        verb = "is" if len(scales) == 1 else "are"
        return (f"{subject} {verb} consistent enough to describe groups (alpha: {listed}; "
                f"{_b(v['threshold'])} or more by convention).")
    if code == "scale-unreliable":
        return (f"{v['title']} is not consistent enough in this sample (alpha = {_b(v['alpha'], decimals)}"
                f"{_weighted_alpha(v, decimals)}, below "
                f"{_b(v['threshold'])}): read its scores with care.")
    if code == "group-difference":
        return _difference(v, decimals)
    if code == "more-differences":
        return f"{v['n_more']} further subgroup difference(s) of this kind are in the scales' subgroup sections."
    if code == "no-group-difference":
        return (f"None of the {v['n_comparisons']} subgroup comparisons shows a difference that is both clear "
                f"beyond chance and at least small (by {_join(list(v['columns']))}).")
    if code == "item-miskey-suspect":
        return (f"Item {v['item']} runs against the rest of {v['title']}: check whether it should be "
                "reverse-keyed before using the score.")
    if code == "item-weak-item":
        return (f"Item {v['item']} agrees little with the rest of {v['title']} "
                f"(item-rest r = {_b(v['value'], decimals)}): check its wording.")
    if code in ("floor-effect", "ceiling-effect"):
        end = "lowest" if code == "floor-effect" else "highest"
        return (f"Many respondents sit at the {end} possible {v['title']} score "
                f"({format_value(v['share_pct'], 'pct')}%): the scale cannot tell them apart.")
    if code == "bimodal-scores":
        return f"{v['title']} scores form two clusters rather than one peak: one average describes them poorly."
    if code == "screen-flagged":
        weighted = (f"; {format_value(v['weighted_share_pct'], 'pct')}% of the weight"
                    if "weighted_share_pct" in v else "")
        unchecked = (f" Not checked here: {_join(list(v['not_checked']))} (the screen's notes say why)."
                     if v.get("not_checked") else "")
        return (f"The careless-responding screen flagged {v['n_flagged']} of {v['n']} respondents "
                f"({format_value(v['share_pct'], 'pct')}%{weighted}); they are kept in every analysis as records to look at "
                "again." + unchecked)
    if code == "model-fit-misses":
        shape = {"correlated-factors": "with a factor per scale", "bifactor": "with a general factor beside the "
                 "subscales"}.get(v["structure"], f"({v['structure']})")
        return (f"The scale file's structure, as one model of all its items {shape}, fits these answers less "
                f"well than convention asks (CFI = {_b(v['cfi'])}, RMSEA = {_b(v['rmsea'])}, SRMR = "
                f"{_b(v['srmr'])}; {_join(list(v['missed']))} outside CFI >= {_b(v['cfi_min'])}, RMSEA <= "
                f"{_b(v['rmsea_max'])}, SRMR <= {_b(v['srmr_max'])}, Hu & Bentler 1999): see the residuals "
                "and hints before reading the scales as separate.")
    raise ValueError(f"no wording for finding {code!r}")


def finding_items(findings: Sequence[Finding], *, decimals: int = 2) -> tuple[tuple[str, str], ...]:
    """(sentence, anchor) pairs for the report's Findings block."""
    return tuple((finding_sentence(f, decimals=decimals), f.anchor) for f in findings)
