"""What the screen computes between its passes, from the merged sums of the one before (see
:mod:`.screen_stream`): the checks of the first pass, the sample each row is measured against, and the
screen's summary from the third pass's sums. The file read in blocks and a dataset's partitions on Dask
workers (:mod:`.screen_dask`) share these, so the two give the same document from the same sums.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, note
from ..stats.coded import covariance_from_listwise_gram
from ..stats.screen_blocks import ScreenSample, ScreenSummary
from ..stats.screen_rules import (
    FLAG_AGAINST_SAMPLE,
    FLAG_FAR_FROM_SAMPLE,
    FLAG_FAST,
    FLAG_ORDER,
    FLAG_SOMEWHAT_FAR,
    FLAG_UNEVEN_HALVES,
    ScreenThresholds,
)
from .reading import ReadingOutcome, check_reading
from .screen_passes import Layout, centre_of, column_totals, median_of_counts
from .screen_sums import FirstSums, SecondSettings, SecondSums, ThirdSums


@dataclass(frozen=True)
class ScreenOptions:
    """The screen's settings that every pass and step shares."""

    thresholds: ScreenThresholds
    duration_column: str | None = None
    duration_unit: str = "s"
    weight: str | None = None

    def columns(self, spec: Any) -> tuple[str, ...]:
        """The columns read beside the items: the id, the completion times, the weights."""
        return tuple(dict.fromkeys([*([spec.id_column] if spec.id_column else []),
                                    *([self.duration_column] if self.duration_column else []),
                                    *([self.weight] if self.weight else [])]))


def file_layout(path: str | Path, spec: Any, source: Any = None) -> Layout | None:
    """A Parquet file's layout from its schema (a batch holds only the columns read: the order is the
    schema's); None for a delimited file (its first block's columns give it)."""
    if Path(path).suffix.lower() != ".parquet":
        return None
    import pyarrow.parquet as pq

    return Layout.of(spec, tuple(name.strip() for name in pq.read_schema(source or path).names))


def check_first_pass(sums: FirstSums, path: str, spec: Any, options: ScreenOptions, *, lenient: bool,
                     weights_read: Any = None) -> ReadingOutcome:
    """What reading found, checked as the whole-file reader checks it (refused values, then the weights,
    then the completion times); raises :class:`~scalewright.errors.DataError` as it does."""
    outcome = check_reading(path, sums.reading, spec, lenient=lenient)
    if weights_read is not None and sums.weight_reading is not None:  # as the whole-file reader, before the times
        weights_read(sums.weight_reading)
    if sums.bad_duration is not None:
        file, row, value = sums.bad_duration
        raise DataError(f"{file or path}: column {options.duration_column!r}, row {row}: {value!r} is not a number "
                        "of seconds or minutes")
    if sums.negative:
        raise DataError("durations: negative completion time found; times must be zero or positive")
    return outcome


@dataclass(frozen=True)
class FirstFound:
    """The first pass's results: the rows, the first Mahalanobis centre, the item totals and counts of the
    person-total r, whether the weak indices count, and the settings of the second pass."""

    n: int
    first_centre: Any
    totals: np.ndarray
    counts: np.ndarray
    weak: tuple
    second: SecondSettings


def after_first_pass(sums: FirstSums, layout: Layout, options: ScreenOptions, *, typical_halves: float,
                     candidates: np.ndarray) -> FirstFound:
    n = sums.reading.rows
    thresholds = options.thresholds
    first_centre, cov, means, counts = centre_of(sums.gram, layout, n_rows=n, n_basis=n)
    if sums.weighted is not None:  # the weighted means and pairwise covariance of the rows of positive weight
        first_centre = weighted_centre(sums.weighted, layout, n_rows=n)
    totals, _ = column_totals(sums.gram, layout)
    weak = _sample_basics(cov, means, counts, sums.answered, n=n, typical_halves=typical_halves,
                          scales_used=sums.scales_used, thresholds=thresholds)
    run_limit = thresholds.run_limit(len(layout.order))
    return FirstFound(n=n, first_centre=first_centre, totals=totals, counts=counts, weak=weak,
                      second=SecondSettings(layout=layout, first_centre=first_centre, candidates=candidates,
                                            thresholds=thresholds, run_limit=run_limit, weight=options.weight))


@dataclass(frozen=True)
class SecondFound:
    """The second pass's results: the sample each row is judged against, the final centre, the groups of
    identical rows (members: (index, id, long run, items answered)) and their status, and the notes."""

    sample: ScreenSample
    centre: Any
    groups: list
    status: tuple[str, ...]
    in_group: np.ndarray
    notes: tuple


