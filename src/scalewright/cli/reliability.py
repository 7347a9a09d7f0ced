"""`scalewright reliability`: alpha with its CI, omega, lambdas, item statistics and flags, per scale."""
from __future__ import annotations

from pathlib import Path

import click

from ..analyses.reliability import analyse_reliability
from ..errors import UsageError
from ..seeds import DEFAULT_SEED
from .common import (
    by_option,
    emit,
    input_options,
    load_inputs,
    missing_option,
    output_options,
    pairwise_flag,
    require,
    resolve_by,
    resolve_missing,
    scales_option,
    weight_option,
)
from .engine_route import StreamedLevels, dataset_argument, engine_options, first_needing_rows, load_summaries

#: what the command imports once its summaries are merged (scipy.special, through the statistics), imported
#: beside the blocks on the streaming route (``load_summaries(warm=...)``)
RELIABILITY_MODULES = ("scipy.special", "scalewright.analyses.summarised", "scalewright.present.confirm",
                       "scalewright.stats.cfa_fit", "scalewright.present.reliability")


@click.command("reliability", epilog=("Examples:\n\n\b\n"
                  "  scalewright reliability survey.csv --scales survey.yaml\n"
                  "  scalewright reliability survey.csv -s survey.yaml --by shift --bootstrap 2000\n"))
@dataset_argument
@scales_option
@by_option
@click.option("--confidence-level", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.95,
              show_default=True, help="Coverage of the confidence intervals of alpha.")
@click.option("--bootstrap", "n_resamples", type=click.IntRange(min=0), default=0, metavar="N",
              help="Also give percentile and BCa bootstrap intervals of alpha from N resamples.")
@click.option("--seed", type=click.IntRange(min=0), default=DEFAULT_SEED, show_default=True,
              help="Seed of the bootstrap (the same default in every command and the report).")
@missing_option
@pairwise_flag
@click.option("--ordinal", is_flag=True,
              help="Also treat the answers as ordered categories: ordinal alpha, ordinal omega and the sum "
                   "score's reliability from polychoric correlations.")
@click.option("--min-group", type=click.IntRange(min=3), default=10, show_default=True,
              help="Subgroup levels with fewer respondents are named but not analysed.")
@click.option("--weak-item-r", type=float, default=0.30, show_default=True,
              help="Flag items whose item-rest correlation is below this.")
@click.option("--redundant-r", type=float, default=0.85, show_default=True,
              help="Flag item pairs that correlate above this.")
@click.option("--low-alpha", type=float, default=0.70, show_default=True, help="Flag scales with alpha below this.")
@click.option("--excess-alpha", type=float, default=0.95, show_default=True,
              help="Flag scales with alpha above this (items may be near-duplicates).")
