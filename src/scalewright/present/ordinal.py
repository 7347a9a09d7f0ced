"""Words and tables for ordinal results: polychoric notes, ordinal reliability, the advice to use them."""
from __future__ import annotations

from collections.abc import Iterable
from typing import TYPE_CHECKING

from ..notes import Note, note
from .messages import describe
from .numbers import format_value
from .table import Table

if TYPE_CHECKING:
    from ..stats.ordinal_reliability import OrdinalReliability


def ordinal_sentence(item: Note) -> str:
    """The sentence of one ordinal or polychoric note, its numbers formatted for reading."""
    values = item.values
    formatted: dict[str, str] = {}
    if "floor" in values:
        formatted["floor"] = f"{values['floor']:g}"
    if "min_eigenvalue" in values:
        formatted["min_eigenvalue"] = f"{values['min_eigenvalue']:.4f}"
    if "max_change" in values:
        formatted["max_change"] = format_value(values["max_change"], "bounded", 3)
    if "skew_limit" in values:
        formatted["skew_limit"] = f"{values['skew_limit']:g}"
    return describe(item, formatted)


def ordinal_sentences(notes: Iterable[Note]) -> tuple[str, ...]:
    return tuple(ordinal_sentence(n) for n in notes)


def ordinal_reliability_table(name: str, title: str, result: OrdinalReliability) -> Table:
    """One scale's ordinal alpha, ordinal omega and sum-score reliability, with the note saying which to report."""
    columns = ("scale", "missing", "n used", "k", "ordinal alpha", "ordinal omega", "sum-score reliability")
    row = (name, result.missing_handling, result.n_used, result.k, result.alpha, result.omega,
           result.omega_sum_score)
    return Table(title=f"{title} ({name}): ordinal reliability (polychoric correlations)", columns=columns,
                 rows=(row,), kinds={"scale": "text", "missing": "text", "n used": "int", "k": "int",
                                     "ordinal alpha": "bounded", "ordinal omega": "bounded",
                                     "sum-score reliability": "bounded"},
                 notes=(describe(note("ordinal-sum-score")), *ordinal_sentences(result.notes)),
                 key="reliability_ordinal")
