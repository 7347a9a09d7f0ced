"""The tests of a score across the levels of a column from each level's score value counts.

Every test, effect size and pair of a :class:`~scalewright.stats.groups.Comparison` is a function of the
levels' sizes, means, variances, medians and midranks, and each of these is exact from value counts (scores of
rating scales take few distinct values). Both routes use this one implementation: the whole file
(:func:`~scalewright.stats.groups.compare_groups` counts the values of its rows) and a file read in blocks or
a Dask cluster (:func:`compare_from_counts`, from the counts kept per level). Hand-written because pingouin
and scipy take the rows (and pingouin's import, with xarray and seaborn, costs about a second);
``tests/test_groups_from_counts.py`` checks every number live against pingouin and scipy on the rows.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..notes import Note, note
from ..summaries.scores import quantiles_from_counts
from .groups import Comparison, EffectSize, GroupSummary, PairResult, TestResult, _check_options, _left_out_notes
from .range_pairs import games_howell_from_moments, tukey_from_moments
from .rank_counts import kruskal_wallis_from_counts, mann_whitney_from_counts


@dataclass(frozen=True)
class CountedLevel:
    """One level's scores as value counts: ``values`` ascending and distinct, ``counts`` (int) beside them."""

    values: np.ndarray
    counts: np.ndarray

    @property
    def n(self) -> int:
        return int(self.counts.sum())

    @property
    def mean(self) -> float:
        return float(self.counts @ self.values) / self.n

    @property
    def var(self) -> float:
        """Variance with n - 1 (two passes over the distinct values)."""
        if self.n < 2:
            return math.nan
        return float(self.counts @ (self.values - self.mean) ** 2) / (self.n - 1)

    @property
    def constant(self) -> bool:
        return int(np.count_nonzero(self.counts)) <= 1

    def quantiles(self, probabilities: Any) -> np.ndarray:
        return quantiles_from_counts(self.values, self.counts, probabilities)

    def expand(self) -> np.ndarray:
        """The scores themselves (only for the exact Mann-Whitney p-value of small samples without ties)."""
        return np.repeat(self.values, self.counts)


def counted_level(values: np.ndarray, counts: np.ndarray) -> CountedLevel:
    """A :class:`CountedLevel` of the values with a non-zero count."""
    values = np.asarray(values, dtype=np.float64)
    counts = np.asarray(counts, dtype=np.int64)
    kept = counts > 0
    return CountedLevel(values=values[kept], counts=counts[kept])


def _summary(level: str, x: CountedLevel) -> GroupSummary:
    q1, median, q3 = x.quantiles([0.25, 0.5, 0.75])
    return GroupSummary(level=level, n=x.n, mean=x.mean, sd=math.sqrt(x.var) if x.n > 1 else math.nan,
                        median=float(median), q1=float(q1), q3=float(q3))


