"""Comparing a score across the levels of one grouping column: summaries, tests, effect sizes, pairs.

The summaries come from the scores; the tests, effect sizes and pairs from each level's score value counts
(:mod:`.groups_from_counts`, the one implementation for the whole file and for a file read in blocks; checked
live against pingouin and scipy in the tests).
Levels with fewer than ``min_cell`` scores are suppressed: their size and statistics never enter the result.
"""
from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..errors import UsageError
from ..notes import Note, note, notes_to_json
from ..results import ResultMixin, to_jsonable
from .subgroups import split_by

#: what a suppressed count is shown as, in every rendering
SUPPRESSED = "< {min_cell}"


def suppressed_text(min_cell: int) -> str:
    return SUPPRESSED.format(min_cell=min_cell)


@dataclass(frozen=True)
class GroupSummary(ResultMixin):
    """Size and location of the scores in one level (sd with n - 1; quartiles by numpy's default, type 7)."""

    level: str
    n: int
    mean: float
    sd: float
    median: float
    q1: float
    q3: float

    @property
    def iqr(self) -> float:
        return self.q3 - self.q1

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"n": self.n, "mean": self.mean, "sd": self.sd, "median": self.median,
                            "q1": self.q1, "q3": self.q3, "iqr": self.iqr})


@dataclass(frozen=True)
class TestResult(ResultMixin):
    """One significance test. ``df2`` is the denominator df of an F test (else None).

    ``pvalue_holm`` is filled by :func:`pvalue_holm` when several scales are compared in one run.
    """

    name: str
    statistic: float
    pvalue: float
    df: float | None = None
    df2: float | None = None
    pvalue_holm: float | None = None


@dataclass(frozen=True)
class EffectSize(ResultMixin):
    name: str
    value: float
    ci: tuple[float, float] | None = None


@dataclass(frozen=True)
class PairResult(ResultMixin):
    """One post-hoc pair: ``difference`` is mean(a) - mean(b); ``pvalue`` is already adjusted for the family."""

    a: str
    b: str
    difference: float
    se: float
    statistic: float
    df: float
    pvalue: float
    hedges_g: float


@dataclass(frozen=True)
class Comparison(ResultMixin):
    """A score compared across the levels of one column. See :func:`compare_groups`."""

    column: str
    groups: tuple[GroupSummary, ...]
    suppressed: tuple[str, ...]
    min_cell: int
    confidence_level: float
    n_no_score: int
    n_no_group: int
    test: TestResult | None = None
    nonparametric: TestResult | None = None
    effect_size: EffectSize | None = None
    nonparametric_effect_size: EffectSize | None = None
    pairs: tuple[PairResult, ...] = ()
    pairs_method: str | None = None
    levene: TestResult | None = None
    notes: tuple[Note, ...] = ()
    scale: str | None = None

    @property
    def n_used(self) -> int:
        return sum(g.n for g in self.groups)

    @property
    def significance_level(self) -> float:
        """The tests' level, the complement of the intervals' confidence level (0.05 beside 95% intervals)."""
        return round(1.0 - self.confidence_level, 10)

    @property
    def differs(self) -> bool:
        """The main test rejects equal means at :attr:`significance_level` (Holm-adjusted p when it is set)."""
        if self.test is None:
            return False
        p = self.test.pvalue if self.test.pvalue_holm is None else self.test.pvalue_holm
        return bool(p < self.significance_level)

    @property
    def differing_pairs(self) -> tuple[PairResult, ...]:
        """The follow-up pairs whose p falls below :attr:`significance_level` (an undefined p never does)."""
        return tuple(p for p in self.pairs if p.pvalue < self.significance_level)

    @property
    def spread_differs(self) -> bool:
        """Levene's test rejects equal spreads at :attr:`significance_level`."""
        return self.levene is not None and bool(self.levene.pvalue < self.significance_level)

    def group(self, level: str) -> GroupSummary:
        for summary in self.groups:
            if summary.level == level:
                return summary
        raise KeyError(level)

    def to_dict(self) -> dict[str, Any]:
        def optional(value: Any) -> Any:
            return None if value is None else value.to_dict()

        return to_jsonable({
            "scale": self.scale,
            "column": self.column,
            "n_used": self.n_used,
            "min_cell": self.min_cell,
            "confidence_level": self.confidence_level,
            "groups": {g.level: g.to_dict() for g in self.groups},
            # suppressed levels are named only; their size is shown as "< min_cell" and nothing else
            "suppressed": {level: suppressed_text(self.min_cell) for level in self.suppressed},
            "n_no_score": self.n_no_score,
            "n_no_group": self.n_no_group,
            "test": optional(self.test),
            "nonparametric": optional(self.nonparametric),
            "effect_size": optional(self.effect_size),
            "nonparametric_effect_size": optional(self.nonparametric_effect_size),
            "pairs_method": self.pairs_method,
            "pairs": [p.to_dict() for p in self.pairs],
            "levene": optional(self.levene),
            "notes": notes_to_json(self.notes),
        })


