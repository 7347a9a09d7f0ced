"""The weighted members of a scale's summary of one block (when the plan names a weight column)."""
from __future__ import annotations

from typing import Any

import numpy as np

from ..summaries.exact_weighted import ExactWeightedCrossProducts
from ..summaries.weighted import WeightedAnswers, WeightedCrossProducts, WeightedScoreCounts


def weighted_members(codes: np.ndarray, weights: np.ndarray, scale: Any, plan: Any) -> dict[str, Any]:
    """``w_cross_products`` (listwise; summed exactly when the plan says ``weighted_exact``), ``w_answers`` and, when the plan wants score counts, ``w_scores``."""
    # the factor fits of confirm need the covariance to the bit on every route: exact sums (see exact_weighted)
    crossed = ExactWeightedCrossProducts if plan.weighted_exact else WeightedCrossProducts
    members: dict[str, Any] = {"w_cross_products": crossed.from_codes(codes, weights),
                               "w_answers": WeightedAnswers.from_codes(codes, weights, scale.high - scale.low + 1)}
    if plan.scores:
        members["w_scores"] = WeightedScoreCounts.from_codes(codes, weights, low=scale.low, high=scale.high,
                                                             reversed_mask=np.array(scale.reversed_mask))
    return members
