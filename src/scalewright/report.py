"""Everything a report needs, computed once: every analysis of every scale, overall and by subgroup.

:func:`build_report` only orchestrates library calls (scoring, then the ``stats`` modules) and returns one
frozen :class:`ReportResults`; it renders nothing and writes nothing. Its ``to_dict()`` is ``results.json``:
one block per analysis, each with the same keys as that analysis' own command.
"""
from __future__ import annotations

import datetime as _dt
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import partial
from typing import TYPE_CHECKING, Any

from . import __version__
from .analyses.subgroup_columns import DEFAULT_MAX_LEVELS
from .errors import UsageError
from .notes import Note, note
from .present.document import InputInfo, envelope
from .results import to_jsonable
from .seeds import DEFAULT_SEED  # one default for every command and the report

if TYPE_CHECKING:
    from .analyses.confirm import ConfirmAnalysis
    from .analyses.weighted_report import WeightedReport
    from .responses import Responses
    from .scoring import ScaleScores, ScoreTable
    from .spec_model import Scale, ScaleSpec
    from .stats.groups import Comparison
    from .stats.reliability_groups import ScaleReliabilityReport
    from .stats.screening import ScreenResult
    from .stats.shape import ShapeReport
    from .stats.structure import StructureResult
    from .stats.tally import AnswerDistribution, Tally

#: steps :func:`build_report` announces to its progress callback
STEPS = ("scoring", "reliability", "score shapes", "subgroup comparisons", "answer distributions",
         "structure", "data quality")


@dataclass(frozen=True)
class ReportOptions:
    """The choices a report was built with (all shown in its provenance)."""

    by: tuple[str, ...] = ()
    seed: int = DEFAULT_SEED
    iterations: int = 100
    confidence_level: float = 0.95
    min_group: int = 10
    min_cell: int = 5
    lenient: bool = False
    exclude: str | None = None
    decimals: int = 2
    duration_column: str | None = None
    missing: str = "listwise"
    duration_unit: str = "s"
    max_levels: int = DEFAULT_MAX_LEVELS

    def __post_init__(self) -> None:
        from .stats.missing import check_method

        check_method(self.missing)
        if not 0 < self.confidence_level < 1:
            raise UsageError(f"confidence level must lie between 0 and 1, got {self.confidence_level}")
        if self.iterations < 1:
            raise UsageError(f"parallel analysis needs at least 1 iteration, got {self.iterations}")
        if self.min_group < 2 or self.min_cell < 1:
            raise UsageError("the smallest subgroup must be at least 2 and the smallest cell at least 1")

    def to_dict(self) -> dict[str, Any]:
        return {"by": list(self.by), "seed": self.seed, "parallel_iterations": self.iterations,
                "confidence_level": self.confidence_level, "min_group": self.min_group, "min_cell": self.min_cell,
                "lenient": self.lenient, "exclude": self.exclude, "decimals": self.decimals,
                "duration_column": self.duration_column, "duration_unit": self.duration_unit,
                "max_levels": self.max_levels, "missing": self.missing}


@dataclass(frozen=True, eq=False)
class ScaleFindings:
    """Every result about one scale. A result is None when its analysis could not be run (see ``notes``)."""

    name: str
    scale: Scale
    scores: ScaleScores
    reliability: ScaleReliabilityReport | None
    shape: ShapeReport | None               # overall and one SubgroupShapes per --by column
    comparisons: tuple[Comparison, ...]     # one per --by column (Holm across scales)
    answers: AnswerDistribution | None      # of the answer codes as given
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class FigureInputs:
    """What the figures of the scales are drawn from, ready before the other analyses: each scale's findings
    with its score shapes and answers (reliability and comparisons, which no figure shows, left out)."""

    scales: Mapping[str, ScaleFindings]