def after_second_pass(first_sums: FirstSums, first: FirstFound, second: SecondSums, layout: Layout,
                      options: ScreenOptions, *, median_duration: float | None) -> SecondFound:
    thresholds, n = options.thresholds, first.n
    notes: list[str | Note] = []
    first_centre = first.first_centre
    centre = first_centre if first_centre.ok else None
    if first_centre.ok:
        aside = np.zeros_like(first_sums.gram) if second.aside_gram is None else second.aside_gram
        second_centre = centre_of(first_sums.gram - aside, layout, n_rows=n, n_basis=n - second.n_aside)[0]
        if first_sums.weighted is not None:
            kept = (first_sums.weighted if second.weighted_aside is None
                    else first_sums.weighted.without(second.weighted_aside))
            second_centre = weighted_centre(kept, layout, n_rows=n)
        if second_centre.ok:
            centre = second_centre
        else:
            notes.append(note("distance-not-reweighted"))
    groups = sorted((sorted(members) for members in second.twins.values() if len(members) >= 2),
                    key=lambda group: group[0][0])
    in_group = np.array(sorted(row for group in groups for row, *_ in group), dtype=np.int64)
    status = tuple("long-run" if group[0][2] else "few-answers" if group[0][3] < thresholds.duplicate_min_items
                   else "flagged" for group in groups)
    sample = ScreenSample(centre=centre, totals=first.totals, counts=first.counts, halves_use=first.weak[0],
                          total_use=first.weak[1], run_limit=first.second.run_limit, median_duration=median_duration)
    return SecondFound(sample=sample, centre=centre, groups=groups, status=status, in_group=in_group,
                       notes=tuple(notes))


def summary_before_rows(first: FirstFound, second: SecondFound, options: ScreenOptions, *, p: int,
                        median_duration: float | None) -> ScreenSummary:
    """The summary as known before the third pass (no counts yet): what a per-respondent table's rows need."""
    return _summary(first=first, second=second, options=options, p=p, third=ThirdSums(),
                    median_duration=median_duration, not_checked=(), alpha={}, notes=())


def finish_summary(first_sums: FirstSums, first: FirstFound, second: SecondFound, third: ThirdSums,
                   options: ScreenOptions, *, p: int, median_duration: float | None) -> ScreenSummary:
    """The screen's summary document from the sums of the three passes."""
    from ..stats.screening import _unique_notes

    notes: list[Any] = list(second.notes)
    centre, first_centre = second.centre, first.first_centre
    notes.extend(centre.notes if centre is not None else first_centre.notes)
    if third.no_answers and centre is not None:
        notes.append(note("distance-no-answers", respondents=third.no_answers))
    notes.extend(first_sums.halves_notes)
    not_checked: list[str] = []
    if options.duration_column is None:
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-not-checked", flag=FLAG_FAST))
    elif median_duration is None or math.isnan(median_duration):
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-no-durations", flag=FLAG_FAST))
    elif first_sums.no_time:
        notes.append(note("durations-missing", respondents=first_sums.no_time))
    thresholds = options.thresholds
    for flag, why in thresholds.too_short_for(p):
        not_checked.append(flag)
        notes.append(why)
    if not third.finite["p"]:
        not_checked.extend((FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR))
        notes.append(note("distance-not-checked", flags=(FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR)))
    if not third.finite["even_odd"]:
        not_checked.append(FLAG_UNEVEN_HALVES)
        notes.append(note("halves-not-checked", flag=FLAG_UNEVEN_HALVES))
    if not third.finite["person_total_r"]:
        not_checked.append(FLAG_AGAINST_SAMPLE)
        notes.append(note("profile-not-checked", flag=FLAG_AGAINST_SAMPLE))
    weighted_block = None
    alpha = _alpha_change(third.alpha_grams, first.n)
    judged = third.judged_sums
    if options.weight is not None and judged.everyone is not None:
        from ..stats.screen_weighted import weighted_alpha_change, weighted_flag_shares

        alpha = weighted_alpha_change({name: pair[0] for name, pair in judged.scales.items()},
                                      {name: pair[1] for name, pair in judged.scales.items()})
        weight_reading = first_sums.weight_reading
        weighted_block = weighted_flag_shares(
            weight_column=options.weight, n=first.n,
            n_zero_weight=0 if weight_reading is None else weight_reading.n_zero_weight,
            everyone=judged.everyone, flagged=judged.flagged, n_flagged=third.n_flagged,
            per_flag={code: None if code in not_checked else judged.per_flag[code] for code in FLAG_ORDER})
    summary = _summary(first=first, second=second, options=options, p=p, third=third, median_duration=median_duration,
                       not_checked=tuple(not_checked), alpha=alpha, notes=_unique_notes(notes))
    return summary if weighted_block is None else _with_weighted(summary, weighted_block)


