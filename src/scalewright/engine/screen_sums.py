"""What each of the screen's three passes takes from one block of rows, as sums that merge (see
:mod:`.screen_stream` for the passes).

Both routes that screen a file they cannot hold use these: the file read in blocks on one machine
(:mod:`.screen_stream`) and a dataset's partitions on Dask workers (:mod:`.screen_dask`). A block's sums
merged with the next block's, in file order, are the sums of the two; what cannot be summed (the values
whose exact medians are wanted, the hashes of ids and of answer rows) is handed to the caller beside the
sums, who spills it to disk or sends it on. A row's place in the whole file (its 0-based index, and its
number when the file has no id column) comes from the block's row number, ``base`` (the number of the
row of index 0) and ``shift``: for a dataset read as if it were one file, a partition's base is its own
first row number less the rows of the partitions before it.
"""
from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..answer_codes import MISSING
from ..results import JsonRows
from ..stats.coded import listwise_gram, pairwise_gram
from ..stats.screen_blocks import JudgedRows, ScreenSample, judge_rows
from ..stats.screen_rules import FLAG_ORDER, ScreenThresholds
from .blocks import Block
from .reading import ReadingCounts
from .row_hash import answer_row_hashes
from .screen_passes import Layout, block_durations, block_ids
from .screen_weighted import JudgedSums, first_pass_sums, set_aside_sums


@dataclass(frozen=True)
class FirstValues:
    """What the first pass cannot sum: each row's even-odd r and usable time (their medians), and the
    hashes of its answers (rows seen twice) and of its id (ids seen twice)."""

    halves: np.ndarray | None
    timed: np.ndarray | None
    row_hashes: np.ndarray
    id_hashes: tuple[np.ndarray, ...]


@dataclass(frozen=True)
class FirstSums:
    """The first pass's sums: reading counts (without the id hashes), pairwise cross-products of the keyed
    codes, answered items per row, the duration column's checks and, weighted, the weights' sums."""

    reading: ReadingCounts
    gram: np.ndarray
    answered: np.ndarray
    halves_notes: tuple = ()
    scales_used: int = 0
    #: the first cell of the duration column that is not a number: (file, row, value), or None
    bad_duration: tuple | None = None
    negative: bool = False
    no_time: int = 0
    weight_reading: Any = None
    weighted: Any = None

    @staticmethod
    def of_block(block: Block, layout: Layout, *, thresholds: ScreenThresholds, duration_column: str | None,
                 weight: str | None) -> tuple[FirstSums, FirstValues]:
        from ..stats.careless_indices import even_odd_consistency, missing_share

        raw, scales, kc = layout.matrices(block.codes)
        many_missing = missing_share(raw) > thresholds.missing_share_max
        durations, bad = block_durations(block, duration_column)
        timed = None if durations is None else np.where(many_missing, np.nan, durations)
        halves = even_odd_consistency(scales) if scales else None
        weight_reading, weighted = (None, None) if weight is None else first_pass_sums(block, weight, kc)
        sums = FirstSums(
            reading=replace(block.reading, id_hashes=()), gram=pairwise_gram(kc, span=int(layout.spans.max(initial=1))),
            answered=np.bincount((kc != MISSING).sum(axis=1), minlength=kc.shape[1] + 1),
            halves_notes=() if halves is None else halves.notes, scales_used=0 if halves is None else halves.scales_used,
            bad_duration=None if bad is None else (block.file, *bad),
            negative=bool(timed is not None and (timed[np.isfinite(timed)] < 0).any()),
            no_time=0 if durations is None else int((~np.isfinite(durations)).sum()),
            weight_reading=weight_reading, weighted=weighted)
        values = FirstValues(halves=None if halves is None else halves.r_halves, timed=timed,
                             row_hashes=answer_row_hashes(block.codes), id_hashes=block.reading.id_hashes)
        return sums, values

    def merge(self, later: FirstSums) -> FirstSums:
        """These sums and those of the rows after them."""
        def joined(a: Any, b: Any) -> Any:
            return b if a is None else a if b is None else a.merge(b)

        return FirstSums(
            reading=self.reading.merge(later.reading), gram=self.gram + later.gram,
            answered=self.answered + later.answered,
            halves_notes=later.halves_notes if later.scales_used else self.halves_notes,
            scales_used=later.scales_used or self.scales_used, bad_duration=self.bad_duration or later.bad_duration,
            negative=self.negative or later.negative, no_time=self.no_time + later.no_time,
            weight_reading=joined(self.weight_reading, later.weight_reading),
            weighted=joined(self.weighted, later.weighted))


