"""The careless-responding screen: every index of every respondent, the flags they raise and a summary.

:func:`screen_respondents` computes the indices (:mod:`.careless_indices`, :mod:`.mahalanobis`) and
applies the rules of :mod:`.screen_rules`; a flag marks a record to look at, not a verdict on a person.
"""
from __future__ import annotations

import functools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..errors import DataError
from ..notes import Note, not_computable, note
from ..results import JsonRows, to_jsonable
from .careless_indices import (
    DuplicateResult,
    EvenOddResult,
    as_answer_matrix,
    attentive_person_total_r,
    duplicate_records,
    even_odd_consistency,
    intra_individual_variability,
    longstring,
    missing_share,
    person_total_correlation,
    speeders,
)
from .mahalanobis import mahalanobis_distance
from .screen_rules import (
    DEFAULT_SCREEN_THRESHOLDS,
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
    WEAK_INDEX_MAX_EXPECTED_BELOW,
    ScreenThresholds,
    WeakIndexUse,
    expected_share_below,
)


@dataclass(frozen=True)
class ScreenResult:
    """Indices, flags and summary of a careless-responding screen; ``to_dict()`` is the JSON contract."""

    ids: tuple[str, ...]
    longstring: np.ndarray
    irv: np.ndarray
    mahalanobis_d2: np.ndarray
    mahalanobis_p: np.ndarray
    mahalanobis_df: np.ndarray
    even_odd: np.ndarray
    person_total_r: np.ndarray
    missing: np.ndarray
    duration: np.ndarray | None
    flags: tuple[tuple[str, ...], ...]
    flagged: np.ndarray
    duplicates: DuplicateResult
    thresholds: ScreenThresholds
    n_items: int
    long_run_items: int
    median_duration: float | None
    alpha_change: dict[str, dict[str, Any]] = field(default_factory=dict)
    notes: tuple[Note, ...] = ()
    #: flag codes whose check could not run (their count is None, never 0; a note says why)
    not_checked: tuple[str, ...] = ()
    #: per group of identical answer rows: ``flagged`` (duplicate-answers), ``long-run`` (counted there
    #: instead) or ``few-answers`` (too few answered items to tell a copy from chance)
    duplicate_status: tuple[str, ...] = ()
    #: unit of the completion times (shown beside them; the checks do not depend on it)
    duration_unit: str = "s"
    weak_indices: tuple[WeakIndexUse, ...] = ()

    @property
    def n(self) -> int:
        return len(self.ids)

    def flagged_ids(self) -> list[str]:
        return [i for i, f in zip(self.ids, self.flagged, strict=True) if f]

    def flag_counts(self) -> dict[str, int | None]:
        """Respondents per flag; None for a check that did not run."""
        counts: dict[str, int | None] = {code: 0 for code in FLAG_ORDER}
        for codes in self.flags:
            for code in codes:
                counts[code] += 1  # type: ignore[operator]
        for code in self.not_checked:
            counts[code] = None
        return counts

    def flag_overlap(self) -> dict[str, dict[str, int]]:
        """Respondents carrying both flags, for every pair of flag codes that occur (diagonal = count)."""
        present = [c for c, k in self.flag_counts().items() if k]
        has = np.array([[code in codes for code in present] for codes in self.flags], dtype=int).reshape(
            self.n, len(present))
        both = has.T @ has
        return {a: {b: int(both[i, j]) for j, b in enumerate(present)} for i, a in enumerate(present)}

    def summary(self) -> dict[str, Any]:
        n_flagged = int(self.flagged.sum())
        return {
            "n": self.n,
            "n_flagged": n_flagged,
            "flagged_pct": 100 * n_flagged / self.n if self.n else None,
            "counts": self.flag_counts(),
            "overlap": self.flag_overlap(),
            "alpha_change": self.alpha_change,
            "n_items": self.n_items,
            "long_run_items": self.long_run_items,
            "median_duration": self.median_duration,
            "duration_unit": self.duration_unit if self.duration is not None else None,
            "not_checked": list(self.not_checked),
        }

    def respondent_records(self) -> JsonRows:
        """One JSON-ready record per respondent (NaN as None), built column by column."""
        return respondent_records(self.ids, self.flagged, self.flags, self.longstring, self.irv,
                                  self.mahalanobis_d2, self.mahalanobis_p, self.mahalanobis_df, self.even_odd,
                                  self.person_total_r, self.missing, self.duration)

    def to_dict(self) -> dict[str, Any]:
        """The JSON contract, built once (the report reads it for its page and again for results.json); treat
        it as read-only."""
        return self._document

    @functools.cached_property
    def _document(self) -> dict[str, Any]:
        return {"respondents": self.respondent_records(), **to_jsonable({
            "summary": self.summary(),
            "duplicates": {"rows": [[self.ids[i] for i in group] for group in self.duplicates.row_groups],
                           "row_status": list(self.duplicate_status),
                           "ids": list(self.duplicates.duplicate_ids)},
            "thresholds": self.thresholds.to_dict(),
            "flag_codes": {"strong": list(STRONG_FLAGS), "weak": list(WEAK_FLAGS), "listed_only": list(INFO_FLAGS)},
            "weak_indices": {use.index: use.to_dict() for use in self.weak_indices},
            "notes": [*self.notes, *self.not_computable_notes()],
        })}

    def not_computable_notes(self) -> list[Note]:
        """A ``not-computable`` note for each per-respondent index that some respondents lack, with their count."""
        indices = {"irv": self.irv, "mahalanobis_d2": self.mahalanobis_d2, "mahalanobis_pvalue": self.mahalanobis_p,
                   "even_odd": self.even_odd, "person_total_r": self.person_total_r}
        if self.duration is not None:
            indices["duration"] = self.duration
        return [not_computable(key, NOT_COMPUTABLE_REASONS[key], respondents=int(np.isnan(values).sum()))
                for key, values in indices.items() if np.isnan(values).any()]


