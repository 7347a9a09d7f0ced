"""`scalewright compare`: subgroup differences per scale, with tests, effect sizes and post-hoc pairs."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

import click

from ..errors import UsageError
from .common import (
    by_option,
    emit,
    input_options,
    load_inputs,
    output_options,
    resolve_by,
    scales_option,
    weight_option,
)
from .engine_route import StreamedLevels, dataset_argument, engine_options, first_needing_rows, load_summaries


@click.command("compare", epilog=("Examples:\n\n\b\n"
                  "  scalewright compare survey.csv --scales survey.yaml --by site\n"
                  "  scalewright compare survey.csv -s survey.yaml --by shift --format md --out compare.md\n"))
@dataset_argument
@scales_option
@by_option
@click.option("--student", is_flag=True,
              help="Assume equal variances: Student's t / classic F with Tukey pairs instead of Welch's versions.")
@click.option("--min-cell", type=click.IntRange(min=1), default=5, show_default=True,
              help="Groups with fewer respondents are shown as '< N' and left out of the tests.")
@weight_option
@input_options
@engine_options
@output_options
def compare(data: Path, scales: Path, by: tuple[str, ...], student: bool, min_cell: int, lenient: bool,
            exclude: Path | None, engine: str, scheduler: str | None, workers: int | None, block_size: int | None,
            fmt: str | None, out: Path | None, decimals: int) -> None:
    """Compare each scale's scores across the levels of a grouping column.

    Two levels: Welch's t, Mann-Whitney U, Hedges' g with its confidence interval and the rank-biserial r.
    Three or more: Welch's F, Kruskal-Wallis H, omega- and epsilon-squared, Games-Howell pairs. Levene's
    test is reported as a note; p-values are also given Holm-adjusted across the scales of the run.
    """
    from ..engine.plan import plan_for
    from ..present.groups import compare_tables, comparison_sentence
    from ..present.invariance import invariance_record, invariance_tables
    from ..stats.subgroups import comparison_blocks

    # score value counts per level serve the comparison; listwise cross-products per level the invariance
    summarised = load_summaries(
        data, scales, lambda spec: plan_for(spec, cross_products="listwise", answers=False, scores=True,
                                            by=resolve_by(by, spec)),
        engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient, workers=workers,
        needs_rows=first_needing_rows(exclude=exclude is not None), weighted=True)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    columns = resolve_by(by, inputs.spec, StreamedLevels(summarised.summary) if summarised else inputs.responses)
    if not columns:
        raise UsageError("compare needs a grouping column: give --by COLUMN or list `groups` in the scale file")
    scored = None
    per_column: Mapping[str, Sequence[Any]]  # each column's comparisons, one per scale
    if summarised:
        from ..analyses.summarised_groups import compare_from_summaries, invariance_by_scale_from_summaries

        per_column = compare_from_summaries(inputs.spec, summarised.summary, by=columns, min_cell=min_cell,
                                            student=student)
        # is each scale measuring the same thing in every group? (measurement invariance, see `confirm --by`)
        invariance = invariance_by_scale_from_summaries(inputs.spec, summarised.summary, by=columns)
    else:
        from ..analyses.compare import analyse_compare
        from ..analyses.invariance import invariance_by_scale
        from ..scoring import score_scales

        scored = score_scales(inputs.responses, inputs.spec)
        per_column = analyse_compare(inputs.spec, inputs.responses, by=columns, min_cell=min_cell, student=student,
                                     scores=scored)
        invariance = invariance_by_scale(inputs.spec, inputs.responses, by=columns)
    names = list(inputs.spec.scales)
    body = {"scales": {name: comparison_blocks(
        [per_column[column][i] for column in columns],
        {column: {"sentence": comparison_sentence(per_column[column][i], decimals=decimals),
                  "invariance": invariance_record(invariance[column].get(name))} for column in columns})
        for i, name in enumerate(names)}}
    if summarised:
        body["engine"] = summarised.engine
    ordered = [c for i in range(len(names)) for column in columns for c in (per_column[column][i],)]
    tables = [*compare_tables(ordered, decimals=decimals), invariance_tables(invariance)[1]]
    if getattr(inputs.responses, "weights", None) is not None:
        tables = [*tables, *_weighted(body, inputs, scored, columns, min_cell)]
    elif summarised and summarised.weight:
        tables = [*tables, *_weighted_from_summaries(body, inputs, summarised, columns, min_cell)]
    emit(command="compare", inputs=inputs, body=body, tables=tables, fmt=fmt,
         out=out, decimals=decimals, options={"by": list(columns), "student": student, "min_cell": min_cell})


def _weighted(body, inputs, scored, columns, min_cell) -> list:
    """Weighted level means and effect sizes beside the unweighted comparison (see :func:`_place_weighted`)."""
    from ..present.weighted import weighted_compare_table
    from ..stats.subgroups import split_by
    from ..stats.weighted_groups import weighted_compare

    weights = inputs.responses.weights
    tables = []
    for column in columns:
        split = split_by(inputs.responses.column(column), min_size=1, column=column)
        for name, scale_scores in scored.scales.items():
            result = weighted_compare(scale_scores.scores, split.levels, weights.values, column=column, scale=name,
                                      weight_column=weights.column, min_cell=min_cell)
            _place_weighted(body["scales"][name], column, result.to_dict(), min_cell)
            tables.append(weighted_compare_table(result))
    return tables


def _weighted_from_summaries(body, inputs, summarised, columns, min_cell) -> list:
    """:func:`_weighted` from the merged weighted score value counts of each level."""
    from ..analyses.summarised_weighted import weighted_compare_from_summaries
    from ..present.weighted import weighted_compare_table

    found = weighted_compare_from_summaries(inputs.spec, summarised.summary, by=columns, min_cell=min_cell,
                                            weight_column=summarised.weight)
    tables = []
    for column in columns:
        for name, result in found[column].items():
            _place_weighted(body["scales"][name], column, result.to_dict(), min_cell)
            tables.append(weighted_compare_table(result))
    return tables


def _place_weighted(record: dict, column: str, weighted: dict, min_cell: int) -> None:
    """Each level's weighted estimates beside its other numbers (``by.<column>.<level>.weighted``); the test
    across the levels beside the tests (``comparisons.<column>.weighted``), levels hidden below min_cell as "< N"."""
    from ..stats.groups import suppressed_text

    for level, estimates in weighted.pop("levels").items():
        record["by"][column].setdefault(level, {})["weighted"] = estimates
    weighted["not_described"] = {level: suppressed_text(min_cell) for level in weighted["not_described"]}
    record["comparisons"][column]["weighted"] = weighted