def _with_weighted(summary: ScreenSummary, block: dict[str, Any]) -> ScreenSummary:
    from dataclasses import replace

    return replace(summary, weighted=block)


def weighted_centre(sums: Any, layout: Layout, *, n_rows: int) -> Any:
    """The Mahalanobis centre of the weighted moments of the rows of positive weight (``sums``:
    :class:`~scalewright.summaries.exact_weighted.ExactWeightedPairwise` of the keyed codes)."""
    from ..stats.mahalanobis import mahalanobis_centre

    means, cov = sums.moments(layout.keyed_lows)
    return mahalanobis_centre(means, cov, n_rows=n_rows, n_basis=sums.n_used)


def _sample_basics(cov: np.ndarray, means: np.ndarray, counts: np.ndarray, answered: np.ndarray, *, n: int,
                   typical_halves: float, scales_used: int, thresholds: ScreenThresholds) -> tuple:
    """(halves_use, total_use) of :func:`~scalewright.stats.screening.weak_index_uses` from the summaries."""
    from ..stats.careless_indices import attentive_r_from_moments
    from ..stats.screening import weak_index_uses

    k = means.size
    typical_total = math.nan
    if k >= 3 and n >= 3:
        kept = np.flatnonzero(counts >= 2)
        if kept.size >= 3:
            typical_total = attentive_r_from_moments(means[kept], cov[np.ix_(kept, kept)])
    answered_median = int(median_of_counts(answered)) if n and k else 0
    return weak_index_uses(typical_total=typical_total, answered_median=answered_median,
                           typical_halves=typical_halves, scales_used=scales_used, thresholds=thresholds)


def _alpha_change(grams: dict[str, tuple[np.ndarray, np.ndarray]], n: int) -> dict[str, dict[str, Any]]:
    """Alpha of each scale's complete answers with and without the flagged (the whole-file screen's
    ``alpha_change``), from listwise cross-products."""
    from ..stats.reliability_coefficients import cronbach_alpha_from_cov

    def alpha_of(gram: np.ndarray) -> tuple[float, int]:
        k = gram.shape[0] - 1
        found = covariance_from_listwise_gram(gram, n_rows=n, low=0, high=0, reversed_mask=np.zeros(k, dtype=bool))
        return (cronbach_alpha_from_cov(found.cov) if found.n_used >= 2 else math.nan), found.n_used

    out = {}
    for name, (all_rows, flagged_rows) in grams.items():
        alpha_all, n_all = alpha_of(all_rows)
        alpha_kept, n_kept = alpha_of(all_rows - flagged_rows)
        out[name] = {"alpha_all": alpha_all, "n_all": n_all, "alpha_without_flagged": alpha_kept,
                     "n_without_flagged": n_kept, "change": alpha_kept - alpha_all}
    return out


def _summary(*, first: FirstFound, second: SecondFound, options: ScreenOptions, p: int, third: ThirdSums,
             median_duration: float | None, not_checked: tuple, alpha: dict, notes: tuple) -> ScreenSummary:
    median = None if median_duration is None or math.isnan(median_duration) else median_duration
    return ScreenSummary(
        n=first.n, fired_counts=dict(third.fired_counts), together=third.together.copy(), n_flagged=third.n_flagged,
        alpha_change=alpha, n_items=p, long_run_items=options.thresholds.long_run_items(p), median_duration=median,
        duration_unit=options.duration_unit if options.duration_column is not None else None,
        not_checked=not_checked,
        duplicate_rows=tuple(tuple(name for _, name, *_ in group) for group in second.groups),
        duplicate_status=second.status, thresholds=options.thresholds, weak_indices=first.weak, notes=notes,
        missing_values=dict(third.missing_values), respondents=third.held_records())


__all__ = ["FirstFound", "ScreenOptions", "SecondFound", "after_first_pass", "after_second_pass",
           "check_first_pass", "file_layout", "finish_summary", "summary_before_rows", "weighted_centre"]