#: why each per-respondent index can be missing (the reason of its ``not-computable`` note)
NOT_COMPUTABLE_REASONS = {"irv": "fewer-than-2-answers", "mahalanobis_d2": "mahalanobis-not-computable",
                          "mahalanobis_pvalue": "mahalanobis-not-computable",
                          "even_odd": "fewer-than-3-scales-with-both-halves-or-no-spread",
                          "person_total_r": "fewer-than-3-answers-or-no-spread", "duration": "no-completion-time"}


def _alpha_change(keyed_by_scale: Mapping[str, np.ndarray], flagged: np.ndarray,
                  weights: np.ndarray | None = None) -> dict[str, dict[str, Any]]:
    """Alpha of the complete answers with and without the flagged respondents; with survey weights both from
    the weighted covariance (rows of weight 0 left out; ``n_*`` count the respondents used, ``n_effective_*``
    is Kish's n_eff of their weights)."""
    from .item_covariance import item_covariance
    from .reliability_coefficients import cronbach_alpha_from_cov
    from .weighted import kish_effective_n, weighted_covariance

    def alpha_of(keyed: np.ndarray, w: np.ndarray | None) -> tuple[float, int, float]:
        if w is None:
            found = item_covariance(keyed)
            return (cronbach_alpha_from_cov(found.cov) if found.n_used >= 2 else math.nan), found.n_used, math.nan
        used = np.isfinite(keyed).all(axis=1) & (w > 0)
        n_used = int(used.sum())
        alpha = cronbach_alpha_from_cov(weighted_covariance(keyed, w)) if n_used >= 2 else math.nan
        return alpha, n_used, kish_effective_n(w[used])

    w = None if weights is None else np.asarray(weights, dtype=float)
    out = {}
    for name, keyed in keyed_by_scale.items():
        alpha_all, n_all, n_eff_all = alpha_of(keyed, w)
        alpha_kept, n_kept, n_eff_kept = alpha_of(keyed[~flagged], None if w is None else w[~flagged])
        out[name] = {"alpha_all": alpha_all, "n_all": n_all,
                     "alpha_without_flagged": alpha_kept, "n_without_flagged": n_kept,
                     "change": alpha_kept - alpha_all}
        if w is not None:
            out[name].update({"weighted": True, "n_effective_all": n_eff_all,
                              "n_effective_without_flagged": n_eff_kept})
    return out


def _unique_notes(notes: Sequence[Note]) -> tuple[Note, ...]:
    """Each note once, in order (a note's values may be unhashable, so it is compared by its JSON form)."""
    seen: dict[str, Note] = {}
    for item in notes:
        seen.setdefault(repr(item.to_dict()) if isinstance(item, Note) else item, item)
    return tuple(seen.values())


