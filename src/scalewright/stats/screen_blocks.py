"""The careless-responding screen of a file read in blocks: every row judged against the whole sample's
statistics, and the screen's summary from the merged counts of the blocks.

:func:`judge_rows` applies to one block of rows what :func:`~scalewright.stats.screening.screen_respondents`
applies to all of them, given a :class:`ScreenSample` (the Mahalanobis centre, the item totals of the
person-total correlation, whether each weak index may count, the median completion time and the rows with
an identical twin somewhere in the file): every index is a row's own once those are known, so the rows of
the blocks are the rows of the whole. :class:`ScreenSummary` is the screen's JSON document from the sums
of the blocks (flag counts and overlaps, the count of each index that could not be computed, the alphas
with and without the flagged), without the per-respondent arrays.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..notes import Note, not_computable
from ..results import JsonRows, to_jsonable
from .careless_indices import (
    EvenOddResult,
    even_odd_consistency,
    intra_individual_variability,
    longstring,
    missing_share,
    person_total_correlation,
    speeders,
)
from .mahalanobis import MahalanobisCentre, distances_from_centre
from .screen_rules import (
    FLAG_AGAINST_SAMPLE,
    FLAG_DUPLICATE_ANSWERS,
    FLAG_DUPLICATE_ID,
    FLAG_FAR_FROM_SAMPLE,
    FLAG_FAST,
    FLAG_LONG_RUN,
    FLAG_MANY_MISSING,
    FLAG_ORDER,
    FLAG_SOMEWHAT_FAR,
    FLAG_UNEVEN_HALVES,
    INFO_FLAGS,
    STRONG_FLAGS,
    WEAK_FLAGS,
    ScreenThresholds,
    WeakIndexUse,
)
from .screening import NOT_COMPUTABLE_REASONS, combined_flags, respondent_records


@dataclass(frozen=True)
class ScreenSample:
    """What each row is judged against, from the whole sample.

    ``centre``: the Mahalanobis centre of the final distances (None: no distance); ``totals`` and
    ``counts``: each keyed column's sum of answers and number of answers (person-total r);
    ``halves_use``/``total_use``: whether the weak indices count; ``median_duration``: NaN when no row
    has a usable time (``fast`` then fires for no one), None when no duration column was given.
    """

    centre: MahalanobisCentre | None
    totals: np.ndarray
    counts: np.ndarray
    halves_use: WeakIndexUse
    total_use: WeakIndexUse
    run_limit: int
    median_duration: float | None = None


@dataclass(frozen=True)
class JudgedRows:
    """One block's indices, the rows each flag fired for, who is flagged and their records."""

    fired: dict[str, np.ndarray]
    flagged: np.ndarray
    records: JsonRows
    indices: dict[str, np.ndarray]
    distance_notes: tuple[Note, ...]
    halves: EvenOddResult


def judge_rows(raw: np.ndarray, scales: Mapping[str, np.ndarray], *, ids: Sequence[str], sample: ScreenSample,
               thresholds: ScreenThresholds, durations: np.ndarray | None = None,
               in_row_group: np.ndarray | None = None) -> JudgedRows:
    """Every index and flag of these rows (answers in questionnaire order ``raw``, keyed ``scales``) against
    ``sample``; ``in_row_group`` marks the rows whose answers another row of the file repeats exactly.
    The rules are those of :func:`~scalewright.stats.screening.screen_respondents` (see its Notes)."""
    n, p = raw.shape
    keyed = np.hstack(list(scales.values())) if scales else np.empty((n, 0))
    runs = longstring(raw)
    long_run = runs >= sample.run_limit
    irv = intra_individual_variability(keyed)
    missing = missing_share(raw)
    many_missing = missing > thresholds.missing_share_max
    distance_notes: tuple[Note, ...] = ()
    if sample.centre is None:
        nan = np.full(n, np.nan)
        d2, pvalue, df = nan, nan.copy(), np.zeros(n, dtype=int)
    else:
        distance = distances_from_centre(keyed, sample.centre)
        d2, pvalue, df, distance_notes = distance.d2, distance.p, distance.df, distance.notes
    with np.errstate(invalid="ignore"):
        far = pvalue < thresholds.mahalanobis_p
        somewhat_far = pvalue < thresholds.mahalanobis_p_weak
    halves = even_odd_consistency(scales) if scales else EvenOddResult(np.full(n, np.nan), np.full(n, np.nan), 0)
    person_total = person_total_correlation(keyed, totals=sample.totals, counts=sample.counts)
    with np.errstate(invalid="ignore"):
        uneven = (halves.consistency < thresholds.even_odd_min) & sample.halves_use.used
        against = (person_total < thresholds.person_total_min) & sample.total_use.used
    fast = np.zeros(n, dtype=bool)
    duration = None
    if durations is not None:
        duration = np.asarray(durations, dtype=float).reshape(-1)
        timed = np.where(many_missing, np.nan, duration)
        fast, _ = speeders(timed, speed_share=thresholds.speed_share,
                           median=math.nan if sample.median_duration is None else sample.median_duration)
    answered_items = p - np.isnan(raw).sum(axis=1)
    in_group = np.zeros(n, dtype=bool) if in_row_group is None else np.asarray(in_row_group, dtype=bool)
    fired = {
        FLAG_LONG_RUN: long_run, FLAG_FAR_FROM_SAMPLE: far, FLAG_FAST: fast, FLAG_MANY_MISSING: many_missing,
        FLAG_DUPLICATE_ANSWERS: in_group & ~long_run & (answered_items >= thresholds.duplicate_min_items),
        FLAG_DUPLICATE_ID: np.zeros(n, dtype=bool),  # a file with a repeated id is read whole
        FLAG_SOMEWHAT_FAR: somewhat_far & ~far, FLAG_UNEVEN_HALVES: uneven, FLAG_AGAINST_SAMPLE: against,
    }
    flagged, flags = combined_flags(fired)
    records = respondent_records(ids, flagged, flags, runs, irv, d2, pvalue, df, halves.consistency, person_total,
                                 missing, duration)
    indices = {"irv": irv, "mahalanobis_d2": d2, "mahalanobis_pvalue": pvalue, "even_odd": halves.consistency,
               "person_total_r": person_total}
    if duration is not None:
        indices["duration"] = duration
    return JudgedRows(fired=fired, flagged=flagged, records=records, indices=indices,
                      distance_notes=distance_notes, halves=halves)