def _summary(level: str, x: np.ndarray) -> GroupSummary:
    q1, median, q3 = np.quantile(x, [0.25, 0.5, 0.75])
    sd = float(np.std(x, ddof=1)) if len(x) > 1 else float("nan")
    return GroupSummary(level=level, n=int(len(x)), mean=float(np.mean(x)), sd=sd,
                        median=float(median), q1=float(q1), q3=float(q3))


def _check_options(min_cell: int, confidence_level: float) -> None:
    if isinstance(min_cell, bool) or not isinstance(min_cell, (int, np.integer)) or min_cell < 1:
        raise UsageError(f"min_cell must be a whole number of at least 1, got {min_cell!r}")
    if not 0 < confidence_level < 1:
        raise UsageError(f"confidence_level must lie between 0 and 1, got {confidence_level!r}")


def _left_out_notes(column: str | None, suppressed: list[str], min_cell: int, n_no_score: int,
                    n_no_group: int) -> list[Note]:
    """Notes naming what a comparison left out: levels below ``min_cell``, rows without a score or a level."""
    notes: list[Note] = []
    if suppressed:
        notes.append(note("levels-too-small", column=column, levels=tuple(str(s) for s in suppressed),
                          min_cell=int(min_cell)))
    if n_no_score:
        notes.append(note("unscored-left-out", n=n_no_score))
    if n_no_group:
        notes.append(note("no-group-value-left-out", n=n_no_group, column=column))
    return notes


