"""Weighted subgroup means and effect sizes, with Kish's effective sample size standing in for n.

Each level's mean and sd are weighted (:mod:`scalewright.stats.weighted`); tests and intervals take each
level's :math:`n_{\\mathrm{eff}}` in place of its n, which is approximate unless the weights are the whole
design (no strata, no clusters). With equal weights every value equals its unweighted counterpart.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..notes import Note, not_computable, note
from ..results import ResultMixin, to_jsonable
from .weighted import weighted_summary


@dataclass(frozen=True)
class WeightedLevel(ResultMixin):
    level: str
    n: int
    n_effective: float
    sum_of_weights: float
    mean: float
    sd: float


@dataclass(frozen=True)
class WeightedComparison(ResultMixin):
    """Weighted means per level and, for two levels, Welch's t and Hedges' g on effective sample sizes."""

    column: str
    scale: str
    weight_column: str
    n: int
    n_effective: float
    sum_of_weights: float
    levels: tuple[WeightedLevel, ...]
    not_described: Mapping[str, int]
    mean_difference: float = math.nan
    t: float = math.nan
    df: float = math.nan
    pvalue: float = math.nan
    hedges_g: float = math.nan
    hedges_g_ci: tuple[float, float] = (math.nan, math.nan)
    eta_squared: float = math.nan
    notes: tuple[Note, ...] = field(default_factory=tuple)

    def unavailable(self) -> list[Note]:
        """Not-computable notes of the statistics left NaN: in the JSON's ``notes`` (the tables show a dash)."""
        described = len(self.levels)
        reason = {"eta_squared": "fewer-than-2-levels" if described < 2 else "no-variance"}
        reason.update(dict.fromkeys(("mean_difference", "t", "df", "pvalue", "hedges_g", "hedges_g_ci"),
                                    "not-two-levels" if described != 2 else "no-variance"))
        return [not_computable(key, why, levels=described) for key, why in reason.items()
                if not np.all(np.isfinite(getattr(self, key)))]

    def to_dict(self) -> dict[str, Any]:
        out = {key: getattr(self, key) for key in ("column", "scale", "weight_column", "n", "n_effective",
                                                    "sum_of_weights", "mean_difference", "t", "df", "pvalue",
                                                    "hedges_g", "hedges_g_ci", "eta_squared")}
        out["levels"] = {lv.level: {k: v for k, v in lv.to_dict().items() if k != "level"} for lv in self.levels}
        out["not_described"] = dict(self.not_described)
        out["notes"] = [n.to_dict() for n in (*self.notes, *self.unavailable())]
        return {"weighted": True, **to_jsonable(out)}


