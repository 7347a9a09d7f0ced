"""The careless-responding screen of a file read in blocks, in three passes over the file.

The screen judges every row against the whole sample, and its Mahalanobis distance is measured twice
(from everyone, then from the rows the first distance left unflagged), so the file is read three times;
memory holds a few blocks and the summaries below, whatever the number of rows:

1. Summaries: what reading found (checked as the whole-file reader checks it), the exact integer pairwise
   cross-products of the keyed items (item means and covariance: the first Mahalanobis centre, the item
   totals of the person-total correlation, the attentive respondent's expected person-total r), the counts
   of answered items per row (their median), each row's even-odd half correlation and its usable
   completion time (two columns spilled to disk, their exact medians found by selection:
   :mod:`.value_spill`), and a 64-bit hash of each answer row (spilled as the ids are: :mod:`.id_spill`).
2. The first distance of every row, and the cross-products of the rows it leaves unflagged (the second
   centre); the rows whose hash came twice are looked at again and grouped by their answers themselves,
   so a shared hash never makes a copy.
3. Every row's indices and flags (:func:`~scalewright.stats.screen_blocks.judge_rows`), handed to a sink
   in file order as they are judged, and the sums of the summary: flag counts and overlaps, the indices
   that could not be computed, the listwise cross-products of each scale with and without the flagged.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import numpy as np

from ..answer_codes import MISSING
from ..data_file import first_row_number
from ..errors import DataError
from ..notes import Note, note
from ..results import JsonRows
from ..stats.coded import covariance_from_listwise_gram, listwise_gram, pairwise_gram
from ..stats.screen_blocks import JudgedRows, ScreenSample, ScreenSummary, judge_rows
from ..stats.screen_rules import FLAG_DUPLICATE_ANSWERS, FLAG_FAST, FLAG_ORDER, ScreenThresholds
from .blocks import Block, CannotStream
from .id_spill import IdHashSpill
from .reading import ReadingCounts, ReadingOutcome, check_reading
from .row_hash import answer_row_hashes
from .screen_passes import Layout, Passes, block_durations, block_ids, centre_of, column_totals, median_of_counts
from .screen_weighted import JudgedSums, first_pass_sums, set_aside_sums
from .value_spill import ValueSpill

#: flagged records kept in memory for the tables (every record goes to the sink)
HELD_RECORDS = 1000


@dataclass(frozen=True)
class StreamedScreen:
    """The screen's summary document and the checked reading of the file."""

    summary: ScreenSummary
    outcome: ReadingOutcome


