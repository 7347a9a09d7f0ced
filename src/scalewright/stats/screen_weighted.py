"""The survey-weighted parts of the careless-responding screen from exact weighted sums (a file read in blocks).

With survey weights the screen weighs only what describes the sample: the Mahalanobis centre (weighted means
and pairwise covariance: :meth:`~scalewright.summaries.exact_weighted.ExactWeightedPairwise.moments`), the
alpha with and without the flagged respondents, and the shares of the flagged in the sum of weights. Each
respondent's own indices and flags are unweighted. The functions here give the whole-file screen's weighted
results (:func:`~scalewright.stats.screening.screen_respondents` with ``weights``,
:func:`~scalewright.analyses.screen.weighted_screen_summary`) from weighted sums kept exactly
(:mod:`scalewright.summaries.exact_weighted`), so they do not depend on how the file was cut into blocks.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np


def _exact_ratio(numerator: int, num_exp: int, denominator: int, den_exp: int) -> float:
    from ..summaries.exact_weighted import ExactWeightedCrossProducts

    return ExactWeightedCrossProducts._ratio(numerator, num_exp, denominator, den_exp)


def weighted_alpha_change(unflagged: Mapping[str, Any], flagged: Mapping[str, Any]) -> dict[str, dict[str, Any]]:
    r"""Each scale's weighted alpha of the complete answers with a positive weight, of every respondent and
    of the unflagged only (the ``alpha_change`` of the weighted screen), from the exact weighted
    cross-products of its keyed codes (:class:`~scalewright.summaries.exact_weighted.ExactWeightedCrossProducts`)
    of the unflagged and of the flagged respondents.

    .. math:: \alpha = \frac{k}{k - 1}\left(1 - \frac{\sum_j s_{jj}}{\sum_{jk} s_{jk}}\right)

    with :math:`s` the weighted covariance (divisor :math:`V_1 - V_2/V_1`); ``n_*`` count the respondents
    used and ``n_effective_*`` is Kish's effective n of their weights.

    References
    ----------
    .. [1] Cronbach, L. J. (1951). Coefficient alpha and the internal structure of tests. Psychometrika, 16,
       297-334.
    .. [2] Kish, L. (1965). *Survey Sampling*. New York: Wiley.
    """
    from .reliability_coefficients import cronbach_alpha_from_cov

    def alpha_of(cross: Any) -> tuple[float, int, float]:
        k = cross.gram_int.shape[0] - 1
        n_used = int(cross.n_used)
        alpha = cronbach_alpha_from_cov(cross.covariance(np.zeros(k, dtype=bool))) if n_used >= 2 else math.nan
        return alpha, n_used, (cross.effective_n if n_used else math.nan)

    out = {}
    for name, kept in unflagged.items():
        alpha_all, n_all, n_eff_all = alpha_of(kept.merge(flagged[name]))
        alpha_kept, n_kept, n_eff_kept = alpha_of(kept)
        out[name] = {"alpha_all": alpha_all, "n_all": n_all, "alpha_without_flagged": alpha_kept,
                     "n_without_flagged": n_kept, "change": alpha_kept - alpha_all, "weighted": True,
                     "n_effective_all": n_eff_all, "n_effective_without_flagged": n_eff_kept}
    return out


def weighted_flag_shares(*, weight_column: str, n: int, n_zero_weight: int, everyone: Any, flagged: Any,
                         n_flagged: int, per_flag: Mapping[str, Any | None]) -> dict[str, Any]:
    r"""The weighted screen's block: the shares of the sum of weights that the flagged respondents (and
    those carrying each flag) stand for, beside the unweighted share, with Kish's effective n and design
    effect of the weights.

    ``everyone``, ``flagged`` and each of ``per_flag`` are the exact sums of w and w squared of those rows
    (:class:`~scalewright.summaries.exact_weighted.ExactWeightedCrossProducts` of no items); a flag that was
    not checked is None. Shares are percent of :math:`\sum w`, each the correctly rounded ratio of exact
    sums; :math:`n_{\mathrm{eff}} = (\sum w)^2 / \sum w^2` and
    :math:`\mathrm{deff} = n_+ \sum w^2 / (\sum w)^2` over the :math:`n_+` positive weights.

    References
    ----------
    .. [1] Kish, L. (1965). *Survey Sampling*. New York: Wiley.
    """
    total_int, total_exp = int(everyone.gram_int[0, 0]), everyone._gram_exp

    def share(part: Any) -> float:
        if not total_int:
            return math.nan
        return 100.0 * _exact_ratio(int(part.gram_int[0, 0]), part._gram_exp, total_int, total_exp) \
            if part.n_used else 0.0

    positive = int(everyone.n_used)
    n_effective = everyone.effective_n if positive else math.nan
    design = (_exact_ratio(positive * everyone.sum_w2_int, everyone._w2_exp, total_int * total_int, 2 * total_exp)
              if positive else math.nan)
    return {"weighted": True, "weight_column": weight_column, "n": int(n), "n_zero_weight": int(n_zero_weight),
            "n_effective": n_effective, "sum_of_weights": everyone.sum_w, "design_effect": design,
            "n_flagged": int(n_flagged), "flagged_pct": share(flagged),
            "flagged_unweighted_pct": 100.0 * (n_flagged / n) if n else math.nan,
            "flag_pct": {code: None if part is None else share(part) for code, part in per_flag.items()}}


__all__ = ["weighted_alpha_change", "weighted_flag_shares"]