def compare_from_counts(levels: Mapping[str, CountedLevel], *, n_no_score: int, n_no_group: int,
                        min_cell: int = 5, student: bool = False, confidence_level: float = 0.95,
                        column: str = "group", scale: str | None = None) -> Comparison:
    r""":func:`~scalewright.stats.groups.compare_groups` from each level's score value counts.

    ``levels`` in the column's order (levels without a score may be left out); ``n_no_score`` counts the
    respondents without a score, ``n_no_group`` those with a score but no level.

    .. math::

        \bar x_g = \frac{\sum_v c_{gv} v}{n_g}, \qquad s_g^2 = \frac{\sum_v c_{gv}(v - \bar x_g)^2}{n_g - 1}

    and the tests of :func:`~scalewright.stats.groups.compare_groups` from these (Welch 1951; Games &
    Howell 1976; Levene 1960 centred on the median, Brown & Forsythe 1974), the rank tests from midranks
    of the pooled value counts (:mod:`scalewright.stats.rank_counts`).

    References
    ----------
    .. [1] Welch, B. L. (1951). On the comparison of several mean values. Biometrika, 38, 330-336.
    .. [2] Games, P. A. & Howell, J. F. (1976). Pairwise multiple comparison procedures with unequal n's
           and/or variances. Journal of Educational Statistics, 1, 113-125.
    .. [3] Brown, M. B. & Forsythe, A. B. (1974). Robust tests for the equality of variances. Journal of
           the American Statistical Association, 69, 364-367.
    """
    _check_options(min_cell, confidence_level)
    notes: list[Note] = []
    summaries: list[GroupSummary] = []
    samples: dict[str, CountedLevel] = {}
    suppressed: list[str] = []
    for level, x in levels.items():
        if x.n == 0:
            continue
        if x.n < min_cell:
            suppressed.append(level)
            continue
        summaries.append(_summary(level, x))
        samples[level] = x
    # the notes and the order of the checks are compare_groups' own, so both routes read the same
    notes.extend(_left_out_notes(column, suppressed, min_cell, n_no_score, n_no_group))
    base: dict[str, Any] = dict(column=column, groups=tuple(summaries), suppressed=tuple(suppressed), min_cell=min_cell,
                confidence_level=confidence_level, n_no_score=n_no_score, n_no_group=n_no_group, scale=scale)
    testable = {level: x for level, x in samples.items() if x.n >= 2}
    if len(testable) < len(samples):
        notes.append(note("single-score-levels-untested"))
    if len(testable) < 2:
        notes.append(note("compare-too-few-levels", column=column, min_size=max(int(min_cell), 2)))
        return Comparison(**base, notes=tuple(notes))
    if all(x.constant for x in testable.values()):
        notes.append(note("zero-variance-no-test"))
        return Comparison(**base, notes=tuple(notes))
    if any(x.constant for x in testable.values()):
        notes.append(note("level-without-spread"))
    result = group_tests(testable, student=student, confidence_level=confidence_level)
    extra_notes = result.pop("extra_notes")
    return Comparison(**base, **result, notes=tuple(notes + extra_notes))


def counted_scores(scores: np.ndarray) -> CountedLevel:
    """The value counts of the scores of one level (no NaN among them)."""
    values, counts = np.unique(np.asarray(scores, dtype=np.float64), return_counts=True)
    return CountedLevel(values=values, counts=counts.astype(np.int64))


def group_tests(samples: Mapping[str, CountedLevel], *, student: bool, confidence_level: float) -> dict[str, Any]:
    """The tests, effect sizes, pairs and Levene's test of two or more levels, each with at least two scores
    and not all without spread: the keyword arguments of a :class:`Comparison` for them, and ``extra_notes``.

    One implementation for both routes: :func:`~scalewright.stats.groups.compare_groups` passes the value
    counts of the rows, :func:`compare_from_counts` those a file read in blocks keeps.
    """
    if len(samples) == 2:
        return _two_groups(samples, student=student, confidence_level=confidence_level)
    return _many_groups(samples, student=student)


def levene_from_counts(samples: Mapping[str, CountedLevel]) -> TestResult:
    r"""Levene's test centred on the medians (Brown & Forsythe 1974), from value counts.

    .. math::

        W = \frac{N - k}{k - 1}\,\frac{\sum_g n_g (\bar z_g - \bar z)^2}{\sum_g \sum_v c_{gv}(z_{gv} - \bar z_g)^2},
        \qquad z_{gv} = |v - \tilde x_g|

    p from the F distribution with k - 1 and N - k degrees of freedom (scipy's ``levene(center="median")``).
    """
    from scipy import stats

    deviations = [CountedLevel(values=np.abs(x.values - float(x.quantiles(0.5)[0])), counts=x.counts)
                  for x in samples.values()]
    sizes = np.array([z.n for z in deviations], dtype=np.float64)
    means = np.array([z.mean for z in deviations])
    n, k = float(sizes.sum()), len(deviations)
    grand = float(sizes @ means) / n
    within = sum(float(z.counts @ (z.values - m) ** 2) for z, m in zip(deviations, means, strict=True))
    with np.errstate(divide="ignore", invalid="ignore"):
        w = (n - k) / (k - 1) * float(sizes @ (means - grand) ** 2) / within
    return TestResult(name="Levene (median-centred)", statistic=float(w), pvalue=float(stats.f.sf(w, k - 1, n - k)),
                      df=float(k - 1), df2=float(n - k))


