"""How far a tally's shares lie from reference proportions: the chi-square goodness-of-fit test, standardized
residuals and the effect size w. Suppressed categories (see :mod:`.tally`) are left out of the test.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import DataError, Problem
from ..notes import Note, note, notes_to_json
from ..results import ResultMixin, to_jsonable
from .subgroups import level_name
from .tally import Tally


@dataclass(frozen=True)
class CategoryFit(ResultMixin):
    category: str
    observed: int
    expected_proportion: float
    expected: float
    pearson_residual: float
    standardized_residual: float


@dataclass(frozen=True)
class FitResult(ResultMixin):
    """Chi-square goodness of fit of a tally to reference proportions. See :func:`goodness_of_fit`.

    ``verdict``: ``resembles`` (no evidence of a difference), ``differs-slightly`` (w < .3),
    ``differs-moderately`` (.3 <= w < .5), ``differs-strongly`` (w >= .5); None when no test was possible.
    """

    column: str
    chi2: float | None
    df: int | None
    pvalue: float | None
    w: float | None
    n: int
    categories: tuple[CategoryFit, ...]
    excluded: tuple[str, ...]
    verdict: str | None
    alpha: float
    notes: tuple[Note, ...] = ()

    @property
    def over_represented(self) -> tuple[str, ...]:
        return tuple(c.category for c in self.categories if c.standardized_residual > 1.96)

    @property
    def under_represented(self) -> tuple[str, ...]:
        return tuple(c.category for c in self.categories if c.standardized_residual < -1.96)

    def to_dict(self) -> dict[str, Any]:
        return to_jsonable({"column": self.column, "chi2": self.chi2, "df": self.df, "pvalue": self.pvalue,
                            "w": self.w, "n": self.n, "verdict": self.verdict, "alpha": self.alpha,
                            # the reference share in percent, as every share of the JSON (CHANGES.md)
                            "categories": {c.category: {("expected_pct" if k == "expected_proportion" else k):
                                                        (100 * v if k == "expected_proportion" else v)
                                                        for k, v in c.to_dict().items() if k != "category"}
                                           for c in self.categories},
                            "over_represented": list(self.over_represented),
                            "under_represented": list(self.under_represented),
                            "excluded": list(self.excluded), "notes": notes_to_json(self.notes)})


#: how far the proportions may sum away from 1 (rounded census figures) before they are refused
PROPORTION_TOLERANCE = 0.01


def check_expected(tally_result: Tally, expected: Mapping[str, float], *, source: str = "expected proportions",
                   rows: Mapping[str, int] | None = None) -> dict[str, float]:
    """Validated reference proportions keyed by the tally's category names; ``DataError`` names source and row."""
    rows = rows or {}

    def problem(raw: Any, message: str) -> DataError:
        return DataError(Problem(file=source, line=rows.get(raw), message=message))

    known = [c.category for c in tally_result.categories]
    proportions: dict[str, float] = {}
    for raw, value in expected.items():
        category = level_name(raw)
        if category not in known:
            raise problem(raw, f"category {category!r} does not occur in {tally_result.column} "
                               f"(categories: {', '.join(known)})")
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise problem(raw, f"proportion {value!r} for {category!r} is not a number") from None
        proportions[category] = number
    total = sum(proportions.values())
    if abs(total - 100) < 1 and all(0 <= v <= 100 for v in proportions.values()):
        raise DataError(Problem(file=source, message=f"proportions sum to {total:g}, not 1 (they look like "
                                                     "percentages: give proportions between 0 and 1)"))
    for raw, value in expected.items():
        number = proportions[level_name(raw)]
        if not np.isfinite(number) or number < 0 or number > 1:
            raise problem(raw, f"proportion {value!r} for {level_name(raw)!r} must lie between 0 and 1")
    absent = [c for c in known if c not in proportions]
    if absent:
        raise DataError(Problem(file=source, message=f"no proportion given for {', '.join(map(repr, absent))} "
                                                     f"of {tally_result.column}"))
    if abs(total - 1) > PROPORTION_TOLERANCE:
        raise DataError(Problem(file=source, message=f"proportions sum to {total:g}, not 1"))
    return proportions