@dataclass(frozen=True, eq=False)
class ReportResults:
    """One finished set of results: what :func:`build_report` returns and every renderer reads."""

    spec: ScaleSpec
    info: InputInfo
    options: ReportOptions
    n_rows: int
    n_excluded: int
    reading: dict[str, Any]
    input_notes: tuple[str, ...]
    score_table: ScoreTable
    scales: Mapping[str, ScaleFindings]
    structure: StructureResult | None
    screen: ScreenResult | None
    group_tallies: tuple[Tally, ...]
    created: str
    confirm: ConfirmAnalysis | None = None  # with invariance when --by is given
    version: str = __version__
    notes: tuple[Note, ...] = field(default=())  # codes with values, worded by present/messages
    #: with survey weights: analyses.weighted_report.WeightedReport (structure, confirm, screen weighted in place)
    weighted: WeightedReport | None = None

    @property
    def title(self) -> str:
        return self.spec.title or "Scale report"

    # --- the blocks of results.json, each built from the same to_dict() calls as its own command ---------

    def reliability_block(self) -> dict[str, Any]:
        from .present.confirm import confirmatory_summary

        # as the reliability command: each scale's confirmatory one-factor model beside its numbers
        models = self.confirm.models if self.confirm is not None else {}
        return {"scales": {name: {**f.reliability.to_dict(),
                                  **({"confirmatory": confirmatory_summary(models[name])} if name in models else {})}
                           for name, f in self.scales.items() if f.reliability is not None}}

    def shape_block(self) -> dict[str, Any]:
        return {"scales": {name: f.shape.to_dict() for name, f in self.scales.items() if f.shape is not None}}

    def compare_block(self) -> dict[str, Any]:
        from .present.invariance import invariance_record
        from .stats.subgroups import comparison_blocks

        # as the compare command: each scale's invariance verdict beside its mean comparison
        invariance = self.confirm.invariance if self.confirm is not None else {}
        return {"scales": {name: comparison_blocks(f.comparisons, {
            c.column: {"invariance": invariance_record(invariance[c.column].get(name))}
            for c in f.comparisons if c.column in invariance}) for name, f in self.scales.items() if f.comparisons}}

    def to_dict(self) -> dict[str, Any]:
        body: dict[str, Any] = {
            "title": self.title,
            "created": self.created,
            "reading": {**self.reading, "excluded": self.n_excluded},
            "scores": self.score_table.to_dict(),
            "reliability": self.reliability_block(),
            "shape": self.shape_block(),
            "compare": self.compare_block(),
            "answers": {name: f.answers.to_dict() for name, f in self.scales.items() if f.answers is not None},
            "structure": None if self.structure is None else self.structure.to_dict(),
            "screen": None if self.screen is None else self.screen.to_dict(),
            "tally": {t.column: t.to_dict() for t in self.group_tallies},
            "confirm": None if self.confirm is None else self.confirm.to_dict(),
            "notes": list(self.notes),
        }
        if self.weighted is not None:
            _add_weighted_blocks(body, self.weighted)
        return to_jsonable(envelope("report", self.info, body, options=self.options.to_dict(),
                                    notes=list(self.input_notes)))


def _add_weighted_blocks(body: dict[str, Any], weighted: WeightedReport) -> None:
    """The weighted blocks of results.json, where each command puts them (beside the unweighted block)."""
    body["weighted"] = {**weighted.design, "notes": list(weighted.notes)}
    for name, blocks in weighted.reliability.items():
        record = body["reliability"]["scales"].get(name)
        if record is None:
            continue
        record["weighted"] = blocks["all"]
        for column, levels in blocks["by"].items():
            for level, block in levels.items():
                record.setdefault("by", {}).setdefault(column, {}).setdefault(level, {})["weighted"] = block
    for name, blocks in weighted.shapes.items():
        record = body["shape"]["scales"].get(name)
        if record is None:
            continue
        record["all"]["weighted"] = blocks["all"].to_dict()
        for column, levels in blocks["by"].items():
            for level, block in levels.items():
                record["by"][column][level]["weighted"] = block.to_dict()
    body["scores"]["weighted"] = {name: summary.to_dict() for name, summary in weighted.scores.items()}
    for name, by_column in weighted.comparisons.items():
        for column, comparison in by_column.items():
            body["compare"]["scales"].setdefault(name, {"by": {}})["by"].setdefault(column, {})["weighted"] = \
                comparison.to_dict()
    for column, shares in weighted.tallies.items():
        body["tally"][column]["weighted"] = shares.to_dict()
    if weighted.structure is not None and body.get("structure") is not None:
        body["structure"]["weighted"] = weighted.structure
    if weighted.screen is not None and body.get("screen") is not None:
        body["screen"]["summary"]["weighted"] = weighted.screen


# ------------------------------------------------------------------------------------------------ building

def _no_progress(step: str) -> None:
    return None


