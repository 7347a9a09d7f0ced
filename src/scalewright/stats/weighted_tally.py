"""Weighted shares of one categorical column, and their fit to reference proportions (post-stratification check).

The weighted share of a category is the sum of the weights of those who chose it over the sum of the weights
of those who answered. Categories the unweighted tally suppresses stay suppressed here (a weighted share of a
small cell would name its few respondents as surely as their count).
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..notes import Note, note
from ..results import ResultMixin, to_jsonable
from .subgroups import blank_as_missing, level_name
from .tally import Tally
from .tally_fit import check_expected
from .weighted import design_effect, kish_effective_n


@dataclass(frozen=True)
class WeightedShare(ResultMixin):
    category: str
    sum_of_weights: float | None
    share_of_answered_pct: float | None
    share_of_all_pct: float | None
    suppressed: bool


@dataclass(frozen=True)
class WeightedTally(ResultMixin):
    """Weighted counts (sums of weights) and shares of one column, beside the unweighted n."""

    column: str
    weight_column: str
    n: int                   # rows that answered (unweighted), zero weights included
    n_zero_weight: int       # of those, rows with weight 0 (left out of the shares)
    n_effective: float
    sum_of_weights: float    # of the rows that answered
    design_effect: float
    categories: tuple[WeightedShare, ...]

    def share(self, category: str) -> WeightedShare:
        return next(c for c in self.categories if c.category == category)

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"weighted": True, "weight_column": self.weight_column, "n": self.n,
                            "n_zero_weight": self.n_zero_weight, "n_effective": self.n_effective,
                            "sum_of_weights": self.sum_of_weights, "design_effect": self.design_effect,
                            "categories": [c.to_dict() for c in self.categories]})


def weighted_tally(values: pd.Series, weights: np.ndarray, unweighted: Tally, *,
                   weight_column: str) -> WeightedTally:
    r"""Sum of weights and weighted share of every category of ``unweighted`` (same order, same suppression).

    .. math:: \hat p_j = \sum_{i \in j} w_i \Big/ \sum_{i\ \mathrm{answered}} w_i

    Rows with weight 0 count in ``n`` and ``n_zero_weight`` and in nothing else.
    """
    series = blank_as_missing(pd.Series(np.asarray(values, dtype=object)) if not isinstance(values, pd.Series)
                              else values.reset_index(drop=True))
    w = np.asarray(weights, dtype=float)
    answered = ~series.isna().to_numpy()
    names = series[answered].map(level_name).to_numpy()
    w_answered = w[answered]
    total_all = float(w.sum())
    total = float(w_answered.sum())
    sums = pd.Series(w_answered).groupby(names).sum() if names.size else pd.Series(dtype=float)
    rows = []
    for category in unweighted.categories:
        if category.suppressed:
            rows.append(WeightedShare(category=category.category, sum_of_weights=None, share_of_answered_pct=None,
                                      share_of_all_pct=None, suppressed=True))
            continue
        mass = float(sums.get(category.category, 0.0))
        rows.append(WeightedShare(category=category.category, sum_of_weights=mass,
                                  share_of_answered_pct=100.0 * mass / total if total > 0 else None,
                                  share_of_all_pct=100.0 * mass / total_all if total_all > 0 else None,
                                  suppressed=False))
    return WeightedTally(column=unweighted.column, weight_column=weight_column, n=int(answered.sum()),
                         n_zero_weight=int(np.count_nonzero(w_answered == 0)),
                         n_effective=kish_effective_n(w_answered), sum_of_weights=total,
                         design_effect=design_effect(w_answered), categories=tuple(rows))


@dataclass(frozen=True)
class WeightedFit(ResultMixin):
    """Weighted shares against reference proportions. See :func:`weighted_goodness_of_fit`."""

    column: str
    weight_column: str
    chi2: float
    df: int | None
    pvalue: float
    w: float
    n: int
    n_effective: float
    sum_of_weights: float
    categories: Mapping[str, Mapping[str, float]]
    excluded: tuple[str, ...]
    notes: tuple[Note, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"weighted": True, "weight_column": self.weight_column, "n": self.n,
                            "n_effective": self.n_effective, "sum_of_weights": self.sum_of_weights,
                            "chi2": self.chi2, "df": self.df, "pvalue": self.pvalue, "w": self.w,
                            "categories": self.categories, "excluded": list(self.excluded),
                            "notes": [n.to_dict() for n in self.notes]})


def weighted_goodness_of_fit(shares: WeightedTally, unweighted: Tally, expected: Mapping[str, float], *,
                             source: str = "expected proportions", rows: Mapping[str, int] | None = None) -> WeightedFit:
    r"""Chi-square of the weighted shares against reference proportions, on Kish's effective sample size.

    .. math:: \chi^2 = n_{\mathrm{eff}} \sum_j \frac{(\hat p_j - p_j)^2}{p_j}, \qquad
              w = \sqrt{\sum_j (\hat p_j - p_j)^2 / p_j}

    i.e. Pearson's statistic with the weighted shares as observed proportions and :math:`n_{\mathrm{eff}}`
    in place of n: the unweighted statistic divided by the design effect of the weights (a first-order
    correction in the spirit of Rao & Scott 1981, exact only when the weights are the whole design). With
    equal weights it is the unweighted test. Suppressed categories and those with proportion 0 are left out
    and the rest rescaled, as in :func:`scalewright.stats.tally_fit.goodness_of_fit`; the p-value is scipy's
    ``chisquare``.

    References
    ----------
    .. [1] Kish, L. (1965). *Survey Sampling*. Wiley.
    .. [2] Rao, J. N. K., & Scott, A. J. (1981). The analysis of categorical data from complex sample
           surveys. JASA, 76, 221-230.
    """
    from scipy import stats

    proportions = check_expected(unweighted, expected, source=source, rows=rows)
    kept = [c for c in shares.categories if not c.suppressed and proportions[c.category] > 0]
    excluded = tuple(c.category for c in shares.categories if c.suppressed or proportions[c.category] == 0)
    notes = [note("weighted-fit-kish", n_effective=shares.n_effective, design_effect=shares.design_effect)]
    mass_observed = sum(c.sum_of_weights or 0.0 for c in kept)
    mass_expected = sum(proportions[c.category] for c in kept)
    nan = float("nan")
    if len(kept) < 2 or mass_observed <= 0:
        return WeightedFit(column=shares.column, weight_column=shares.weight_column, chi2=nan, df=None, pvalue=nan,
                           w=nan, n=shares.n, n_effective=shares.n_effective, sum_of_weights=shares.sum_of_weights,
                           categories={}, excluded=excluded, notes=(*notes, note("weighted-fit-impossible")))
    observed = np.array([(c.sum_of_weights or 0.0) / mass_observed for c in kept])
    p = np.array([proportions[c.category] for c in kept]) / mass_expected
    n_eff = shares.n_effective
    result = stats.chisquare(n_eff * observed, n_eff * p)
    per_category = {c.category: {"weighted_share_pct": 100 * o, "expected_pct": 100 * pj,
                                 "standardized_residual": float((o - pj) * np.sqrt(n_eff) / np.sqrt(pj * (1 - pj)))
                                 if pj < 1 else nan}
                    for c, o, pj in zip(kept, observed, p, strict=True)}
    return WeightedFit(column=shares.column, weight_column=shares.weight_column, chi2=float(result.statistic),
                       df=len(kept) - 1, pvalue=float(result.pvalue),
                       w=float(np.sqrt(np.sum((observed - p) ** 2 / p))), n=shares.n, n_effective=n_eff,
                       sum_of_weights=shares.sum_of_weights, categories=per_category, excluded=excluded,
                       notes=tuple(notes))