@dataclass(frozen=True)
class ScreenSummary:
    """A screen's JSON document from the sums of its blocks (see the module notes); what the report and
    the ``screen`` command read of a :class:`~scalewright.stats.screening.ScreenResult`.

    ``respondents`` holds the records kept in memory (the first flagged ones, at most as many as the
    caller chose); every record went to the caller's sink as it was judged.
    """

    n: int
    fired_counts: dict[str, int]
    together: np.ndarray              # (flags x flags) respondents carrying both, in FLAG_ORDER
    n_flagged: int
    alpha_change: dict[str, dict[str, Any]]
    n_items: int
    long_run_items: int
    median_duration: float | None
    duration_unit: str | None
    not_checked: tuple[str, ...]
    duplicate_rows: tuple[tuple[str, ...], ...]
    duplicate_status: tuple[str, ...]
    thresholds: ScreenThresholds
    weak_indices: tuple[WeakIndexUse, ...]
    notes: tuple[Note, ...]
    #: per index, the respondents without a value (the not-computable notes)
    missing_values: dict[str, int] = field(default_factory=dict)
    respondents: JsonRows = field(default_factory=JsonRows)
    #: where every respondent's record was written (a report's per-respondent table), or None
    records_file: str | None = None
    #: with survey weights: the weighted shares of the flagged (``summary.weighted``), or None
    weighted: dict[str, Any] | None = None

    def flag_counts(self) -> dict[str, int | None]:
        counts: dict[str, int | None] = {code: int(self.fired_counts.get(code, 0)) for code in FLAG_ORDER}
        for code in self.not_checked:
            counts[code] = None
        return counts

    def flag_overlap(self) -> dict[str, dict[str, int]]:
        present = [i for i, (_, k) in enumerate(self.flag_counts().items()) if k]
        return {FLAG_ORDER[i]: {FLAG_ORDER[j]: int(self.together[i, j]) for j in present} for i in present}

    def summary(self) -> dict[str, Any]:
        return {
            "n": self.n, "n_flagged": self.n_flagged,
            "flagged_pct": 100 * self.n_flagged / self.n if self.n else None,
            "counts": self.flag_counts(), "overlap": self.flag_overlap(), "alpha_change": self.alpha_change,
            "n_items": self.n_items, "long_run_items": self.long_run_items,
            "median_duration": self.median_duration, "duration_unit": self.duration_unit,
            "not_checked": list(self.not_checked),
            **({} if self.weighted is None else {"weighted": self.weighted}),
        }

    def not_computable_notes(self) -> list[Note]:
        return [not_computable(key, reason, respondents=int(self.missing_values[key]))
                for key, reason in NOT_COMPUTABLE_REASONS.items() if self.missing_values.get(key)]

    def to_dict(self) -> dict[str, Any]:
        """The document of :meth:`ScreenResult.to_dict` with ``respondents`` as held (see the class notes)."""
        return {"respondents": self.respondents, **to_jsonable({
            "summary": self.summary(),
            "duplicates": {"rows": [list(group) for group in self.duplicate_rows],
                           "row_status": list(self.duplicate_status), "ids": []},
            "thresholds": self.thresholds.to_dict(),
            "flag_codes": {"strong": list(STRONG_FLAGS), "weak": list(WEAK_FLAGS), "listed_only": list(INFO_FLAGS)},
            "weak_indices": {use.index: use.to_dict() for use in self.weak_indices},
            "notes": [*self.notes, *self.not_computable_notes()],
        })}


__all__ = ["JudgedRows", "ScreenSample", "ScreenSummary", "judge_rows"]
