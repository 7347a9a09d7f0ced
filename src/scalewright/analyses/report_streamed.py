"""The report of a file read in blocks: every section the mergeable summaries serve, the rest named as skipped.

:func:`streamed_report` gives the :class:`~scalewright.report.ReportResults` that
:func:`~scalewright.report.build_report` gives for the whole file, from one merged
:class:`~scalewright.summaries.Summary` (see :func:`report_plan`): reliability, score shapes (with their
histograms and box plots, drawn from the score value counts), answer distributions (from the answer
counts), subgroup tallies, the structure, the subgroup comparisons (from each level's score value counts)
and the confirmatory models (from the merged cross-products; with subgroup columns each scale's invariance
from each level's cross-products) are computed by the same functions as the streamed ``reliability``,
``shape``, ``tally``, ``structure``, ``compare`` and ``confirm`` commands. The one section that needs the
rows, the careless-responding screen, comes from three more passes over the file
(:mod:`scalewright.engine.screen_stream`, given as ``screen``); when it is not given it is left out, with
the note code ``stream-section-needs-rows`` in ``notes`` and a sentence among the reading notes.

The scored file (``scores.csv``) is written block by block (:mod:`scalewright.engine.score_stream`).
"""
from __future__ import annotations

import datetime as _dt
from collections.abc import Callable
from typing import Any

from ..notes import Note, note

#: the sections of the report a streamed run leaves out: (note code, what the section is)
SKIPPED_SECTIONS = {"screen": ("stream-section-needs-rows", "careless-responding screen")}


def report_plan(spec: Any, options: Any, *, weight: str | None = None) -> Any:
    """The summaries one pass over the file must gather for :func:`streamed_report` (with ``weight``, the
    survey weight column, their weighted sums too: exact for the fits, as ``confirm`` plans them)."""
    from dataclasses import replace

    from ..engine.plan import plan_for
    from .summarised_confirm import with_whole_file_items
    from .summarised_structure import structure_plan_options

    # the per-level cross-products serve each scale's invariance; the whole-file model's items, its fit. Under
    # em the covariances come from the per-pattern sums beside listwise cross-products (as `reliability`
    # plans them); under pairwise each invariance model takes the listwise cross-products of the complete
    # pattern (see confirm_for_report)
    method = options.missing
    plan = plan_for(spec, cross_products="pairwise" if method == "pairwise" else "listwise", scores=True,
                    by=tuple(options.by), categories=tuple(options.by), patterns=True)
    if len(spec.items) >= 2:
        plan = replace(plan, **structure_plan_options(method, False))
    if weight:
        plan = replace(plan, weight=weight, weighted_exact=True)
    return with_whole_file_items(plan, spec, missing=method)


def answer_distribution_from_counts(scale: Any, answers: Any, *, min_cell: int = 5) -> Any:
    """:func:`~scalewright.stats.tally.answer_distribution` of a scale's items from their answer counts
    (``AnswerCounts``: rows per item and answer code), as its counting route builds it."""
    from ..stats.tally import AnswerDistribution, tally_from_counts

    levels = [int(v) for v in scale.response.levels]
    label_map = {int(k): str(v) for k, v in (scale.response.labels or {}).items()}
    level_labels = {str(v): label_map.get(v, str(v)) for v in levels}
    tallies = tuple(tally_from_counts({str(v): int(answers.tally[j, i]) for i, v in enumerate(levels)},
                                      n_total=answers.n_rows, n_missing=int(answers.n_rows - answers.tally[j].sum()),
                                      column=name, ordered=True, labels=level_labels, min_cell=min_cell)
                    for j, name in enumerate(scale.items))
    return AnswerDistribution(items=tallies, levels=tuple(str(v) for v in levels),
                              labels=tuple(label_map.get(v, str(v)) for v in levels))


def skipped_notes() -> tuple[Note, ...]:
    return tuple(note(code, section=section, title=title) for section, (code, title) in SKIPPED_SECTIONS.items())