def _duplicate_status(groups: Sequence[Sequence[int]], long_run: np.ndarray, answered_items: np.ndarray,
                      min_items: int) -> tuple[str, ...]:
    """Why each group of identical rows is or is not counted as ``duplicate-answers`` (rows of a group agree)."""
    status = []
    for group in groups:
        first = group[0]
        status.append("long-run" if long_run[first] else "few-answers" if answered_items[first] < min_items
                      else "flagged")
    return tuple(status)


def screen_respondents(items_raw_order: Any, keyed_by_scale: Mapping[str, Any], *, ids: Sequence[str],
                       thresholds: ScreenThresholds = DEFAULT_SCREEN_THRESHOLDS, durations: Any = None,
                       duration_unit: str = "s", weights: Any = None) -> ScreenResult:
    """Screen every respondent for careless answering and suspicious records.

    Parameters
    ----------
    items_raw_order : array_like, shape (n, p)
        Answers in questionnaire order, not reverse-keyed (for the longest run and for duplicates).
    keyed_by_scale : mapping of scale name to array_like (n, k_s)
        Keyed items of each scale (for IRV, Mahalanobis, even-odd, person-total and alpha).
    ids : sequence of str
        Respondent ids, one per row.
    thresholds : ScreenThresholds
        When each index raises a flag.
    durations : array_like, shape (n,), optional
        Completion times (any unit); enables the ``fast`` flag. Without them ``fast`` is not checked: its
        count is None (``null``), not 0.
    duration_unit : str
        Unit of ``durations``, kept for display.
    weights : array_like, shape (n,), optional
        Survey weights: the Mahalanobis distance is measured from the weighted means and covariance, and the
        alpha with and without the flagged respondents is the weighted alpha. Every other index is a
        respondent's own; no one's weight changes their own flags.

    Returns
    -------
    ScreenResult

    Notes
    -----
    A respondent is *flagged* when a strong flag fires (``long-run``, ``far-from-sample``, ``fast``,
    ``duplicate-answers``, ``duplicate-id``) or when ``somewhat-far`` (Mahalanobis p below
    ``mahalanobis_p_weak`` but not below ``mahalanobis_p``) comes with ``uneven-halves`` or ``against-sample``.
    Those two may not confirm each other: both fall for attentive people whose scale scores are all alike.
    Weak signals do not count for a respondent with ``many-missing``, a flag that is listed but marks no one:
    an unfinished questionnaire is not careless answering. Such respondents are also left out of the median
    duration and of the ``fast`` check.

    The Mahalanobis distance is
    computed twice: first from everyone, then from the means and covariance of the respondents the first pass
    left unflagged (neither a long run nor p below ``mahalanobis_p_weak``). One reweighting step is our own
    choice: careless answers inflate the covariance and so hide each other (masking). A flag marks a record to
    look at, not a verdict on a person.
    """
    raw = as_answer_matrix(items_raw_order, "items_raw_order")
    n, p = raw.shape
    if len(ids) != n:
        raise DataError(f"ids: expected {n} respondent ids, got {len(ids)}")
    scales = {str(name): as_answer_matrix(block, f"keyed items of scale {name}") for name, block in keyed_by_scale.items()}
    for name, block in scales.items():
        if block.shape[0] != n:
            raise DataError(f"keyed items of scale {name}: {block.shape[0]} rows, expected {n}")
    keyed = np.hstack(list(scales.values())) if scales else np.empty((n, 0))
    notes: list[Note] = []
    not_checked: list[str] = []

    runs = longstring(raw)
    run_limit = thresholds.run_limit(p)
    long_run = runs >= run_limit
    irv = intra_individual_variability(keyed)
    missing = missing_share(raw)
    many_missing = missing > thresholds.missing_share_max

    first = mahalanobis_distance(keyed, weights=weights)
    distance = first
    if np.isfinite(first.p).any():
        reference = ~long_run & ~(first.p < thresholds.mahalanobis_p_weak)
        second = mahalanobis_distance(keyed, reference=reference, weights=weights)
        if np.isfinite(second.p).any():
            distance = second
        else:
            notes.append(note("distance-not-reweighted"))
    notes.extend(distance.notes)
    with np.errstate(invalid="ignore"):
        far = distance.p < thresholds.mahalanobis_p
        somewhat_far = distance.p < thresholds.mahalanobis_p_weak

    halves = even_odd_consistency(scales) if scales else EvenOddResult(
        np.full(n, np.nan), np.full(n, np.nan), 0, (note("halves-no-scales"),))
    notes.extend(halves.notes)
    person_total = person_total_correlation(keyed)
    typical_total = attentive_person_total_r(keyed)
    answered_median = int(np.median(np.sum(~np.isnan(keyed), axis=1))) if n and keyed.shape[1] else 0
    with np.errstate(invalid="ignore"):
        typical_halves = float(np.nanmedian(halves.r_halves)) if np.isfinite(halves.r_halves).any() else math.nan
    halves_use, total_use = weak_index_uses(typical_total=typical_total, answered_median=answered_median,
                                            typical_halves=typical_halves, scales_used=halves.scales_used,
                                            thresholds=thresholds)
    with np.errstate(invalid="ignore"):
        uneven = (halves.consistency < thresholds.even_odd_min) & halves_use.used
        against = (person_total < thresholds.person_total_min) & total_use.used

    fast = np.zeros(n, dtype=bool)
    duration = None
    median_duration = None
    if durations is None:
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-not-checked", flag=FLAG_FAST))
    else:
        duration = np.asarray(durations, dtype=float).reshape(-1)
        if duration.shape != (n,):
            raise DataError(f"durations: expected {n} values, got {duration.size}")
        # a respondent who stopped early is quick for that reason; the median comes from the others
        timed = np.where(many_missing, np.nan, duration)
        fast, median = speeders(timed, speed_share=thresholds.speed_share)
        median_duration = None if math.isnan(median) else median
        if median_duration is None:
            not_checked.append(FLAG_FAST)
            notes.append(note("fast-no-durations", flag=FLAG_FAST))
        elif (~np.isfinite(duration)).any():
            notes.append(note("durations-missing", respondents=int((~np.isfinite(duration)).sum())))

    duplicates = duplicate_records(raw, ids)
    answered_items = p - np.isnan(raw).sum(axis=1)
    duplicate_answers = duplicates.in_row_group & ~long_run & (answered_items >= thresholds.duplicate_min_items)
    duplicate_status = _duplicate_status(duplicates.row_groups, long_run, answered_items,
                                         thresholds.duplicate_min_items)
    for flag, why in thresholds.too_short_for(p):
        not_checked.append(flag)
        notes.append(why)
    if not np.isfinite(distance.p).any():
        not_checked.extend((FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR))
        notes.append(note("distance-not-checked", flags=(FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR)))
    if not np.isfinite(halves.consistency).any():
        not_checked.append(FLAG_UNEVEN_HALVES)
        notes.append(note("halves-not-checked", flag=FLAG_UNEVEN_HALVES))
    if not np.isfinite(person_total).any():
        not_checked.append(FLAG_AGAINST_SAMPLE)
        notes.append(note("profile-not-checked", flag=FLAG_AGAINST_SAMPLE))

    fired = {
        FLAG_LONG_RUN: long_run, FLAG_FAR_FROM_SAMPLE: far, FLAG_FAST: fast, FLAG_MANY_MISSING: many_missing,
        FLAG_DUPLICATE_ANSWERS: duplicate_answers, FLAG_DUPLICATE_ID: duplicates.id_repeated,
        FLAG_SOMEWHAT_FAR: somewhat_far & ~far, FLAG_UNEVEN_HALVES: uneven, FLAG_AGAINST_SAMPLE: against,
    }
    flagged, flags = combined_flags(fired)

    alpha_change = _alpha_change(scales, flagged, weights) if scales else {}
    return ScreenResult(
        ids=tuple(str(i) for i in ids), longstring=runs, irv=irv, mahalanobis_d2=distance.d2,
        mahalanobis_p=distance.p, mahalanobis_df=distance.df, even_odd=halves.consistency,
        person_total_r=person_total, missing=missing, duration=duration, flags=flags, flagged=flagged,
        duplicates=duplicates, thresholds=thresholds, n_items=p, long_run_items=thresholds.long_run_items(p),
        median_duration=median_duration, alpha_change=alpha_change, notes=_unique_notes(notes),
        not_checked=tuple(not_checked), duplicate_status=duplicate_status, duration_unit=duration_unit,
        weak_indices=(halves_use, total_use))