@dataclass(frozen=True)
class SecondSettings:
    """What the second pass measures each row against (from the first pass's sums)."""

    layout: Layout
    first_centre: Any
    candidates: np.ndarray       # the answer-row hashes seen more than once (sorted)
    thresholds: ScreenThresholds
    run_limit: int
    weight: str | None = None


@dataclass(frozen=True)
class SecondSums:
    """The second pass's sums: the pairwise cross-products of the rows the first distance sets aside (and
    their weighted moments), and the rows whose hash came twice, by their answers: (index in the file, id,
    long run, items answered)."""

    aside_gram: np.ndarray | None = None
    n_aside: int = 0
    weighted_aside: Any = None
    twins: dict[bytes, list[tuple[int, str, bool, int]]] = field(default_factory=dict)

    @staticmethod
    def of_block(block: Block, settings: SecondSettings, spec: Any, *, base: int, shift: int = 0) -> SecondSums:
        """``base``: the row number of the file's row of index 0 (``block.first_row - base`` is the block's
        first index); ``shift``: added to the row numbers used as ids (see the module notes)."""
        from ..stats.careless_indices import longstring
        from ..stats.mahalanobis import distances_from_centre

        layout, thresholds = settings.layout, settings.thresholds
        raw, scales, kc = layout.matrices(block.codes)
        aside_gram, n_aside, weighted_aside = None, 0, None
        if settings.first_centre.ok:
            keyed = np.hstack(list(scales.values()))
            first = distances_from_centre(keyed, settings.first_centre)
            with np.errstate(invalid="ignore"):
                reference = (longstring(raw) < settings.run_limit) & ~(first.p < thresholds.mahalanobis_p_weak)
            # the rows set aside are few: their cross-products, taken from everyone's, leave the reference's
            aside_gram = pairwise_gram(kc[~reference], span=int(layout.spans.max(initial=1)))
            n_aside = int((~reference).sum())
            if settings.weight is not None:
                weighted_aside = set_aside_sums(block, settings.weight, kc, reference)
        twins: dict[bytes, list[tuple[int, str, bool, int]]] = {}
        candidates = settings.candidates
        if candidates.size:
            hashes = answer_row_hashes(block.codes)
            at = np.minimum(np.searchsorted(candidates, hashes), candidates.size - 1)
            chosen = np.flatnonzero(candidates[at] == hashes)
            if chosen.size:
                part = raw[chosen]
                names = block_ids(block, spec, shift=shift)
                start = block.first_row - base
                keys = [bytes(row) for row in np.ascontiguousarray(block.codes[chosen])]
                runs = (longstring(part) >= settings.run_limit).tolist()
                counts = (raw.shape[1] - np.isnan(part).sum(axis=1)).tolist()
                for position, key, run, count in zip(chosen.tolist(), keys, runs, counts, strict=True):
                    twins.setdefault(key, []).append((start + position, names[position], run, int(count)))
        return SecondSums(aside_gram=aside_gram, n_aside=n_aside, weighted_aside=weighted_aside, twins=twins)

    def merge(self, later: SecondSums) -> SecondSums:
        twins = {key: list(rows) for key, rows in self.twins.items()}
        for key, rows in later.twins.items():
            twins.setdefault(key, []).extend(rows)
        gram = (later.aside_gram if self.aside_gram is None else self.aside_gram if later.aside_gram is None
                else self.aside_gram + later.aside_gram)
        weighted = (later.weighted_aside if self.weighted_aside is None else self.weighted_aside
                    if later.weighted_aside is None else self.weighted_aside.merge(later.weighted_aside))
        return SecondSums(aside_gram=gram, n_aside=self.n_aside + later.n_aside, weighted_aside=weighted, twins=twins)


@dataclass(frozen=True)
class ThirdSettings:
    """What the third pass judges each row against."""

    layout: Layout
    sample: ScreenSample
    in_group: np.ndarray         # 0-based indices in the file of the rows with an identical twin (sorted)
    thresholds: ScreenThresholds
    duration_column: str | None = None
    weight: str | None = None
    held: int = 1000


