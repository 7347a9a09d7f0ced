"""`scalewright structure`: KMO, Bartlett, parallel analysis and factor loadings against the intended scales."""
from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import click

from ..analyses.structure import analyse_structure_of_file
from ..seeds import DEFAULT_SEED
from .common import (
    emit,
    input_options,
    load_inputs,
    missing_option,
    output_options,
    require,
    resolve_missing,
    scales_option,
    weight_option,
)
from .engine_route import dataset_argument, engine_options, first_needing_rows, load_summaries

ROTATION_CHOICES = ("oblimin", "promax", "varimax", "none")
METHOD_CHOICES = ("minres", "ml")


def parse_factors(value: str | None) -> int | str | None:
    if value is None:
        return None
    text = value.strip().lower()
    if text == "scales":
        return "scales"
    if text.isdigit() and int(text) >= 1:
        return int(text)
    raise click.BadParameter(f"expected a whole number of at least 1 or 'scales', not {value!r}",
                             param_hint="--factors")


@click.command("structure", epilog=("Examples:\n\n\b\n"
                  "  scalewright structure survey.csv --scales survey.yaml\n"
                  "  scalewright structure survey.csv -s survey.yaml --factors scales --rotation promax\n"))
@dataset_argument
@scales_option
@click.option("--factors", "factors", metavar="N|scales", default=None,
              help="Number of factors: a whole number, or 'scales' for one per scale. Default: parallel analysis.")
@click.option("--rotation", type=click.Choice(ROTATION_CHOICES), default="oblimin", show_default=True,
              help="Factor rotation (oblimin and promax let factors correlate).")
@click.option("--method", type=click.Choice(METHOD_CHOICES), default="minres", show_default=True,
              help="Factor extraction: minimum residuals or maximum likelihood.")
@click.option("--iterations", type=click.IntRange(1, 100_000), default=100, show_default=True,
              help="Random data sets drawn for parallel analysis.")
@click.option("--seed", type=click.IntRange(min=0), default=DEFAULT_SEED, show_default=True,
              help="Seed of the parallel analysis (the same default in every command and the report).")
@click.option("--min-loading", type=click.FloatRange(0, 1, min_open=True), default=0.40, show_default=True,
              help="Flag items loading less than this on their own scale's factor.")
@click.option("--cross-loading", type=click.FloatRange(0, 1, min_open=True), default=0.30, show_default=True,
              help="Flag items loading more than this on another factor.")
@click.option("--ordinal", is_flag=True,
              help="Factor the polychoric correlations of the items (answers as ordered categories).")
@missing_option
@weight_option
@input_options
@engine_options
@output_options
def structure(data: Path, scales: Path, factors: str | None, rotation: str, method: str, iterations: int,
              seed: int, min_loading: float, cross_loading: float, ordinal: bool, missing: str | None,
              lenient: bool, exclude: Path | None, engine: str, scheduler: str | None, workers: int | None,
              block_size: int | None, fmt: str | None, out: Path | None, decimals: int) -> None:
    """Check dimensionality: do each scale's items measure one thing, and the scales different things?

    Reports sampling adequacy (KMO, Bartlett's test), parallel analysis, an
    exploratory factor analysis with loadings laid against the scale file's
    scales, and flags for items that sit with the wrong factor. Respondents with
    any missing answer are set aside (listwise) and counted, unless --missing
    says otherwise (em: every item of the file together, by maximum likelihood).
    With --ordinal, every statistic uses the polychoric correlations of the items
    instead of the Pearson ones.
    """
    from ..present.structure import structure_tables

    n_factors = parse_factors(factors)
    missing_method = resolve_missing(missing)
    from ..analyses.summarised_structure import structure_plan_options
    from ..engine.plan import plan_for

    # the summaries serve every missing-data method, --ordinal and survey weights; --exclude needs the rows
    plan_options = structure_plan_options(missing_method, ordinal)
    summarised = load_summaries(data, scales, lambda spec: replace(plan_for(spec, cross_products=None, answers=False),
                                                                   **plan_options),
                                engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient,
                                workers=workers, needs_rows=first_needing_rows(exclude=exclude is not None),
                                weighted=True)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    options = dict(n_factors=n_factors, rotation=rotation, method=method, seed=seed, iterations=iterations,
                   min_loading=min_loading, max_cross_loading=cross_loading)
    weighted_block = None
    if getattr(inputs.responses, "weights", None) is not None or (summarised and summarised.weight):
        require(not ordinal, "--ordinal cannot use survey weights yet (the polychoric correlations are of "
                             "unweighted answer tables); leave out --ordinal or the weight column")
        require(missing_method == "listwise", f"survey weights work with --missing listwise only (the weighted "
                                              f"covariance of complete answers), not {missing_method}")
    if summarised and summarised.weight:
        from ..analyses.summarised_structure import weighted_structure_from_summaries

        result, weighted_block = weighted_structure_from_summaries(inputs.spec, summarised.summary,
                                                                   weight_column=summarised.weight, **options)
    elif summarised:
        from ..analyses.summarised import structure_from_summaries

        result = structure_from_summaries(inputs.spec, summarised.summary, missing=missing_method, ordinal=ordinal,
                                          **options)
    elif getattr(inputs.responses, "weights", None) is not None:
        from ..analyses.weighted_structure import weighted_structure_of_file

        result, weighted_block = weighted_structure_of_file(inputs.spec, inputs.responses, **options)
    else:
        result = analyse_structure_of_file(inputs.spec, inputs.responses, ordinal=ordinal, missing=missing_method,
                                           **options)
    body = result.to_dict()
    if weighted_block is not None:
        body["weighted"] = weighted_block
    if summarised:
        body["engine"] = summarised.engine
    options = {"factors": factors or "parallel analysis", "rotation": rotation, "method": method,
               "iterations": iterations, "seed": seed, "min_loading": min_loading, "cross_loading": cross_loading,
               "ordinal": ordinal, "missing": missing_method,
               "weight": weighted_block["weight_column"] if weighted_block else None}
    emit(command="structure", inputs=inputs, body=body, tables=structure_tables(result), fmt=fmt, out=out,
         decimals=decimals, options=options)