def _hedges(x: CountedLevel, y: CountedLevel) -> float:
    """Hedges' g of x against y: Cohen's d on the pooled SD, times 1 - 3 / (4 (n_x + n_y) - 9) (Hedges, 1981)."""
    dof = x.n + y.n - 2
    d = (x.mean - y.mean) / math.sqrt(((x.n - 1) * x.var + (y.n - 1) * y.var) / dof)
    return d * (1 - 3 / (4 * (x.n + y.n) - 9))


def hedges_interval(g: float, nx: int, ny: int, confidence_level: float) -> tuple[float, float]:
    r"""Normal-theory interval of Hedges' g (Hedges & Olkin, 1985, p. 86), as pingouin's ``compute_esci``.

    .. math::

        g \pm t_{1 - \alpha/2,\, n_x + n_y - 2}\,\sqrt{\frac{n_x + n_y}{n_x n_y} + \frac{g^2}{2 (n_x + n_y)}}

    References
    ----------
    .. [1] Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press.
    """
    from scipy import stats

    se = math.sqrt((nx + ny) / (nx * ny) + g**2 / (2 * (nx + ny)))
    crit = abs(float(stats.t.ppf((1 - confidence_level) / 2, nx + ny - 2)))
    return g - crit * se, g + crit * se


def _two_groups(samples: Mapping[str, CountedLevel], *, student: bool, confidence_level: float) -> dict[str, Any]:
    from scipy import stats

    (name_a, x), (name_b, y) = samples.items()
    if student:
        dof: float = x.n + y.n - 2
        se = math.sqrt(((x.n - 1) * x.var + (y.n - 1) * y.var) / dof * (1 / x.n + 1 / y.n))
    else:
        vx, vy = x.var / x.n, y.var / y.n
        se = math.sqrt(vx + vy)
        dof = (vx + vy) ** 2 / (vx**2 / (x.n - 1) + vy**2 / (y.n - 1))
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (x.mean - y.mean) / np.float64(se)
    u = mann_whitney_from_counts(x.values, x.counts, y.values, y.counts)
    pvalue_u = u.pvalue
    if (x.n <= 8 or y.n <= 8) and not np.any(np.concatenate([x.counts, y.counts]) > 1) \
            and np.intersect1d(x.values, y.values).size == 0:
        # scipy's automatic choice: the exact distribution for a small sample without ties (the rows are
        # then as many as the distinct scores, so expanding them costs nothing)
        pvalue_u = float(stats.mannwhitneyu(x.expand(), y.expand(), alternative="two-sided").pvalue)
    g = _hedges(x, y)
    ci = hedges_interval(g, x.n, y.n, confidence_level)
    return {
        "test": TestResult(name="Student's t" if student else "Welch's t", statistic=float(t), df=float(dof),
                           pvalue=float(2 * stats.t.sf(abs(t), dof))),
        "nonparametric": TestResult(name="Mann-Whitney U", statistic=float(u.statistic), pvalue=pvalue_u),
        "effect_size": EffectSize(name="Hedges' g", value=g, ci=(float(ci[0]), float(ci[1]))),
        "nonparametric_effect_size": EffectSize(name="rank-biserial r",
                                                value=1 - 2 * (x.n * y.n - float(u.statistic)) / (x.n * y.n)),
        "levene": levene_from_counts(samples),
        "extra_notes": [note("effect-direction", first=str(name_a), second=str(name_b))],
    }