@dataclass(frozen=True)
class ThirdSums:
    """The third pass's sums: flag counts and overlaps, flagged respondents, the indices that could not be
    computed, the listwise cross-products of each scale (everyone's, the flagged's), the weighted sums, and
    the first ``held`` flagged records."""

    fired_counts: dict[str, int] = field(default_factory=lambda: dict.fromkeys(FLAG_ORDER, 0))
    together: np.ndarray = field(default_factory=lambda: np.zeros((len(FLAG_ORDER), len(FLAG_ORDER)), dtype=np.int64))
    n_flagged: int = 0
    missing_values: dict[str, int] = field(default_factory=dict)
    finite: dict[str, bool] = field(default_factory=lambda: dict.fromkeys(("p", "even_odd", "person_total_r"), False))
    no_answers: int = 0
    alpha_grams: dict[str, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)
    judged_sums: JudgedSums = field(default_factory=JudgedSums)
    kept: tuple[dict, ...] = ()
    held: int = 1000

    @staticmethod
    def of_block(block: Block, settings: ThirdSettings, spec: Any, *, base: int,
                 shift: int = 0) -> tuple[JudgedRows, ThirdSums]:
        """The block's judged rows and their sums (``base`` and ``shift`` as in :meth:`SecondSums.of_block`)."""
        layout = settings.layout
        raw, scales, kc = layout.matrices(block.codes)
        durations, _ = block_durations(block, settings.duration_column)
        start = block.first_row - base
        rows_at = np.arange(start, start + block.n)
        judged = judge_rows(raw, scales, ids=block_ids(block, spec, shift=shift), sample=settings.sample,
                            thresholds=settings.thresholds, durations=durations,
                            in_row_group=np.isin(rows_at, settings.in_group))
        grams = {}
        for name, part in layout.scales.items():
            span = int(layout.spans[part].max(initial=1))
            # the flagged are few: their cross-products, taken from everyone's, leave the unflagged ones'
            grams[name] = (listwise_gram(kc[:, part], span=span), listwise_gram(kc[judged.flagged][:, part], span=span))
        weighted = (JudgedSums() if settings.weight is None else
                    JudgedSums.of_block(block, settings.weight, kc, layout.scales, judged.flagged, judged.fired))
        matrix = np.column_stack([judged.fired[code] for code in FLAG_ORDER]).astype(np.int64)
        no_answers = sum(int(item.values["respondents"]) for item in judged.distance_notes
                         if item.code == "distance-no-answers")
        sums = ThirdSums(
            fired_counts=dict(zip(FLAG_ORDER, (int(c) for c in matrix.sum(axis=0).tolist()), strict=True)),
            together=matrix.T @ matrix, n_flagged=int(judged.flagged.sum()),
            missing_values={key: int(np.isnan(values).sum()) for key, values in judged.indices.items()},
            finite={"p": bool(np.isfinite(judged.indices["mahalanobis_pvalue"]).any()),
                    "even_odd": bool(np.isfinite(judged.indices["even_odd"]).any()),
                    "person_total_r": bool(np.isfinite(judged.indices["person_total_r"]).any())},
            no_answers=no_answers, alpha_grams=grams, judged_sums=weighted,
            kept=tuple(record for record in judged.records if record["flagged"])[:settings.held], held=settings.held)
        return judged, sums

    def merge(self, later: ThirdSums) -> ThirdSums:
        grams = dict(self.alpha_grams)
        for name, (everyone, flagged) in later.alpha_grams.items():
            grams[name] = (everyone, flagged) if name not in grams else (grams[name][0] + everyone,
                                                                         grams[name][1] + flagged)
        missing = dict(self.missing_values)
        for key, count in later.missing_values.items():
            missing[key] = missing.get(key, 0) + count
        return ThirdSums(
            fired_counts={code: self.fired_counts.get(code, 0) + later.fired_counts.get(code, 0) for code in FLAG_ORDER},
            together=self.together + later.together, n_flagged=self.n_flagged + later.n_flagged,
            missing_values=missing, finite={key: value or later.finite[key] for key, value in self.finite.items()},
            no_answers=self.no_answers + later.no_answers, alpha_grams=grams,
            judged_sums=self.judged_sums.merge(later.judged_sums),
            kept=(*self.kept, *later.kept)[:self.held], held=self.held)

    def held_records(self) -> JsonRows:
        return JsonRows(list(self.kept))


__all__ = ["FirstSums", "FirstValues", "SecondSettings", "SecondSums", "ThirdSettings", "ThirdSums"]