def streamed_report(spec: Any, summary: Any, outcome: Any, *, info: Any, options: Any, score_table: Any,
                    input_notes: tuple[str, ...] = (), progress: Callable[[str], None] | None = None,
                    today: _dt.date | None = None, screen: Any = None, weight: str | None = None) -> Any:
    """The report's results from merged summaries (``outcome``: the checked reading of the file;
    ``score_table``: the counts of the scored file already written; ``screen``: the screen of the file
    read in blocks, :class:`~scalewright.stats.screen_blocks.ScreenSummary`, or None to leave it out).

    With ``weight`` (the plan's survey weight column, :func:`report_plan`) the report of the whole-file
    route with weights: the structure, the confirmatory models and the screen weighted in place, the
    weighted blocks beside the others (:mod:`.report_streamed_weighted`)."""
    from ..present.messages import describe
    from ..report import STEPS, ReportResults, ScaleFindings
    from .summarised import reliability_from_summaries, shape_from_summaries, structure_from_summaries, tally_of_column
    from .summarised_groups import compare_from_summaries

    step = progress or (lambda _: None)
    step(STEPS[1])
    reliability = reliability_from_summaries(spec, summary, by=options.by, confidence_level=options.confidence_level,
                                             pairwise=options.missing == "pairwise", min_group=options.min_group,
                                             missing=options.missing)
    step(STEPS[2])
    shapes = shape_from_summaries(spec, summary, by=options.by, min_group=options.min_group, seed=options.seed)["scales"]
    step(STEPS[4])
    answers = {name: answer_distribution_from_counts(scale, summary["scales"][name]["answers"],
                                                     min_cell=options.min_cell)
               for name, scale in spec.scales.items()}
    group_tallies = tuple(tally_of_column(spec, summary, column, min_cell=options.min_cell) for column in options.by)
    step(STEPS[5])
    weighted_structure = None
    if len(spec.items) < 2:
        structure = None
    elif weight:
        from .summarised_structure import weighted_structure_from_summaries

        structure, weighted_structure = weighted_structure_from_summaries(
            spec, summary, weight_column=weight, seed=options.seed, iterations=options.iterations)
    else:
        structure = structure_from_summaries(spec, summary, missing=options.missing, seed=options.seed,
                                             iterations=options.iterations)
    step(STEPS[3])
    by_column = compare_from_summaries(spec, summary, by=options.by, min_cell=options.min_cell,
                                       confidence_level=options.confidence_level)
    confirm = confirm_for_report(spec, summary, outcome.n, options, weight=weight)
    findings = {name: ScaleFindings(name=name, scale=scale, scores=score_table.scales[name],
                                    reliability=reliability[name], shape=shapes[name],
                                    comparisons=tuple(by_column[column][i] for column in options.by),
                                    answers=answers[name])
                for i, (name, scale) in enumerate(spec.scales.items())}
    skipped = skipped_notes() if screen is None else ()
    notes: list[Note] = list(skipped)
    if structure is None:
        notes.append(note("report-structure-not-analysed"))
    missing_texts = _missing_texts_note(spec)
    weighted = None
    if weight:
        from .report_streamed_weighted import weighted_report_from_summaries

        weighted = weighted_report_from_summaries(
            spec, summary, weight_column=weight, n_rows=outcome.n, by=options.by,
            confidence_level=options.confidence_level, min_group=options.min_group, min_cell=options.min_cell,
            shapes=shapes, group_tallies=group_tallies, structure=weighted_structure,
            screen=None if screen is None else screen.weighted)
    return ReportResults(spec=spec, info=info, options=options, n_rows=outcome.n, n_excluded=0,
                         reading=outcome.reading_summary(),
                         input_notes=(*input_notes, missing_texts, *(describe(n) for n in skipped)),
                         score_table=score_table, scales=findings, structure=structure, screen=screen,
                         group_tallies=group_tallies, created=(today or _dt.date.today()).isoformat(),
                         notes=tuple(notes), confirm=confirm, weighted=weighted)


def confirm_for_report(spec: Any, summary: Any, n_rows: int, options: Any, *, weight: str | None = None) -> Any:
    """The whole-file report's ``_confirm`` from summaries: the models per scale and of the whole file, and with
    subgroup columns each scale's invariance (not the whole-file model's: that is for ``confirm --by``); with
    ``weight`` the weighted fits, and no invariance (its multi-group models are not weighted: said so)."""
    from dataclasses import replace

    from ..stats.cfa_model import factor_model
    from ..summaries import ListwiseCrossProducts
    from .summarised_confirm import confirm_from_summaries
    from .summarised_groups import invariance_from_summaries

    analysis = confirm_from_summaries(spec, summary, n_rows=n_rows, missing=options.missing,
                                      confidence_level=options.confidence_level, weight_column=weight)
    if not options.by:
        return analysis
    if weight:
        return replace(analysis, notes=(*analysis.notes, note("invariance-not-weighted", by=tuple(options.by))))

    def listwise_of(part: Any, name: str) -> Any:
        # the invariance models take each level's complete rows under every method, as on the whole-file route;
        # under pairwise the plan keeps pairwise cross-products, and the complete pattern holds the listwise ones
        if options.missing == "pairwise":
            return ListwiseCrossProducts.from_patterns(part[name]["patterns"])
        return part[name]["cross_products"]

    targets = {name: factor_model({name: tuple(scale.items)}) for name, scale in spec.scales.items()}
    invariance = invariance_from_summaries(spec, summary, targets, by=options.by, min_group=max(options.min_group, 30),
                                           cross_products_of=listwise_of)
    return replace(analysis, invariance=invariance)


def _missing_texts_note(spec: Any) -> str:
    """The whole-file reader's note on which texts were read as "no answer" (``Responses.missing_texts_note``)."""
    from ..data import Responses

    return Responses.missing_texts_note(None, spec)  # type: ignore[arg-type]  # it reads the scale file only


__all__ = ["SKIPPED_SECTIONS", "answer_distribution_from_counts", "confirm_for_report", "report_plan", "skipped_notes", "streamed_report"]