def weak_index_uses(*, typical_total: float, answered_median: int, typical_halves: float, scales_used: int,
                    thresholds: ScreenThresholds) -> tuple[WeakIndexUse, WeakIndexUse]:
    """Whether ``uneven-halves`` and ``against-sample`` can count in this sample (see :class:`WeakIndexUse`),
    from the attentive respondents' expected person-total r, the median number of answered items, the median
    raw even-odd half correlation and the number of scales the halves use."""
    # a weak index counts only where its cut-off sits in the attentive respondents' far lower tail: when
    # item means barely differ, attentive people's person-total r scatters around zero; with few scales the
    # even-odd correlation rests on a handful of points (docs/screening.md)
    total_use = WeakIndexUse(index=FLAG_AGAINST_SAMPLE, used=False, typical=typical_total, points=answered_median,
                             cutoff=thresholds.person_total_min,
                             expected_below=expected_share_below(typical_total, thresholds.person_total_min,
                                                                 answered_median))
    half_cut = thresholds.even_odd_min / (2 - thresholds.even_odd_min)  # undo Spearman-Brown: raw half r
    halves_use = WeakIndexUse(index=FLAG_UNEVEN_HALVES, used=False, typical=2 * typical_halves / (1 + typical_halves),
                              points=scales_used, cutoff=thresholds.even_odd_min,
                              expected_below=expected_share_below(typical_halves, half_cut, scales_used))
    total_use = replace(total_use, used=bool(total_use.expected_below <= WEAK_INDEX_MAX_EXPECTED_BELOW))
    halves_use = replace(halves_use, used=bool(halves_use.expected_below <= WEAK_INDEX_MAX_EXPECTED_BELOW))
    return halves_use, total_use