def _reliability(spec: ScaleSpec, responses: Responses, options: ReportOptions) -> dict[str, ScaleReliabilityReport]:
    # the reliability command's own (click-free) analysis function, so both give the same numbers
    from .analyses.reliability import analyse_reliability

    return analyse_reliability(spec, responses, by=options.by, confidence_level=options.confidence_level,
                               min_group=options.min_group, missing=options.missing)


def _shape(spec: ScaleSpec, responses: Responses, options: ReportOptions,
           scores: ScoreTable) -> dict[str, ShapeReport]:
    # the shape command's own (click-free) analysis function, on the scores already made
    from .analyses.shape import analyse_shape

    return analyse_shape(spec, responses, by=options.by, min_group=options.min_group, seed=options.seed,
                         scores=scores)["scales"]


def _weighted(responses: Responses) -> bool:
    return getattr(responses, "weights", None) is not None


def _confirm(spec: ScaleSpec, responses: Responses, options: ReportOptions) -> ConfirmAnalysis:
    # the confirm command's own analysis: models per scale and of the whole file, invariance by --by columns
    from .analyses.confirm import analyse_confirm
    from .analyses.invariance import analyse_invariance

    analysis = analyse_confirm(spec, responses, confidence_level=options.confidence_level, missing=options.missing,
                               weighted=_weighted(responses))
    if options.by and _weighted(responses):
        from dataclasses import replace

        # multi-group models are not weighted (as `confirm --by`): no invariance verdicts, said so
        return replace(analysis, notes=(*analysis.notes, note("invariance-not-weighted", by=tuple(options.by))))
    if options.by:
        # per scale only: the verdicts stand beside each scale's mean comparison (the whole-file multi-group
        # models are for `confirm --by`)
        analysis = analyse_invariance(spec, responses, analysis, by=options.by, min_group=max(options.min_group, 30),
                                      whole_file=False)
    return analysis


def _structure(spec: ScaleSpec, responses: Responses, options: ReportOptions) \
        -> StructureResult | tuple[StructureResult, dict[str, Any]]:
    # the structure command's own analysis: each item once, matched to its smallest scale
    from .analyses.structure import analyse_structure_of_file

    if _weighted(responses):
        from .analyses.weighted_structure import weighted_structure_of_file

        return weighted_structure_of_file(spec, responses, seed=options.seed, iterations=options.iterations)

    return analyse_structure_of_file(spec, responses, seed=options.seed, iterations=options.iterations,
                                     missing=options.missing)


def _screen(spec: ScaleSpec, responses: Responses, options: ReportOptions) -> ScreenResult:
    # the screen command's own analysis function: items in questionnaire order, durations if named

    from .analyses.screen import analyse_screen
    from .concurrency import one_blas_thread

    # in a process of its own beside this one's work: one BLAS thread each, not two processes' threads on the
    # same cores
    with one_blas_thread():
        return analyse_screen(spec, responses, duration_column=options.duration_column,
                              duration_unit=options.duration_unit)


def check_columns(responses: Responses, options: ReportOptions) -> None:
    """Raise ``DataError`` (naming the closest column) when a subgroup or duration column is not in the data, and
    ``UsageError`` when a subgroup column has more than ``options.max_levels`` levels or survey weights come
    with a missing-answer method other than listwise."""
    from .analyses.subgroup_columns import check_level_counts

    for column in (*options.by, *([options.duration_column] if options.duration_column else [])):
        responses.column(column)
    check_level_counts(responses, options.by, max_levels=options.max_levels)
    if _weighted(responses) and options.missing != "listwise":
        raise UsageError(f"survey weights work with --missing listwise only (the weighted covariance of complete "
                         f"answers), not {options.missing}")