def stream_screen(path: str | Path, spec: Any, *, thresholds: ScreenThresholds | None = None,
                  duration_column: str | None = None, duration_unit: str = "s", lenient: bool = False,
                  block_bytes: int | None = None, sink: Callable[[JsonRows], None] | None = None,
                  before_rows: Callable[[ScreenSummary], None] | None = None,
                  held: int = HELD_RECORDS, weight: str | None = None,
                  weights_read: Callable[[Any], None] | None = None) -> StreamedScreen:
    """Screen the file in three passes (see the module notes); ``sink`` receives every block's records in
    file order, ``before_rows`` is called once before the first (when everything but the rows is known:
    the summary passed has no counts yet). Raises :class:`~scalewright.engine.blocks.CannotStream` for
    a file the whole-file reader must read, before any record is handed on.

    ``weight`` names the survey weight column: the Mahalanobis centres, the alphas with and without the
    flagged and the flagged shares are then weighted, from exact sums (:mod:`.screen_weighted`);
    ``weights_read`` is given what reading the weights found (a
    :class:`~scalewright.summaries.weighted.WeightReading`) once the first pass is checked, before any
    record is handed on (to refuse the run as the whole-file route refuses it)."""
    path = Path(path)
    thresholds = thresholds or ScreenThresholds()
    columns = tuple(dict.fromkeys([*([spec.id_column] if spec.id_column else []),
                                   *([duration_column] if duration_column else []), *([weight] if weight else [])]))
    passes = Passes(path, spec, columns, block_bytes)
    p = len(spec.items)
    run_limit = thresholds.long_run_items(p)
    layout: Layout | None = None
    if path.suffix.lower() == ".parquet":  # a batch holds only the columns read: the order is the file's schema's
        import pyarrow.parquet as pq

        layout = Layout.of(spec, tuple(name.strip() for name in pq.read_schema(path).names))

    # ------------------------------------------------------------------------------------------ pass 1
    def first_pass(block: Block) -> dict[str, Any]:
        nonlocal layout
        if layout is None:
            layout = Layout.of(spec, block.reading.file_columns)
        raw, scales, kc = layout.matrices(block.codes)
        from ..stats.careless_indices import even_odd_consistency, missing_share

        many_missing = missing_share(raw) > thresholds.missing_share_max
        durations, bad = block_durations(block, duration_column)
        timed = None if durations is None else np.where(many_missing, np.nan, durations)
        halves = even_odd_consistency(scales) if scales else None
        return {"gram": pairwise_gram(kc, span=int(layout.spans.max(initial=1))),
                "answered": np.bincount((kc != MISSING).sum(axis=1), minlength=kc.shape[1] + 1),
                "halves": halves, "timed": timed, "bad": bad,
                "negative": bool(timed is not None and (timed[np.isfinite(timed)] < 0).any()),
                "no_time": 0 if durations is None else int((~np.isfinite(durations)).sum()),
                "hashes": answer_row_hashes(block.codes),
                "weighted": None if weight is None else first_pass_sums(block, weight, kc)}

    reading: ReadingCounts | None = None
    gram = answered = None
    halves_notes: tuple = ()
    scales_used = 0
    bad_duration = None
    negative = False
    no_time = 0
    weight_reading = weighted = None
    with IdHashSpill() as ids, IdHashSpill() as rows, ValueSpill() as halves_r, ValueSpill() as times:
        for block, found in passes.run(first_pass):
            counts = ids.take_ids(block.reading)
            reading = counts if reading is None else reading.merge(counts)
            gram = found["gram"] if gram is None else gram + found["gram"]
            answered = found["answered"] if answered is None else answered + found["answered"]
            if found["halves"] is not None:
                halves_r.add(found["halves"].r_halves)
                halves_notes, scales_used = found["halves"].notes, found["halves"].scales_used
            if found["timed"] is not None:
                times.add(found["timed"])
            bad_duration = bad_duration or found["bad"]
            negative |= found["negative"]
            no_time += found["no_time"]
            rows.add(found["hashes"])
            if found["weighted"] is not None:
                read, sums = found["weighted"]
                weight_reading = read if weight_reading is None else weight_reading.merge(read)
                weighted = sums if weighted is None else weighted.merge(sums)
        if reading is None or reading.rows == 0 or layout is None:
            raise CannotStream("no rows")  # the whole-file reader says so
        if ids.has_duplicates():
            raise CannotStream("an id appears twice")  # the whole-file reader names it and its rows
        outcome = check_reading(str(path), reading, spec, lenient=lenient)
        if weights_read is not None and weight_reading is not None:  # as the whole-file reader, before the times
            weights_read(weight_reading)
        if bad_duration is not None:
            row, value = bad_duration
            raise DataError(f"{path}: column {duration_column!r}, row {row}: {value!r} is not a number of seconds "
                            "or minutes")
        if negative:
            raise DataError("durations: negative completion time found; times must be zero or positive")
        typical_halves = halves_r.median()
        median_duration = None if duration_column is None else times.median()
        candidates = rows.repeated()
    n = reading.rows
    first_centre, cov, means, counts = centre_of(gram, layout, n_rows=n, n_basis=n)
    if weighted is not None:  # the weighted means and pairwise covariance of the rows of positive weight
        first_centre = _weighted_centre(weighted, layout, n_rows=n)
    totals, _ = column_totals(gram, layout)
    sample_basics = _sample_basics(cov, means, counts, answered, n=n, typical_halves=typical_halves,
                                   scales_used=scales_used, thresholds=thresholds)

    # ------------------------------------------------------------------------------------------ pass 2
    def second_pass(block: Block) -> dict[str, Any]:
        from ..stats.careless_indices import longstring
        from ..stats.mahalanobis import distances_from_centre

        raw, scales, kc = layout.matrices(block.codes)
        out: dict[str, Any] = {}
        if first_centre.ok:
            keyed = np.hstack(list(scales.values()))
            first = distances_from_centre(keyed, first_centre)
            with np.errstate(invalid="ignore"):
                reference = (longstring(raw) < run_limit) & ~(first.p < thresholds.mahalanobis_p_weak)
            # the rows set aside are few: their cross-products, taken from everyone's, leave the reference's
            out["gram"] = pairwise_gram(kc[~reference], span=int(layout.spans.max(initial=1)))
            out["n_aside"] = int((~reference).sum())
            if weight is not None:
                out["weighted"] = set_aside_sums(block, weight, kc, reference)
        if candidates.size:
            hashes = answer_row_hashes(block.codes)
            at = np.minimum(np.searchsorted(candidates, hashes), candidates.size - 1)
            chosen = np.flatnonzero(candidates[at] == hashes)
            if chosen.size:
                from ..stats.careless_indices import longstring

                part = raw[chosen]
                out["twins"] = (chosen, [bytes(row) for row in np.ascontiguousarray(block.codes[chosen])],
                                longstring(part) >= run_limit, p - np.isnan(part).sum(axis=1))
        return out

    aside_gram, n_aside, offset = np.zeros_like(gram), 0, 0
    weighted_aside = None
    twins: dict[bytes, list[tuple[int, str, bool, int]]] = {}
    for block, found in passes.run(second_pass):
        if "gram" in found:
            aside_gram += found["gram"]
            n_aside += found["n_aside"]
            if "weighted" in found:
                weighted_aside = found["weighted"] if weighted_aside is None else weighted_aside.merge(found["weighted"])
        if "twins" in found:
            chosen, keys, long_run, answered_items = found["twins"]
            names = block_ids(block, spec)
            for position, key, run, count in zip(chosen.tolist(), keys, long_run.tolist(), answered_items.tolist(),
                                                 strict=True):
                twins.setdefault(key, []).append((offset + position, names[position], run, int(count)))
        offset += block.n
    notes: list[str | Note] = []
    centre = first_centre if first_centre.ok else None
    if first_centre.ok:
        second_centre = centre_of(gram - aside_gram, layout, n_rows=n, n_basis=n - n_aside)[0]
        if weighted is not None:
            second_centre = _weighted_centre(weighted if weighted_aside is None else weighted.without(weighted_aside),
                                             layout, n_rows=n)
        if second_centre.ok:
            centre = second_centre
        else:
            notes.append(note("distance-not-reweighted"))
    groups = sorted((sorted(members) for members in twins.values() if len(members) >= 2), key=lambda g: g[0][0])
    in_group = np.array(sorted(row for group in groups for row, *_ in group), dtype=np.int64)
    status = tuple("long-run" if group[0][2] else "few-answers" if group[0][3] < thresholds.duplicate_min_items
                   else "flagged" for group in groups)
    sample = ScreenSample(centre=centre, totals=totals, counts=counts, halves_use=sample_basics[0],
                          total_use=sample_basics[1], run_limit=run_limit,
                          median_duration=None if median_duration is None else median_duration)

    # ------------------------------------------------------------------------------------------ pass 3
    def third_pass(block: Block, start: int) -> tuple[JudgedRows, dict[str, tuple[np.ndarray, np.ndarray]],
                                                      JudgedSums | None]:
        raw, scales, kc = layout.matrices(block.codes)
        durations, _ = block_durations(block, duration_column)
        rows_at = np.arange(start, start + block.n)
        judged = judge_rows(raw, scales, ids=block_ids(block, spec), sample=sample, thresholds=thresholds,
                            durations=durations, in_row_group=np.isin(rows_at, in_group))
        grams = {}
        for name, part in layout.scales.items():
            span = int(layout.spans[part].max(initial=1))
            # the flagged are few: their cross-products, taken from everyone's, leave the unflagged ones'
            grams[name] = (listwise_gram(kc[:, part], span=span), listwise_gram(kc[judged.flagged][:, part], span=span))
        sums = (None if weight is None else
                JudgedSums.of_block(block, weight, kc, layout.scales, judged.flagged, judged.fired))
        return judged, grams, sums

    fired_counts = dict.fromkeys(FLAG_ORDER, 0)
    together = np.zeros((len(FLAG_ORDER), len(FLAG_ORDER)), dtype=np.int64)
    missing_values: dict[str, int] = {}
    finite = {"p": False, "even_odd": False, "person_total_r": False}
    no_answers = 0
    n_flagged = 0
    alpha_grams: dict[str, list] = {}
    kept: list = []
    judged_sums = JudgedSums()
    summary = _summary(n=n, fired_counts=fired_counts, together=together, n_flagged=0, alpha={}, p=p,
                       run_limit=run_limit, median_duration=median_duration, duration_column=duration_column,
                       duration_unit=duration_unit, not_checked=(), groups=groups, status=status,
                       thresholds=thresholds, weak=sample_basics, notes=(), missing_values={}, held=JsonRows())
    if before_rows is not None:
        before_rows(summary)
    for _, (judged, grams, sums) in _numbered_blocks(passes, third_pass):
        if sums is not None:
            judged_sums = judged_sums.merge(sums)
        matrix = np.column_stack([judged.fired[code] for code in FLAG_ORDER]).astype(np.int64)
        together += matrix.T @ matrix
        for code, count in zip(FLAG_ORDER, matrix.sum(axis=0).tolist(), strict=True):
            fired_counts[code] += int(count)
        n_flagged += int(judged.flagged.sum())
        for key, values in judged.indices.items():
            missing_values[key] = missing_values.get(key, 0) + int(np.isnan(values).sum())
        finite["p"] |= bool(np.isfinite(judged.indices["mahalanobis_pvalue"]).any())
        finite["even_odd"] |= bool(np.isfinite(judged.indices["even_odd"]).any())
        finite["person_total_r"] |= bool(np.isfinite(judged.indices["person_total_r"]).any())
        for item in judged.distance_notes:
            if item.code == "distance-no-answers":
                no_answers += int(item.values["respondents"])
        for name, (all_rows, flagged_rows) in grams.items():
            if name in alpha_grams:
                alpha_grams[name][0] = alpha_grams[name][0] + all_rows
                alpha_grams[name][1] = alpha_grams[name][1] + flagged_rows
            else:
                alpha_grams[name] = [all_rows, flagged_rows]
        if len(kept) < held:
            kept.extend(record for record in judged.records if record["flagged"])
            del kept[held:]
        if sink is not None:
            sink(judged.records)
    notes.extend(centre.notes if centre is not None else first_centre.notes)
    if no_answers and centre is not None:
        notes.append(note("distance-no-answers", respondents=no_answers))
    notes.extend(halves_notes)
    not_checked: list[str] = []
    if duration_column is None:
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-not-checked", flag=FLAG_FAST))
    elif median_duration is None or math.isnan(median_duration):
        not_checked.append(FLAG_FAST)
        notes.append(note("fast-no-durations", flag=FLAG_FAST))
    elif no_time:
        notes.append(note("durations-missing", respondents=no_time))
    from ..stats.screen_rules import FLAG_AGAINST_SAMPLE, FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR, FLAG_UNEVEN_HALVES

    if p < thresholds.duplicate_min_items:
        not_checked.append(FLAG_DUPLICATE_ANSWERS)
        notes.append(note("duplicates-not-checked", flag=FLAG_DUPLICATE_ANSWERS, items=p,
                          min_items=thresholds.duplicate_min_items))
    if not finite["p"]:
        not_checked.extend((FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR))
        notes.append(note("distance-not-checked", flags=(FLAG_FAR_FROM_SAMPLE, FLAG_SOMEWHAT_FAR)))
    if not finite["even_odd"]:
        not_checked.append(FLAG_UNEVEN_HALVES)
        notes.append(note("halves-not-checked", flag=FLAG_UNEVEN_HALVES))
    if not finite["person_total_r"]:
        not_checked.append(FLAG_AGAINST_SAMPLE)
        notes.append(note("profile-not-checked", flag=FLAG_AGAINST_SAMPLE))
    from ..stats.screening import _unique_notes

    weighted_block = None
    alpha = _alpha_change(alpha_grams, n)
    if weight is not None and judged_sums.everyone is not None:
        from ..stats.screen_weighted import weighted_alpha_change, weighted_flag_shares

        alpha = weighted_alpha_change({name: pair[0] for name, pair in judged_sums.scales.items()},
                                      {name: pair[1] for name, pair in judged_sums.scales.items()})
        weighted_block = weighted_flag_shares(
            weight_column=weight, n=n, n_zero_weight=0 if weight_reading is None else weight_reading.n_zero_weight,
            everyone=judged_sums.everyone, flagged=judged_sums.flagged, n_flagged=n_flagged,
            per_flag={code: None if code in not_checked else judged_sums.per_flag[code] for code in FLAG_ORDER})
    summary = _summary(n=n, fired_counts=fired_counts, together=together, n_flagged=n_flagged,
                       alpha=alpha, p=p, run_limit=run_limit,
                       median_duration=median_duration, duration_column=duration_column, duration_unit=duration_unit,
                       not_checked=tuple(not_checked), groups=groups, status=status, thresholds=thresholds,
                       weak=sample_basics, notes=_unique_notes(notes), missing_values=missing_values,
                       held=JsonRows(kept))
    return StreamedScreen(summary=replace(summary, weighted=weighted_block), outcome=outcome)