def weighted_compare(scores: np.ndarray, levels: Mapping[str, np.ndarray], weights: np.ndarray, *,
                     column: str, scale: str, weight_column: str, min_cell: int = 5,
                     confidence_level: float = 0.95) -> WeightedComparison:
    r"""Weighted comparison of a score across the levels of one column.

    ``levels`` maps each level to its row positions. Levels with fewer than ``min_cell`` weighted rows with a
    score are named in ``not_described``. For two levels, with :math:`v_g = s_g^2 / n_{\mathrm{eff},g}`:

    .. math::

        t = \frac{\bar x_1 - \bar x_2}{\sqrt{v_1 + v_2}}, \quad
        \nu = \frac{(v_1 + v_2)^2}{v_1^2/(n_1 - 1) + v_2^2/(n_2 - 1)}, \quad
        g = J\,\frac{\bar x_1 - \bar x_2}{s_p}, \; J = 1 - \frac{3}{4(n_1 + n_2) - 9}

    (Welch 1947; Hedges 1981) with :math:`n_g` the effective sizes, :math:`s_p` the pooled weighted sd and
    the interval of g from its large-sample standard error
    :math:`\sqrt{(n_1+n_2)/(n_1 n_2) + g^2 / (2(n_1+n_2))}` (Hedges & Olkin 1985) with the t critical
    value on :math:`n_1 + n_2 - 2` degrees of freedom (as pingouin's ``compute_esci``, which the unweighted
    comparison uses). For any number of
    levels, the weighted :math:`\eta^2 = \sum_g W_g(\bar x_g - \bar x)^2 / \sum_i w_i (x_i - \bar x)^2`.
    """

    x = np.asarray(scores, dtype=float)
    w = np.asarray(weights, dtype=float)
    described: list[tuple[str, np.ndarray]] = []
    not_described: dict[str, int] = {}
    for level, rows in levels.items():
        rows = np.asarray(rows)
        usable = rows[np.isfinite(x[rows]) & (w[rows] > 0)]
        if usable.size < min_cell:
            not_described[level] = int(usable.size)
        else:
            described.append((level, usable))
    summaries = [(level, rows, weighted_summary(x[rows], w[rows])) for level, rows in described]
    out_levels = tuple(WeightedLevel(level=level, n=int(rows.size), n_effective=s.n_effective,
                                     sum_of_weights=s.sum_of_weights, mean=s.mean, sd=s.sd)
                       for level, rows, s in summaries)
    every = np.concatenate([rows for _, rows in described]) if described else np.array([], dtype=int)
    everyone = weighted_summary(x[every], w[every])
    notes = [note("weighted-ci-kish", n_effective=everyone.n_effective, n=int(every.size),
                  design_effect=everyone.design_effect)]
    fields: dict[str, Any] = {}
    if len(summaries) >= 2:
        grand = everyone.mean
        between = sum(s.sum_of_weights * (s.mean - grand) ** 2 for _, _, s in summaries)
        total = float(np.sum(w[every] * (x[every] - grand) ** 2))
        fields["eta_squared"] = between / total if total > 0 else math.nan
    if len(summaries) == 2:
        (_, _, a), (_, _, b) = summaries
        fields.update(weighted_two_levels(a.mean, a.sd, a.n_effective, b.mean, b.sd, b.n_effective,
                                          confidence_level=confidence_level))
    return WeightedComparison(column=column, scale=scale, weight_column=weight_column, n=int(every.size),
                              n_effective=everyone.n_effective, sum_of_weights=everyone.sum_of_weights,
                              levels=out_levels, not_described=not_described, notes=tuple(notes), **fields)


def weighted_two_levels(mean1: float, sd1: float, n1: float, mean2: float, sd2: float, n2: float, *,
                        confidence_level: float = 0.95) -> dict[str, Any]:
    r"""Welch's t and Hedges' g of two levels from their weighted means, SDs and Kish effective sizes.

    .. math::

        t = \frac{\bar x_1 - \bar x_2}{\sqrt{s_1^2/n_1 + s_2^2/n_2}}, \qquad
        g = \Big(1 - \frac{3}{4(n_1 + n_2) - 9}\Big)\frac{\bar x_1 - \bar x_2}{s_p}

    with the Welch-Satterthwaite df and g's normal-theory interval (Hedges & Olkin, 1985, p. 86), the
    effective sizes standing in for the counts (an approximation without the design).
    Returns ``mean_difference``, ``t``, ``df``, ``pvalue``, ``hedges_g`` and ``hedges_g_ci``.
    """
    from scipy import stats

    v1, v2 = sd1**2 / n1, sd2**2 / n2
    diff = mean1 - mean2
    t = diff / math.sqrt(v1 + v2) if v1 + v2 > 0 else math.nan
    df = (v1 + v2) ** 2 / (v1**2 / (n1 - 1) + v2**2 / (n2 - 1)) if v1 + v2 > 0 else math.nan
    pooled = math.sqrt(((n1 - 1) * sd1**2 + (n2 - 1) * sd2**2) / (n1 + n2 - 2))
    g = (1 - 3 / (4 * (n1 + n2) - 9)) * diff / pooled if pooled > 0 else math.nan
    se = math.sqrt((n1 + n2) / (n1 * n2) + g**2 / (2 * (n1 + n2)))
    z = float(stats.t.ppf(0.5 + confidence_level / 2, n1 + n2 - 2))  # as pingouin's compute_esci
    return {"mean_difference": diff, "t": t, "df": df,
            "pvalue": float(2 * stats.t.sf(abs(t), df)) if math.isfinite(t) else math.nan,
            "hedges_g": g, "hedges_g_ci": (g - z * se, g + z * se)}