@weight_option
@input_options
@engine_options
@output_options
def reliability(data: Path, scales: Path, by: tuple[str, ...], confidence_level: float, n_resamples: int,
                seed: int, missing: str | None, pairwise: bool, ordinal: bool, min_group: int,
                weak_item_r: float, redundant_r: float, low_alpha: float, excess_alpha: float, lenient: bool,
                exclude: Path | None, engine: str, scheduler: str | None, workers: int | None,
                block_size: int | None, fmt: str | None, out: Path | None, decimals: int) -> None:
    """Check that each scale is reliable in this sample and find the items that hurt it.

    Per scale: alpha with its Feldt confidence interval, standardized alpha, omega total (one-factor
    model), Guttman's lambda2 and lambda6, inter-item correlations; per item: descriptives, floor and
    ceiling shares, item-rest correlation, alpha and omega if the item were left out. Flags name suspect
    keying, weak items, redundant pairs and too low or too high reliability. With --by, the same per
    subgroup, and Feldt's test of the alphas between subgroups. With --ordinal, also ordinal alpha and
    omega and the reliability of the sum score from polychoric correlations (whole sample).
    """
    from ..engine.plan import plan_for
    from ..stats.reliability_flags import ReliabilityThresholds

    method = resolve_missing(missing, pairwise)
    if method == "em" and n_resamples:
        raise UsageError("--bootstrap is not available with --missing em: it would rerun EM on every resample; "
                         "the interval under em is Feldt's (see the note)")
    # the summaries serve listwise and pairwise covariances; any other option takes the whole-file route
    needs_rows = first_needing_rows(bootstrap=bool(n_resamples), exclude=exclude is not None)

    def plan(spec):
        # em: listwise cross-products beside the per-pattern statistics; --ordinal: the pair tables of the
        # rows the whole-file route uses (pairwise under pairwise and em)
        from dataclasses import replace

        made = plan_for(spec, cross_products="listwise" if method == "em" else method, by=resolve_by(by, spec),
                        patterns=True)
        # with survey weights, exact weighted sums (summaries/exact_weighted.py): the one-factor fits below carry a
        # last-bit difference of the weighted covariance into chi2, so float sums would make it depend on where
        # the blocks were cut
        return replace(made, pair_tables=("listwise" if method == "listwise" else "pairwise") if ordinal else None,
                       weighted_exact=True)

    summarised = load_summaries(
        data, scales, plan,
        engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient, workers=workers,
        needs_rows=needs_rows, weighted=True, warm=RELIABILITY_MODULES)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    weighted = getattr(inputs.responses, "weights", None) is not None or bool(summarised and summarised.weight)
    # as in `confirm`: a half-weighted ordinal block would pass for a weighted one, so it is refused
    require(not (ordinal and weighted), "--ordinal cannot use survey weights yet (the polychoric correlations are of "
                                        "unweighted answer tables); leave out --ordinal or the weight column")
    columns = resolve_by(by, inputs.spec, StreamedLevels(summarised.summary) if summarised else inputs.responses)
    thresholds = ReliabilityThresholds(weak_item_rest_r=weak_item_r, redundant_r=redundant_r,
                                       low_alpha=low_alpha, excess_alpha=excess_alpha)
    from ..present.confirm import confirmatory_summary, reliability_beside_table

    fit_blocks: dict[str, dict] = {}
    if summarised:
        from ..analyses.summarised import one_factor_models_from_summaries, reliability_from_summaries

        reports = reliability_from_summaries(inputs.spec, summarised.summary, by=columns,
                                             confidence_level=confidence_level, pairwise=method == "pairwise",
                                             min_group=min_group, thresholds=thresholds, missing=method,
                                             ordinal=ordinal)
        # the confirmatory one-factor model of each scale from the merged covariance (see `confirm`)
        if summarised.weight:
            from ..analyses.summarised_weighted import weighted_one_factor_models_from_summaries

            models, fit_blocks = weighted_one_factor_models_from_summaries(inputs.spec, summarised.summary,
                                                                           weight_column=summarised.weight)
        else:
            models = one_factor_models_from_summaries(inputs.spec, summarised.summary,
                                                      pairwise=method == "pairwise")
    else:
        reports = analyse_reliability(inputs.spec, inputs.responses, by=columns, confidence_level=confidence_level,
                                      missing=method, min_group=min_group, n_resamples=n_resamples, seed=seed,
                                      thresholds=thresholds, ordinal=ordinal)
        from ..analyses.confirm import analyse_confirm, one_factor_models

        # the confirmatory one-factor model of each scale, beside the numbers above (see `confirm`); with weights
        # fitted to the weighted covariance of complete answers with Kish's n_eff as N, as `confirm` fits it
        if weighted:
            fitted = analyse_confirm(inputs.spec, inputs.responses, whole_file=False, weighted=True)
            models, fit_blocks = fitted.models, fitted.weighted_by_model
        else:
            models = one_factor_models(inputs.spec, inputs.responses, pairwise=method == "pairwise")
    body = {"scales": {name: {**report.to_dict(), "confirmatory": confirmatory_summary(models[name])}
                       for name, report in reports.items()},
            "reading": inputs.responses.reading_summary()}
    beside = reliability_beside_table(models)
    if weighted:
        from dataclasses import replace

        from ..notes import note
        from ..present.messages import describe

        for name in reports:
            body["scales"][name]["confirmatory"]["weighted"] = fit_blocks[name]
        weight_column = next(iter(fit_blocks.values()))["weight_column"] if fit_blocks else ""
        beside = replace(beside, notes=(*beside.notes, describe(note("confirm-weighted", weight_column=weight_column))))
    if summarised:
        body["engine"] = summarised.engine
    options = {"by": list(columns), "confidence_level": confidence_level, "missing": method,
               "bootstrap": n_resamples, "seed": seed, "min_group": min_group, "ordinal": ordinal,
               "thresholds": thresholds.to_dict()}
    from ..present.reliability import reliability_tables

    tables = [*reliability_tables(reports), beside]
    if getattr(inputs.responses, "weights", None) is not None:
        from ..analyses.weighted_reliability import weighted_reliability

        found = weighted_reliability(inputs.spec, inputs.responses, by=columns, confidence_level=confidence_level,
                                     min_group=min_group, thresholds=thresholds)
        tables = [*tables, *_weighted(body, found)]
    elif summarised and summarised.weight:
        from ..analyses.summarised_weighted import weighted_reliability_from_summaries

        found = weighted_reliability_from_summaries(inputs.spec, summarised.summary, weight_column=summarised.weight,
                                                    by=columns, confidence_level=confidence_level,
                                                    min_group=min_group, thresholds=thresholds)
        tables = [*tables, *_weighted(body, found)]
    emit(command="reliability", inputs=inputs, body=body, tables=tables, fmt=fmt, out=out,
         decimals=decimals, options=options)


def _weighted(body, found) -> list:
    """Weighted reliability beside the unweighted (``scales.<name>.weighted``, ``...by.<col>.<level>.weighted``)."""
    from ..present.weighted import weighted_reliability_table

    tables = []
    for name, blocks in found.items():
        record = body["scales"][name]
        record["weighted"] = blocks["all"]
        for column, levels in blocks["by"].items():
            for level, block in levels.items():
                record.setdefault("by", {}).setdefault(column, {}).setdefault(level, {})["weighted"] = block
        tables.append(weighted_reliability_table(name, blocks))
    return tables