def _weighted_centre(sums: Any, layout: Layout, *, n_rows: int) -> Any:
    """The Mahalanobis centre of the weighted moments of the rows of positive weight (``sums``:
    :class:`~scalewright.summaries.exact_weighted.ExactWeightedPairwise` of the keyed codes)."""
    from ..stats.mahalanobis import mahalanobis_centre

    means, cov = sums.moments(layout.keyed_lows)
    return mahalanobis_centre(means, cov, n_rows=n_rows, n_basis=sums.n_used)


def _numbered_blocks(passes: Passes, work: Callable[[Block, int], Any]) -> Iterator[tuple[Block, Any]]:
    """The blocks of a pass with each block's position (0-based row index of its first row) given to ``work``.

    Blocks are converted in order on the pool, so the position of a block is the rows of the blocks before
    it: the row number of its first row less the file's first row number.
    """
    start = first_row_number(passes.path)
    yield from passes.run(lambda block: work(block, block.first_row - start))


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


def _alpha_change(grams: dict[str, list], n: int) -> dict[str, dict[str, Any]]:
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


def _summary(*, n: int, fired_counts: dict, together: np.ndarray, n_flagged: int, alpha: dict, p: int,
             run_limit: int, median_duration: float | None, duration_column: str | None, duration_unit: str,
             not_checked: tuple, groups: list, status: tuple, thresholds: ScreenThresholds, weak: tuple,
             notes: tuple, missing_values: dict, held: JsonRows) -> ScreenSummary:
    median = None if median_duration is None or math.isnan(median_duration) else median_duration
    return ScreenSummary(
        n=n, fired_counts=dict(fired_counts), together=together.copy(), n_flagged=n_flagged, alpha_change=alpha,
        n_items=p, long_run_items=run_limit, median_duration=median,
        duration_unit=duration_unit if duration_column is not None else None, not_checked=not_checked,
        duplicate_rows=tuple(tuple(name for _, name, *_ in group) for group in groups), duplicate_status=status,
        thresholds=thresholds, weak_indices=weak, notes=notes, missing_values=dict(missing_values), respondents=held)
