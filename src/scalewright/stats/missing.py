"""How missing answers were handled, for every analysis that rests on the item covariance matrix.

One result block, :class:`MissingHandling`, shared by reliability, structure and the report: the method
(listwise, pairwise or EM), who contributed, how many respondents miss 0, 1, 2 ... answers, and Little's
MCAR test, with notes as codes (worded in ``present/messages.py``).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import UsageError
from ..notes import Note, not_computable, note
from .em import EMEstimate, MCARTest, em_means_and_covariance, little_mcar_test
from .missing_patterns import PatternSummary

METHODS = ("listwise", "pairwise", "em")
#: conventional significance level of Little's test (common practice, no source)
MCAR_ALPHA = 0.05
#: common practice, no source: listwise deletion that sets aside more than 5% of respondents is worth a warning
LISTWISE_WARNING_PCT = 5.0


def check_method(method: str) -> str:
    if method not in METHODS:
        raise UsageError(f"the missing-data method is one of {', '.join(METHODS)}, not {method!r}")
    return method


@dataclass(frozen=True)
class MissingHandling:
    """What the missing answers did to one analysis.

    ``n_used`` is the number of respondents the estimates rest on: for EM those who gave at least one
    answer, for listwise those who answered every item, for pairwise the smallest pair count.
    ``patterns`` maps the number of missing answers to the number of respondents missing that many.
    """

    method: str
    n_rows: int
    n_used: int
    n_complete: int
    patterns: dict[int, int]
    mcar_test: MCARTest | None
    em_iterations: int | None
    notes: tuple[Note, ...]
    #: why ``mcar_test`` is None (a reason code of a not-computable note), None when it was computed
    mcar_unavailable: str | None = None

    def to_dict(self) -> dict[str, Any]:
        return {"missing_method": self.method,
                "missing_patterns": [{"n_missing": m, "respondents": c} for m, c in sorted(self.patterns.items())],
                "mcar_test": None if self.mcar_test is None else self.mcar_test.to_dict(),
                **({"em_iterations": self.em_iterations} if self.em_iterations is not None else {})}

    @property
    def note_dicts(self) -> list[dict[str, Any]]:
        """The notes in the JSON, with the not-computable note of a missing ``mcar_test`` (JSON only: a table
        says nothing of a test that does not apply)."""
        unavailable = [not_computable("mcar_test", self.mcar_unavailable)] if self.mcar_unavailable else []
        return [n.to_dict() for n in (*self.notes, *unavailable)]


def missing_handling(summary: PatternSummary, method: str, *, n_used: int | None = None,
                     estimate: EMEstimate | None = None, scope: str = "scale",
                     item_names: tuple[str, ...] = ()) -> MissingHandling:
    """The :class:`MissingHandling` block of one analysis.

    Little's test needs the EM estimates; they are computed here when not given (and something is
    missing), whatever the method, because the test is what tells whether listwise deletion is safe.

    Parameters
    ----------
    summary : PatternSummary
        The per-pattern statistics of the analysed items.
    method : {"listwise", "pairwise", "em"}
    n_used : int, optional
        Respondents the estimates rest on (default: by the method, from the summary).
    estimate : EMEstimate, optional
        The EM estimate, when the analysis already made it.
    scope : {"scale", "file"}
        Whether the items are one scale's or every item of the file (named in the notes).
    item_names : tuple of str
        Names of the items, to name an item the EM left out in the notes.
    """
    check_method(method)
    n_rows = summary.n_rows
    n_complete = summary.n_complete
    if n_used is None:
        n_used = summary.n_used if method == "em" else n_complete
    notes: list[Note] = []
    mcar = None
    if summary.anything_missing:
        if estimate is None:
            estimate = em_means_and_covariance(summary)
        mcar = little_mcar_test(summary, estimate)
        if mcar is not None:
            code = "mcar-test-rejects" if mcar.pvalue < MCAR_ALPHA else "mcar-test-consistent"
            notes.append(note(code, chi2=mcar.chi2, df=mcar.df, pvalue=mcar.pvalue, level=MCAR_ALPHA))

    set_aside = n_rows - n_complete
    if method == "listwise" and n_rows and 100.0 * set_aside / n_rows > LISTWISE_WARNING_PCT:
        notes.append(note("listwise-many-set-aside", set_aside=set_aside, n_rows=n_rows,
                          set_aside_pct=100.0 * set_aside / n_rows, threshold_pct=LISTWISE_WARNING_PCT))
    if method == "em":
        notes.append(note(f"em-basis-{scope}", n_used=summary.n_used, n_none=summary.n_none))
        if estimate is not None:
            for item_note in estimate.notes:
                values = dict(item_note.values)
                if "positions" in values:
                    values["items"] = tuple(item_names[j] if item_names else f"item {j + 1}"
                                            for j in values.pop("positions"))
                notes.append(Note(code=item_note.code, values=values))
    return MissingHandling(method=method, n_rows=n_rows, n_used=int(n_used), n_complete=n_complete,
                           patterns=summary.missing_counts(), mcar_test=mcar,
                           em_iterations=None if method != "em" or estimate is None else estimate.iterations,
                           notes=tuple(notes),
                           # EM did not converge, no item varies, or the patterns leave no degrees of freedom
                           mcar_unavailable=None if mcar is not None else
                           "mcar-test-not-computable" if summary.anything_missing else "nothing-missing")


def keyed_estimate(estimate: EMEstimate, *, lows: np.ndarray, highs: np.ndarray,
                   reversed_mask: np.ndarray, from_codes: bool) -> tuple[np.ndarray, np.ndarray]:
    """Means and covariance of the keyed items from the EM estimate of the answers as given
    (``from_codes``: of the one-byte codes; otherwise the answers were keyed already).

    EM is equivariant under affine changes of each item, so keying the estimate equals estimating the
    keyed items: a code c of an item answered from ``low`` to ``high`` is the answer ``low + c``, and
    reverse keying turns it into ``high - c``, flipping the signs of the item's covariances.
    """
    if not from_codes:  # answers already keyed
        return estimate.means, estimate.cov
    sign = np.where(reversed_mask, -1.0, 1.0)
    means = np.where(reversed_mask, highs - estimate.means, lows + estimate.means)
    return means, estimate.cov * np.outer(sign, sign)


def listwise_from_summary(summary: PatternSummary, *, low: int, high: int, reversed_mask: np.ndarray) -> Any:
    """The listwise :class:`~scalewright.stats.item_covariance.ItemCovariance` of the keyed items, from the
    complete pattern of a summary of one-byte codes: the same exact integer arithmetic as
    :func:`scalewright.stats.coded.listwise_covariance`, ``cov = (n C - s s') / (n (n - 1))``, so the
    numbers are identical and the codes are read once for both.
    """
    from .item_covariance import ItemCovariance

    k = summary.k
    complete = np.flatnonzero(summary.observed.all(axis=1)) if k else np.empty(0, dtype=np.int64)
    n = int(summary.counts[complete[0]]) if complete.size else 0
    n_rows = summary.n_rows
    counts = np.full((k, k), n, dtype=np.int64)
    if n == 0 or k == 0:
        return ItemCovariance(cov=np.full((k, k), np.nan), means=np.full(k, np.nan), n_used=n, n_rows=n_rows,
                              n_complete=n, pair_counts=counts, pairwise=False)
    sums = np.array([int(v) for v in summary.sums[complete[0]]], dtype=object)
    cross = np.array([[int(v) for v in row] for row in summary.cross_products(int(complete[0]))], dtype=object)
    means = np.array([float(v) / n for v in sums])
    cov = (((n * cross - np.outer(sums, sums)) / (n * (n - 1))).astype(np.float64) if n >= 2
           else np.full((k, k), np.nan))
    sign = np.where(reversed_mask, -1.0, 1.0)
    return ItemCovariance(cov=cov * np.outer(sign, sign), means=np.where(reversed_mask, high - means, low + means),
                          n_used=n, n_rows=n_rows, n_complete=n, pair_counts=counts, pairwise=False)


__all__ = ["LISTWISE_WARNING_PCT", "METHODS", "MissingHandling", "check_method", "keyed_estimate",
           "listwise_from_summary", "missing_handling"]
