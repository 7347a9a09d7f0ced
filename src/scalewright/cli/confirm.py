"""`scalewright confirm`: the scale file's structure as confirmatory factor models; --by for invariance."""
from __future__ import annotations

from pathlib import Path

import click

from .common import (
    by_option,
    emit,
    input_options,
    load_inputs,
    missing_option,
    output_options,
    pairwise_flag,
    require,
    resolve_missing,
    scales_option,
    weight_option,
)
from .engine_route import dataset_argument, engine_options, first_needing_rows, load_summaries


@click.command("confirm", epilog=("Examples:\n\n\b\n"
                  "  scalewright confirm survey.csv --scales survey.yaml\n"
                  "  scalewright confirm survey.csv -s survey.yaml --by shift --strict\n"))
@dataset_argument
@scales_option
@by_option
@missing_option
@pairwise_flag
@click.option("--ordinal", is_flag=True,
              help="Treat answers as ordered categories: fit by DWLS on the polychoric correlations.")
@click.option("--confidence-level", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.95,
              show_default=True, help="Coverage of the intervals of omega and the factor correlations.")
@click.option("--min-group", type=click.IntRange(min=3), default=30, show_default=True,
              help="With --by: subgroup levels with fewer respondents are named but left out.")
@click.option("--strict", "with_strict", is_flag=True,
              help="With --by: also test strict invariance (equal residual variances).")
@weight_option
@input_options
@engine_options
@output_options
def confirm(data: Path, scales: Path, by: tuple[str, ...], missing: str | None, pairwise: bool, ordinal: bool,
            confidence_level: float,
            min_group: int, with_strict: bool, lenient: bool, exclude: Path | None, engine: str,
            scheduler: str | None, workers: int | None, block_size: int | None, fmt: str | None,
            out: Path | None, decimals: int) -> None:
    """Check that the scale file's structure holds: confirmatory factor models fitted by maximum likelihood.

    One model per scale (one factor) and one of the whole file (each scale a factor, factor correlations
    free; a total with subscales becomes a bifactor model). Per model: chi-square, CFI, TLI, RMSEA with its
    90% interval, SRMR, AIC, BIC, standardized loadings, factor correlations, residual correlations,
    cross-loading hints, and omega with its interval. With --by COLUMN: measurement invariance across the
    column's levels (configural, metric, scalar, optionally strict), only when a column is given here.
    --missing em fits each scale to the EM covariances of its own items and the whole-file model to those
    of every item of the file. --ordinal fits by diagonally weighted least squares on polychoric correlations.
    """
    from ..analyses.confirm import analyse_confirm
    from ..present.confirm import confirm_tables

    method = resolve_missing(missing, pairwise)
    require(not (ordinal and method == "em"), "--ordinal works with --missing listwise or pairwise, not em: the "
                                              "polychoric correlations come from the answer tables")
    require(not (by and (ordinal or method == "em")), "--by (invariance) fits means and covariances by maximum "
                                                      "likelihood; use it without --ordinal and --missing em")
    from ..analyses.summarised_confirm import confirm_plan

    # cross-products, per-pattern statistics and pair tables of each scale's codes serve every model
    summarised = load_summaries(
        data, scales, lambda spec: confirm_plan(spec, missing=method, ordinal=ordinal, by=by),
        engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient, workers=workers,
        needs_rows=first_needing_rows(exclude=exclude is not None), weighted=True)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    # weighted fits from the rows, or from the merged weighted cross-products
    weighted = getattr(inputs.responses, "weights", None) is not None or bool(summarised and summarised.weight)
    if weighted:
        # weighted polychoric tables would need weighted SEs for the DWLS weights too: refused, not guessed
        require(not ordinal, "--ordinal cannot use survey weights yet (the polychoric correlations are of "
                             "unweighted answer tables); leave out --ordinal or the weight column")
        require(method == "listwise", f"survey weights work with --missing listwise only (the weighted covariance "
                                      f"of complete answers), not {method}")
        require(not by, "--by (invariance) does not use survey weights yet; leave out --by or the weight column")
    pairwise = method == "pairwise"
    if summarised:
        from ..analyses.summarised_confirm import confirm_from_summaries, confirm_invariance_from_summaries

        analysis = confirm_from_summaries(inputs.spec, summarised.summary, n_rows=inputs.responses.n,
                                          missing=method, ordinal=ordinal, confidence_level=confidence_level,
                                          weight_column=summarised.weight)
        if by:
            analysis = confirm_invariance_from_summaries(inputs.spec, summarised.summary, analysis, by=by,
                                                         min_group=min_group, strict=with_strict)
    else:
        analysis = analyse_confirm(inputs.spec, inputs.responses, missing=method, ordinal=ordinal,
                                   confidence_level=confidence_level, weighted=weighted)
        if by:
            from ..analyses.invariance import analyse_invariance

            analysis = analyse_invariance(inputs.spec, inputs.responses, analysis, by=by, min_group=min_group,
                                          pairwise=pairwise, strict=with_strict)
    body = {**analysis.to_dict(), "reading": inputs.responses.reading_summary()}
    if summarised:
        body["engine"] = summarised.engine
    options = {"by": list(by), "missing": method, "ordinal": ordinal,
               "confidence_level": confidence_level, "min_group": min_group, "strict": with_strict,
               "estimator": analysis.estimator,
               "weight": (summarised.weight if summarised else inputs.responses.weights.column) if weighted else None}
    emit(command="confirm", inputs=inputs, body=body, tables=confirm_tables(analysis), fmt=fmt, out=out,
         decimals=decimals, options=options)