def compare_groups(scores: np.ndarray, groups: pd.Series, *, min_cell: int = 5, student: bool = False,
                   confidence_level: float = 0.95, column: str | None = None,
                   scale: str | None = None) -> Comparison:
    r"""Compare scores across the levels of a grouping column.

    Two levels: Welch's t test (Student's with ``student=True``), the Mann-Whitney U test, Hedges' g with
    a confidence interval and the rank-biserial correlation. Three or more levels: Welch's ANOVA (the
    classic F with ``student=True``), the Kruskal-Wallis H test, omega-squared and epsilon-squared, and
    Games-Howell pairs (Tukey HSD pairs with ``student=True``). Levene's test (median-centred) is given
    as a note on the equal-variance assumption in either case.

    .. math::

        g = d\left(1 - \frac{3}{4(n_1 + n_2) - 9}\right), \qquad
        r_{rb} = \frac{2U_1}{n_1 n_2} - 1, \qquad
        \omega^2 = \frac{SS_b - df_b\,MS_w}{SS_t + MS_w}, \qquad
        \varepsilon^2_R = \frac{H}{(n^2 - 1)/(n + 1)}

    Parameters
    ----------
    scores : array of float, shape (n,)
        One score per respondent; NaN means no score (counted, left out).
    groups : pandas.Series, length n
        The grouping column; missing or blank values are counted and left out.
    min_cell : int, keyword-only
        Levels with fewer scores are suppressed: named, shown as "< min_cell", kept out of every test.
    student : bool, keyword-only
        Assume equal variances (Student's t, classic F, Tukey pairs) instead of Welch's versions.
    confidence_level : float, keyword-only
        Of the confidence interval for Hedges' g.
    column, scale : str, keyword-only
        Names carried into the result.

    Returns
    -------
    Comparison
        Frozen result; statistics that cannot be computed are None/NaN with the reason in ``notes``.

    Notes
    -----
    Hedges' g uses the pooled sd and the small-sample correction of Hedges (1981); its interval is
    pingouin's normal-theory one, :math:`g \pm t_{n_1+n_2-2}\,\sqrt{(n_1+n_2)/(n_1 n_2) + g^2/(2(n_1+n_2))}`.
    The rank-biserial correlation is positive when the first level tends to score higher (Kerby 2014).
    Omega-squared comes from the classic one-way ANOVA table (Olejnik & Algina 2003); epsilon-squared
    from H (Tomczak & Tomczak 2014).

    References
    ----------
    .. [1] Welch, B. L. (1951). On the comparison of several mean values. Biometrika, 38, 330-336.
    .. [2] Hedges, L. V. (1981). Distribution theory for Glass's estimator of effect size. Journal of
           Educational Statistics, 6, 107-128.
    .. [3] Kerby, D. S. (2014). The simple difference formula. Comprehensive Psychology, 3, 11.IT.3.1.
    .. [4] Olejnik, S. & Algina, J. (2003). Generalized eta and omega squared statistics. Psychological
           Methods, 8, 434-447.
    .. [5] Tomczak, M. & Tomczak, E. (2014). The need to report effect size estimates revisited.
           Trends in Sport Sciences, 21, 19-25.
    .. [6] Games, P. A. & Howell, J. F. (1976). Pairwise multiple comparison procedures with unequal n's
           and/or variances. Journal of Educational Statistics, 1, 113-125.
    """
    _check_options(min_cell, confidence_level)
    scores = np.asarray(scores, dtype=float)
    groups = pd.Series(groups).reset_index(drop=True)
    if scores.ndim != 1 or len(scores) != len(groups):
        raise UsageError(f"scores ({scores.shape}) and the grouping column ({len(groups)} rows) differ in length")
    column = column or (str(groups.name) if groups.name is not None else "group")
    has_score = np.isfinite(scores)
    split = split_by(groups, min_size=0, column=column)
    notes: list[Note] = []
    summaries: list[GroupSummary] = []
    samples: dict[str, np.ndarray] = {}
    suppressed: list[str] = []
    n_no_group = int(has_score.sum()) - sum(int(has_score[p].sum()) for p in split.levels.values())
    for level, positions in split.levels.items():
        x = scores[positions][has_score[positions]]
        if len(x) == 0:
            continue
        if len(x) < min_cell:
            suppressed.append(level)
            continue
        summaries.append(_summary(level, x))
        samples[level] = x
    n_no_score = int((~has_score).sum())
    notes.extend(_left_out_notes(column, suppressed, min_cell, n_no_score, n_no_group))

    def comparison(**tests: Any) -> Comparison:
        return Comparison(column=column, groups=tuple(summaries), suppressed=tuple(suppressed), min_cell=min_cell,
                          confidence_level=confidence_level, n_no_score=n_no_score, n_no_group=n_no_group,
                          scale=scale, notes=tuple(notes), **tests)

    testable = {level: x for level, x in samples.items() if len(x) >= 2}
    if len(testable) < len(samples):
        notes.append(note("single-score-levels-untested"))
    if len(testable) < 2:
        notes.append(note("compare-too-few-levels", column=column, min_size=max(int(min_cell), 2)))
        return comparison()
    if all(np.ptp(x) == 0 for x in testable.values()):
        notes.append(note("zero-variance-no-test"))
        return comparison()
    if any(np.ptp(x) == 0 for x in testable.values()):
        notes.append(note("level-without-spread"))
    from .groups_from_counts import counted_scores, group_tests

    result = group_tests({level: counted_scores(x) for level, x in testable.items()}, student=student,
                         confidence_level=confidence_level)
    notes.extend(result.pop("extra_notes"))
    return comparison(**result)


def holm(pvalues: Sequence[float | None]) -> list[float | None]:
    """Holm (1979) step-down adjusted p-values; None/NaN entries stay None and do not count in the family.

    Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scand. J. Statist., 6, 65-70.
    """
    from .multiplicity import holm_adjusted

    adjusted = holm_adjusted([np.nan if p is None else p for p in pvalues])
    return [None if not np.isfinite(p) else float(p) for p in adjusted]


def pvalue_holm(comparisons: Sequence[Comparison]) -> tuple[Comparison, ...]:
    """Fill ``pvalue_holm`` of the main and the rank-based test, each a family across ``comparisons``.

    Pass the comparisons of one run for one grouping column (one per scale).
    """
    comparisons = tuple(comparisons)

    def adjusted(attribute: str) -> list[float | None]:
        return holm([getattr(c, attribute).pvalue if getattr(c, attribute) is not None else None
                     for c in comparisons])

    main, rank = adjusted("test"), adjusted("nonparametric")
    out = []
    for c, p_main, p_rank in zip(comparisons, main, rank, strict=True):
        changes: dict[str, Any] = {}
        if c.test is not None:
            changes["test"] = dataclasses.replace(c.test, pvalue_holm=p_main)
        if c.nonparametric is not None:
            changes["nonparametric"] = dataclasses.replace(c.nonparametric, pvalue_holm=p_rank)
        out.append(dataclasses.replace(c, **changes))
    return tuple(out)


__all__ = ["Comparison", "EffectSize", "GroupSummary", "PairResult", "TestResult", "compare_groups", "holm",
           "pvalue_holm", "suppressed_text"]
