"""Sentences of the shape notes and of the evidence behind a shape label."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .values import _plain

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
    # notes of the moments and of the histogram cells
    "moments-too-few": "only {n} score(s): skewness and kurtosis need at least 3 (kurtosis 4)",
    "moments-constant": "every score is the same value: skewness and kurtosis are undefined",
    "kurtosis-too-few": "kurtosis needs at least 4 scores",
    "last-interval-closed": "the last interval [{low}, {high}] includes its upper end",
    "last-interval-size": "the last interval holds {size} score value(s), the others {others}",
    "subgroup-unscored": "{unscored} respondent(s) without a score left out of the {column} subgroups",
}


def _finite(value: Any) -> bool:
    return value is not None and isinstance(value, (int, float)) and value == value and abs(value) != float("inf")


def _fixed(value: Any) -> str:
    """Two decimals, as the evidence shows its numbers; "n/a" when not computed."""
    from ..numbers import format_value

    return format_value(value, "num", 2) if _finite(value) else "n/a"


def _p_text(value: Any) -> str:
    from ..numbers import format_value

    if not _finite(value):
        return "n/a"
    shown = format_value(value, "p")
    return f"p {shown}" if shown.startswith("<") else f"p = {shown}"


def _signed_against(value: Any, cutoff: float) -> str:
    """A signed number beside its cut-off (in size), with the decimals the comparison needs to read true."""
    from ..numbers import format_against

    if not _finite(value):
        return "n/a"
    size, _ = format_against(abs(float(value)), cutoff, "num", 2)
    return f"-{size}" if value < 0 and float(size) != 0 else size


def shape_message(code: str, values: Mapping[str, Any]) -> str:
    """The sentence of one shape note or of the evidence behind a shape label, from its values."""
    from ..numbers import format_value

    v = dict(values)
    if code in ("shape-bimodal", "shape-uniform", "shape-skewed", "shape-symmetric"):
        skewness: Any = v.get("skewness")  # JSON values: a number, or None where it could not be computed
        cutoff: Any = v.get("skew_cutoff")
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
        mean: Any = v.get("mean")
        median: Any = v.get("median")
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
    if code == "last-interval-closed":  # the edges as the interval labels show them: up to 3 decimals, trimmed
        return SHAPE[code].format(**{key: _trimmed(v[key]) for key in ("low", "high")})
    return SHAPE[code].format(**{key: _plain(value) for key, value in v.items()})


def _trimmed(value: float, decimals: int = 3) -> str:
    text = f"{value:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text