def goodness_of_fit(tally_result: Tally, expected: Mapping[str, float], *, alpha: float = 0.05,
                    source: str = "expected proportions", rows: Mapping[str, int] | None = None) -> FitResult:
    r"""Pearson's chi-square test of the tally against reference proportions, with residuals and w.

    .. math::

        \chi^2 = \sum_j \frac{(O_j - E_j)^2}{E_j}, \quad E_j = n p_j, \quad
        r_j = \frac{O_j - E_j}{\sqrt{E_j (1 - p_j)}}, \quad w = \sqrt{\chi^2 / n}

    Parameters
    ----------
    tally_result : Tally
    expected : mapping category -> proportion
        Must name every category of the tally and no other; proportions sum to 1 within
        ``PROPORTION_TOLERANCE`` (then rescaled to sum exactly to 1).
    alpha : float, keyword-only
        Level at which "no evidence of a difference" turns into a difference.
    source, rows : keyword-only
        Where the proportions came from (file name, and category -> row number), for error messages.

    Returns
    -------
    FitResult

    Notes
    -----
    Suppressed categories are left out of the test and the remaining proportions rescaled to sum to 1,
    so the test compares the shape of the shown categories only. The statistic and p-value are
    scipy's ``chisquare``; the standardized residuals (:math:`r_j`, approximately standard normal under the
    null) are those of Agresti (2013), hand-written because scipy does not return them. The verdict uses
    Cohen's (1988) benchmarks for w: .1 small, .3 medium, .5 large.

    References
    ----------
    .. [1] Pearson, K. (1900). On the criterion that a given system of deviations ... Philosophical
           Magazine, 50, 157-175.
    .. [2] Agresti, A. (2013). Categorical Data Analysis (3rd ed.). Wiley.
    .. [3] Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences (2nd ed.). Erlbaum.
    """
    from scipy import stats

    proportions = check_expected(tally_result, expected, source=source, rows=rows)
    notes: list[Note] = []
    shown = [c for c in tally_result.categories if not c.suppressed]
    excluded = tuple(c.category for c in tally_result.categories if c.suppressed)
    if excluded:
        notes.append(note("fit-suppressed-left-out", categories=excluded))
    kept = [c for c in shown if proportions[c.category] > 0]
    impossible = [c.category for c in shown if proportions[c.category] == 0 and c.count]
    if impossible:
        notes.append(note("fit-reference-zero-observed", categories=tuple(impossible)))
    zero_reference = [c.category for c in shown if proportions[c.category] == 0 and not c.count]
    if zero_reference:
        notes.append(note("fit-reference-zero-empty", categories=tuple(zero_reference)))
    observed = np.array([c.count for c in kept], dtype=float)
    n = int(observed.sum())
    mass = sum(proportions[c.category] for c in kept)
    empty = FitResult(column=tally_result.column, chi2=None, df=None, pvalue=None, w=None, n=n, categories=(),
                      excluded=excluded, verdict=None, alpha=alpha)
    if len(kept) < 2 or n == 0 or mass == 0 or impossible:
        if len(kept) < 2 and not impossible:
            notes.append(note("fit-too-few-categories"))
        if n == 0 and not impossible:
            notes.append(note("fit-no-answers"))
        return FitResult(**{**empty.__dict__, "notes": tuple(notes)})
    p = np.array([proportions[c.category] for c in kept]) / mass
    expected_counts = n * p
    result = stats.chisquare(observed, expected_counts)
    chi2, pvalue = float(result.statistic), float(result.pvalue)
    if (expected_counts < 5).any():
        notes.append(note("fit-small-expected"))
    rows_out = tuple(CategoryFit(category=c.category, observed=int(o), expected_proportion=float(pj),
                                 expected=float(e), pearson_residual=float((o - e) / np.sqrt(e)),
                                 standardized_residual=float((o - e) / np.sqrt(e * (1 - pj))) if pj < 1 else float("nan"))
                     for c, o, pj, e in zip(kept, observed, p, expected_counts, strict=True))
    w = float(np.sqrt(chi2 / n))
    if pvalue >= alpha:
        verdict = "resembles"
    elif w < 0.3:
        verdict = "differs-slightly"
    elif w < 0.5:
        verdict = "differs-moderately"
    else:
        verdict = "differs-strongly"
    return FitResult(column=tally_result.column, chi2=chi2, df=len(kept) - 1, pvalue=pvalue, w=w, n=n,
                     categories=rows_out, excluded=excluded, verdict=verdict, alpha=alpha, notes=tuple(notes))


__all__ = ["CategoryFit", "FitResult", "PROPORTION_TOLERANCE", "check_expected", "goodness_of_fit"]