def _welch_anova(sizes: np.ndarray, means: np.ndarray, variances: np.ndarray) -> tuple[float, float, float]:
    """Welch's (1951) F, its denominator df and p, as pingouin's ``welch_anova`` computes them."""
    from scipy import stats

    r = sizes.size
    with np.errstate(divide="ignore", invalid="ignore"):
        weights = sizes / variances
        adjusted = float(weights @ means) / float(weights.sum())
        between = float(weights @ (means - adjusted) ** 2) / (r - 1)
        lamb = 3 * float(np.sum((1 / (sizes - 1)) * (1 - weights / weights.sum()) ** 2)) / (r**2 - 1)
        f = between / (1 + 2 * lamb * (r - 2) / 3)
        return f, 1 / lamb, float(stats.f.sf(f, r - 1, 1 / lamb))


def _many_groups(samples: Mapping[str, CountedLevel], *, student: bool) -> dict[str, Any]:
    from scipy import stats

    order = list(samples)
    levels = list(samples.values())
    sizes = np.array([x.n for x in levels], dtype=np.float64)
    means = np.array([x.mean for x in levels])
    variances = np.array([x.var for x in levels])
    n, k = int(sizes.sum()), len(levels)
    grand = float(sizes @ means) / n
    ss_between = float(sizes @ (means - grand) ** 2)
    ss_within = float((sizes - 1) @ variances)
    ms_within = ss_within / (n - k)
    omega_sq = (ss_between - (k - 1) * ms_within) / (ss_between + ss_within + ms_within)
    h = kruskal_wallis_from_counts([x.values for x in levels], [x.counts for x in levels])
    if student:
        f = (ss_between / (k - 1)) / ms_within
        test = TestResult(name="one-way ANOVA F", statistic=f, df=float(k - 1), df2=float(n - k),
                          pvalue=float(stats.f.sf(f, k - 1, n - k)))
        method = "Tukey HSD"
    else:
        f, df2, p = _welch_anova(sizes, means, variances)
        test = TestResult(name="Welch's F", statistic=f, df=float(k - 1), df2=df2, pvalue=p)
        method = "Games-Howell"
    # Tukey (1949): the pooled within-level variance, n - k degrees of freedom; Games & Howell (1976): each
    # level's own variance, Welch-Satterthwaite df; p from the studentized range of k means for all pairs at once
    pair_stats = (tukey_from_moments if student else games_howell_from_moments)(sizes, means, variances)
    pairs = [PairResult(a=order[i], b=order[j], difference=float(d), se=float(se), statistic=float(t), df=float(df),
                        pvalue=float(p), hedges_g=float(g))
             for i, j, d, se, t, df, p, g in zip(pair_stats.first, pair_stats.second, pair_stats.difference,
                                                 pair_stats.se, pair_stats.statistic, pair_stats.df,
                                                 pair_stats.pvalue, pair_stats.hedges_g, strict=True)]
    extra = []
    if any(not np.isfinite(p.pvalue) for p in pairs):
        extra.append("some pairs have no spread in either level: no pair test for them")
    return {
        "test": test,
        "nonparametric": TestResult(name="Kruskal-Wallis H", statistic=h.statistic,
                                    df=math.nan if h.df is None else float(h.df),
                                    pvalue=h.pvalue),
        "effect_size": EffectSize(name="omega-squared", value=omega_sq),
        "nonparametric_effect_size": EffectSize(name="epsilon-squared", value=h.statistic * (n + 1) / (n * n - 1)),
        "pairs": tuple(pairs),
        "pairs_method": method,
        "levene": levene_from_counts(samples),
        "extra_notes": [note("omega-squared-negative")] if omega_sq < 0 else [],
    }


__all__ = ["CountedLevel", "compare_from_counts", "counted_level", "counted_scores", "group_tests", "hedges_interval",
           "levene_from_counts"]