def combined_flags(fired: Mapping[str, np.ndarray]) -> tuple[np.ndarray, tuple[tuple[str, ...], ...]]:
    """Who is flagged by the combined rule, and each respondent's flag codes (in :data:`FLAG_ORDER`), from
    the rows each flag fired for (see :func:`screen_respondents`, Notes)."""
    many_missing = fired[FLAG_MANY_MISSING]
    strong = np.zeros(many_missing.shape[0], dtype=bool)
    for code in STRONG_FLAGS:
        strong |= fired[code]
    # weak signals rest on few answers when many are missing, so they count only for respondents who
    # answered most items
    # uneven-halves and against-sample both drop for attentive people whose scale scores are all alike, so they
    # do not confirm each other; each may confirm a moderately distant answer pattern
    flagged = strong | (~many_missing & fired[FLAG_SOMEWHAT_FAR] & (fired[FLAG_UNEVEN_HALVES]
                                                                    | fired[FLAG_AGAINST_SAMPLE]))
    codes = np.array(FLAG_ORDER, dtype=object)
    matrix = np.column_stack([fired[c] for c in FLAG_ORDER])
    return flagged, tuple(tuple(codes[row]) for row in matrix)  # per-respondent lists of codes for the output


def respondent_records(ids: Sequence[str], flagged: np.ndarray, flags: Sequence[Sequence[str]],
                       runs: np.ndarray, irv: np.ndarray, d2: np.ndarray, p: np.ndarray, df: np.ndarray,
                       even_odd: np.ndarray, person_total: np.ndarray, missing: np.ndarray,
                       duration: np.ndarray | None) -> JsonRows:
    """One JSON-ready record per respondent (NaN as None), built column by column (``missing`` as a share)."""
    columns = {
        "id": list(ids), "flagged": flagged.tolist(), "flags": [list(f) for f in flags],
        "longstring": _plain(runs), "irv": _plain(irv), "mahalanobis_d2": _plain(d2),
        "mahalanobis_pvalue": _plain(p), "mahalanobis_df": _plain(df), "even_odd": _plain(even_odd),
        "person_total_r": _plain(person_total), "missing_pct": _plain(100 * missing),
    }
    if duration is not None:
        columns["duration"] = _plain(duration)
    names = list(columns)
    return JsonRows(dict(zip(names, values, strict=True)) for values in zip(*columns.values(), strict=True))


def _plain(values: np.ndarray) -> list[Any]:
    """``values.tolist()`` with None for NaN and infinities, as :func:`to_jsonable` writes them."""
    out = values.tolist()
    if values.dtype.kind == "f":
        for position in np.flatnonzero(~np.isfinite(values)).tolist():
            out[position] = None
    return out
