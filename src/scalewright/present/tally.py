"""Tables and plain-language sentences for frequency tables and their fit to reference proportions."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..stats.groups import suppressed_text
from ..stats.tally import Tally
from ..stats.tally_fit import FitResult
from .messages import describe, untested_reason
from .numbers import format_value
from .table import Table

_VERDICT_WORDS = {
    "resembles": "resembles the reference proportions: there is no evidence of a difference",
    "differs-slightly": "differs from the reference proportions, but only slightly",
    "differs-moderately": "differs moderately from the reference proportions",
    "differs-strongly": "differs strongly from the reference proportions",
}


def _p(value: float | None) -> str:
    text = format_value(value, "p")
    return f"p {text}" if text.startswith("<") else f"p = {text}"


def tally_sentence(t: Tally) -> str:
    """Where most answers fell, in plain words; never names a suppressed count."""
    shown = [c for c in t.categories if c.count is not None and c.count > 0]
    if t.n_valid == 0 or not shown:
        return f"{t.column}: no answers to describe ({t.n_missing} of {t.n_total} missing)."
    top = max(shown, key=lambda c: c.count or 0)  # every shown count is a number above 0
    text = (f"{t.column}: {t.n_valid} of {t.n_total} respondents answered; the most frequent answer was "
            f"{top.label} ({format_value(top.valid_percent, 'pct')}% of those who answered).")
    if t.suppressed:
        text += (f" {len(t.suppressed)} categor{'y is' if len(t.suppressed) == 1 else 'ies are'} shown as "
                 f"{suppressed_text(t.min_cell)} to protect small groups.")
    return text


def unanswered_sentence(t: Tally) -> str:
    """The respondents without an answer, in words under the table: ``12 of 390 gave no answer``."""
    if t.n_missing == 0:
        return f"All {t.n_total} respondents answered."
    return f"{t.n_missing} of {t.n_total} gave no answer."


def fit_sentence(fit: FitResult, *, decimals: int = 2) -> str:
    """The verdict on representativeness, with the chi-square test in APA style."""
    if fit.verdict is None:
        reason, _ = untested_reason(fit.notes, tested=False)
        return f"{fit.column}: not compared with the reference proportions ({reason or 'no test was possible'})."
    stats = (f"χ²({fit.df}, N = {fit.n}) = {format_value(fit.chi2, 'num', decimals)}, {_p(fit.pvalue)}, "
             f"w = {format_value(fit.w, 'bounded', decimals)}")
    text = f"The sample's {fit.column} mix {_VERDICT_WORDS[fit.verdict]} ({stats})."
    if fit.verdict != "resembles":
        if fit.over_represented:
            text += f" More respondents than expected: {', '.join(fit.over_represented)}."
        if fit.under_represented:
            text += f" Fewer than expected: {', '.join(fit.under_represented)}."
    if fit.excluded:
        text += f" Categories shown as small ({', '.join(fit.excluded)}) were left out of the test."
    return text


def tally_record(t: Tally, fit: FitResult | None = None, *, decimals: int = 2) -> dict[str, Any]:
    """JSON record of one column: the tally, its sentence, and the fit (with its sentence) if given."""
    record = t.to_dict()
    record["sentence"] = tally_sentence(t)
    if fit is not None:
        record["fit"] = fit.to_dict()
        record["fit"]["sentence"] = fit_sentence(fit, decimals=decimals)
    return record


def tally_tables(tallies: Sequence[Tally], fits: Sequence[FitResult | None] = (), *,
                 decimals: int = 2) -> list[Table]:
    """One frequency table per column (suppressed cells as "< min_cell"), and a fit table where given."""
    fits = list(fits) + [None] * (len(tallies) - len(fits))
    tables: list[Table] = []
    for t, fit in zip(tallies, fits, strict=True):
        # one row per category: its count and its share of those who answered (a number and a bar); the
        # running share only where the categories have an order; the unanswered in a sentence below
        with_labels = any(c.label != c.category for c in t.categories)
        share = "share of answered %"
        running = "running share %"
        columns = ["category", *(["label"] if with_labels else []), "count", share]
        if t.ordered:
            columns.append(running)
        hidden = suppressed_text(t.min_cell)
        rows = []
        for c in t.categories:
            row: list[Any] = [c.category, *([c.label] if with_labels else []),
                              hidden if c.suppressed else c.count, c.valid_percent]
            if t.ordered:
                row.append(c.cumulative_percent)
            rows.append(tuple(row))
        kinds = {"category": "text", "label": "text", "count": "int", share: "bar", running: "pct"}
        tables.append(Table(title=f"Answers: {t.column}", key=f"tally.{t.column}", columns=tuple(columns),
                            rows=tuple(rows), kinds=kinds,
                            notes=(unanswered_sentence(t), tally_sentence(t), *(describe(n) for n in t.notes))))
        if fit is not None:
            tables.append(Table(
                title=f"Against the reference proportions: {t.column}", key=f"fit.{t.column}",
                columns=("category", "observed", "reference proportion", "expected", "standardized residual"),
                rows=tuple((c.category, c.observed, c.expected_proportion, c.expected, c.standardized_residual)
                           for c in fit.categories),
                kinds={"category": "text", "observed": "int", "reference proportion": "bounded"},
                notes=(fit_sentence(fit, decimals=decimals),
                       *untested_reason(fit.notes, tested=fit.verdict is not None)[1],
                       "standardized residuals beyond ±1.96 mark categories with more (+) or fewer (-) "
                       "respondents than the reference implies")))
    return tables


__all__ = ["fit_sentence", "tally_record", "tally_sentence", "tally_tables", "unanswered_sentence"]
