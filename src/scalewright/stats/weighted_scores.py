"""The weighted mean, sd and moments of a score from its exact weighted value sums (``score`` with weights).

The same estimates as :func:`~scalewright.stats.weighted.weighted_summary` (the divisor
:math:`V_1 - V_2/V_1`, Kish's effective n), each the correctly rounded value of sums kept exactly
(:class:`~scalewright.summaries.exact_scores.ExactWeightedScores`), so they do not depend on the order of
the rows nor on how a file was cut into blocks: the whole-file and the block routes of ``score`` take their
z scores and their weighted block from here and agree to the bit. numpy's ``average`` and
``cov(aweights=...)`` give the same numbers to rounding (about 1e-16 relative; they sum in float64, in an
order set by the array's length and the BLAS).
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import Any

from ..notes import Note, note
from .weighted import WeightedSummary


def _common_integers(values: Any) -> tuple[list[int], int]:
    """Binary floats as whole numbers over one power of two: ``(a, q)`` with ``value = a / 2^q``."""
    ratios = [float(value).as_integer_ratio() for value in values]
    q = max((denominator.bit_length() - 1 for _, denominator in ratios), default=0)
    return [numerator << (q - (denominator.bit_length() - 1)) for numerator, denominator in ratios], q


def exact_weighted_summary(sums: Any, *, weight_column: str = "") -> WeightedSummary:
    r"""Weighted mean, sd, skewness and excess kurtosis of a score from its exact value sums ``sums``
    (:class:`~scalewright.summaries.exact_scores.ExactWeightedScores`).

    With :math:`W_v` the sum of the positive weights of the rows scoring :math:`x_v`,
    :math:`V_1 = \sum_v W_v` and :math:`V_2 = \sum_i w_i^2`:

    .. math:: \bar x_w = \frac{\sum_v W_v x_v}{V_1}, \qquad
              s_w^2 = \frac{\sum_v W_v (x_v - \bar x_w)^2}{V_1 - V_2 / V_1}, \qquad
              n_{\mathrm{eff}} = \frac{V_1^2}{V_2}

    computed in exact rational arithmetic and rounded once. Skewness and kurtosis are the adjusted moments
    of :func:`~scalewright.stats.weighted.weighted_summary` (weighted central moments
    :math:`m_r = \sum_v W_v (x_v - \bar x_w)^r / V_1`, Kish's :math:`n_{\mathrm{eff}}` in place of n).

    References
    ----------
    .. [1] Kish, L. (1965). *Survey Sampling*. New York: Wiley.
    """
    used = sums.n_used
    notes: list[Note] = []
    common: dict[str, Any] = dict(weighted=True, weight_column=weight_column, n=int(sums.n),
                                  n_zero_weight=int(sums.n_zero_weight))
    if not used:
        return WeightedSummary(**common, n_effective=math.nan, sum_of_weights=0.0, design_effect=math.nan,
                               mean=math.nan, sd=math.nan, skewness=math.nan, kurtosis=math.nan)
    weights = [int(w) for w in sums.weight_int]
    scores, q = _common_integers(sums.values)
    v1_int = sum(weights)
    s1_int = sum(w * a for w, a in zip(weights, scores, strict=True))
    two = Fraction(2)
    v1 = v1_int * two ** int(sums.weight_exp)
    v2 = sums.sum_w2_int * two ** int(sums.w2_exp)
    n_eff = float(v1 * v1 / v2)
    mean = float(Fraction(s1_int, v1_int << q))
    # x_v - mean = (a_v V1 - S1) / (2^q V1), in whole numbers over the weights' own scale
    deviations = [a * v1_int - s1_int for a in scores]

    def central(r: int) -> Fraction:
        """m_r = sum W_v (x_v - mean)^r / V1, exactly (the power of two of the weights cancels)."""
        return Fraction(sum(w * d**r for w, d in zip(weights, deviations, strict=True)),
                        (v1_int ** (r + 1)) << (q * r))

    sd = math.sqrt(float(central(2) * v1 / (v1 - v2 / v1))) if used >= 2 else math.nan
    skew = kurt = math.nan
    if used >= 3 and len(scores) > 1:
        m2, m3, m4 = (float(central(r)) for r in (2, 3, 4))
        g1, g2 = m3 / m2**1.5, m4 / m2**2 - 3
        skew = math.sqrt(n_eff * (n_eff - 1)) / (n_eff - 2) * g1 if n_eff > 2 else math.nan
        kurt = ((n_eff - 1) / ((n_eff - 2) * (n_eff - 3)) * ((n_eff + 1) * g2 + 6)) if n_eff > 3 else math.nan
    else:
        notes.append(note("weighted-moments-undefined", n=int(used)))
    return WeightedSummary(**common, n_effective=n_eff, sum_of_weights=float(v1),
                           design_effect=float(used * v2 / (v1 * v1)), mean=mean, sd=sd, skewness=skew,
                           kurtosis=kurt, notes=tuple(notes))


def exact_weighted_summary_of(scores: Any, weights: Any, *, weight_column: str = "") -> WeightedSummary:
    """:func:`exact_weighted_summary` of one score per row (NaN: not scored) and its usable weight."""
    from ..summaries.exact_scores import ExactWeightedScores

    return exact_weighted_summary(ExactWeightedScores.from_values(scores, weights), weight_column=weight_column)


__all__ = ["exact_weighted_summary", "exact_weighted_summary_of"]