def build_report(spec: ScaleSpec, responses: Responses, *, info: InputInfo, options: ReportOptions = ReportOptions(),
                 input_notes: Sequence[str] = (), n_excluded: int = 0,
                 progress: Callable[[str], None] = _no_progress,
                 today: _dt.date | None = None,
                 figures_from: Callable[[FigureInputs], None] | None = None) -> ReportResults:
    """Run every analysis of a report on one data set.

    Parameters
    ----------
    spec : scalewright.spec_model.ScaleSpec
        The validated scale file.
    responses : scalewright.responses.Responses
        The clean answers (respondents set aside with ``--exclude`` already removed).
    info : InputInfo
        Names and SHA-256 digests of the input files (for the provenance).
    options : ReportOptions
        Subgroup columns, seed, parallel-analysis iterations, confidence level, smallest group and cell.
    input_notes : sequence of str
        What reading the inputs changed (shown in the data-quality section).
    n_excluded : int
        Respondents set aside before the analysis.
    progress : callable
        Called with the name of each step of :data:`STEPS` as it starts.
    today : datetime.date, optional
        The report's date (default: today).
    figures_from : callable, optional
        Called with the :class:`FigureInputs` as soon as the scores' shapes and the answers are known (the
        other analyses still running), so the figures of the scales can be drawn meanwhile.

    Returns
    -------
    ReportResults
    """
    from .analyses.compare import analyse_compare
    from .analyses.tally import answer_distributions, tally_columns
    from .concurrency import start_in_process
    from .scoring import score_scales

    check_columns(responses, options)
    progress(STEPS[0])
    score_table = score_scales(responses, spec)

    # the comparisons (many small tests) and, with subgroup columns, the
    # confirmatory models (many small invariance fits) run in processes of their own meanwhile; their results
    # are asked for last. Without subgroups the models are a few fits on large matrix products: in this process
    confirm_work = partial(_confirm, spec, responses, options)
    # the models need no scipy.stats: their process starts first, while this one imports it (about a second of
    # CPU) once for itself and the comparisons' process
    confirmed = start_in_process(confirm_work) if options.by else confirm_work
    import scipy.stats  # noqa: F401

    compared = start_in_process(partial(analyse_compare, spec, responses, by=options.by, min_cell=options.min_cell,
                                        confidence_level=options.confidence_level, scores=score_table))
    # the screen (a row per respondent: large matrix products on a large file) beside reliability and structure
    screened = start_in_process(partial(_screen, spec, responses, options)) if responses.n else None

    progress(STEPS[1])
    # reliability (threads of its own) too, so that the figures of the scales can start from their shapes
    reliable = start_in_process(partial(_reliability, spec, responses, options))

    progress(STEPS[2])
    shapes = _shape(spec, responses, options, score_table)

    progress(STEPS[3])
    progress(STEPS[4])
    answers = answer_distributions(spec, responses=responses, min_cell=options.min_cell)
    group_tallies = tally_columns(options.by, responses=responses, min_cell=options.min_cell)
    if figures_from is not None:
        figures_from(FigureInputs(scales={
            name: ScaleFindings(name=name, scale=scale, scores=score_table.scales[name], reliability=None,
                                shape=shapes[name], comparisons=(), answers=answers[name])
            for name, scale in spec.scales.items()}))

    progress(STEPS[5])
    analysed = _structure(spec, responses, options) if len(spec.items) >= 2 else None
    weighted_structure = None
    structure: StructureResult | None
    if isinstance(analysed, tuple):  # weighted: the result and its weighted-block keys
        structure, weighted_structure = analysed
    else:
        structure = analysed

    progress(STEPS[6])
    reliability = reliable()
    screen = screened() if screened is not None else None
    by_column = compared()
    comparisons: dict[str, list[Comparison]] = {name: [by_column[column][i] for column in options.by]
                                                for i, name in enumerate(spec.scales)}
    confirm = confirmed()
    weighted = None
    if _weighted(responses):
        from dataclasses import replace

        from .analyses.screen import weighted_screen_summary
        from .analyses.weighted_report import weighted_report

        weighted = weighted_report(spec, responses, by=options.by, confidence_level=options.confidence_level,
                                   min_group=options.min_group, min_cell=options.min_cell, score_table=score_table,
                                   shapes=shapes, group_tallies=group_tallies)
        weighted = replace(weighted, structure=weighted_structure,
                           screen=None if screen is None else weighted_screen_summary(screen, responses.weights))

    findings = {
        name: ScaleFindings(name=name, scale=scale, scores=score_table.scales[name], reliability=reliability[name],
                            shape=shapes[name], comparisons=tuple(comparisons[name]),
                            answers=answers[name])
        for name, scale in spec.scales.items()
    }
    notes: list[Note] = []
    if structure is None:
        notes.append(note("report-structure-not-analysed"))
    return ReportResults(spec=spec, info=info, options=options, n_rows=responses.n, n_excluded=n_excluded,
                         reading=responses.reading_summary(),
                         input_notes=(*input_notes, responses.missing_texts_note(spec)),
                         score_table=score_table, scales=findings, structure=structure, screen=screen,
                         group_tallies=group_tallies, created=(today or _dt.date.today()).isoformat(),
                         notes=tuple(notes), confirm=confirm, weighted=weighted)
