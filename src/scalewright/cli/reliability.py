"""`scalewright reliability`: alpha with its CI, omega, lambdas, item statistics and flags, per scale."""
from __future__ import annotations

from pathlib import Path

import click

from ..analyses.reliability import analyse_reliability
from .common import (
    by_option,
    emit,
    input_options,
    load_inputs,
    output_options,
    resolve_by,
    scales_option,
)
from .engine_route import dataset_argument, engine_options, load_summaries


@click.command("reliability")
@dataset_argument
@scales_option
@by_option
@click.option("--confidence-level", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.95,
              show_default=True, help="Coverage of the confidence intervals of alpha.")
@click.option("--bootstrap", "n_resamples", type=click.IntRange(min=0), default=0, metavar="N",
              help="Also give percentile and BCa bootstrap intervals of alpha from N resamples.")
@click.option("--seed", type=click.IntRange(min=0), default=None,
              help="Seed of the bootstrap (default: a fresh one, recorded in the output).")
@click.option("--pairwise", is_flag=True,
              help="Pairwise instead of listwise deletion: each covariance uses the rows answering both items.")
@click.option("--min-group", type=click.IntRange(min=3), default=10, show_default=True,
              help="Subgroup levels with fewer respondents are named but not analysed.")
@click.option("--weak-item-r", type=float, default=0.30, show_default=True,
              help="Flag items whose item-rest correlation is below this.")
@click.option("--redundant-r", type=float, default=0.85, show_default=True,
              help="Flag item pairs that correlate above this.")
@click.option("--low-alpha", type=float, default=0.70, show_default=True, help="Flag scales with alpha below this.")
@click.option("--excess-alpha", type=float, default=0.95, show_default=True,
              help="Flag scales with alpha above this (items may be near-duplicates).")
@input_options
@engine_options
@output_options
def reliability(data: Path, scales: Path, by: tuple[str, ...], confidence_level: float, n_resamples: int,
                seed: int | None, pairwise: bool, min_group: int, weak_item_r: float, redundant_r: float,
                low_alpha: float, excess_alpha: float, lenient: bool, exclude: Path | None, engine: str,
                scheduler: str | None, workers: int | None, block_size: int | None, fmt: str | None, out: Path | None,
                decimals: int) -> None:
    """Check that each scale is reliable in this sample and find the items that hurt it.

    Per scale: alpha with its Feldt confidence interval, standardized alpha, omega total (one-factor
    model), Guttman's lambda2 and lambda6, inter-item correlations; per item: descriptives, floor and
    ceiling shares, item-rest correlation, alpha and omega if the item were left out. Flags name suspect
    keying, weak items, redundant pairs and too low or too high reliability. With --by, the same per
    subgroup, and Feldt's test of the alphas between subgroups.
    """
    from ..engine.plan import plan_for
    from ..present.reliability import reliability_tables
    from ..stats.reliability import ReliabilityThresholds

    needs_rows = "--bootstrap" if n_resamples else ("--exclude" if exclude is not None else None)
    summarised = load_summaries(
        data, scales, lambda spec: plan_for(spec, cross_products="pairwise" if pairwise else "listwise",
                                            by=resolve_by(by, spec)),
        engine=engine, scheduler=scheduler, block_size=block_size, lenient=lenient, workers=workers,
        needs_rows=needs_rows)
    inputs = summarised.inputs if summarised else load_inputs(data, scales, lenient=lenient, exclude=exclude)
    columns = resolve_by(by, inputs.spec)
    if n_resamples and seed is None:
        import numpy as np

        seed = int(np.random.SeedSequence().entropy % 2**32)
    thresholds = ReliabilityThresholds(weak_item_rest_r=weak_item_r, redundant_r=redundant_r,
                                       low_alpha=low_alpha, excess_alpha=excess_alpha)
    if summarised:
        from ..analyses.summarised import reliability_from_summaries

        reports = reliability_from_summaries(inputs.spec, summarised.summary, by=columns,
                                             confidence_level=confidence_level, pairwise=pairwise,
                                             min_group=min_group, thresholds=thresholds)
    else:
        reports = analyse_reliability(inputs.spec, inputs.responses, by=columns, confidence_level=confidence_level,
                                      pairwise=pairwise, min_group=min_group, n_resamples=n_resamples, seed=seed,
                                      thresholds=thresholds)
    body = {"scales": {name: report.to_dict() for name, report in reports.items()},
            "reading": inputs.responses.reading_summary()}
    if summarised:
        body["engine"] = summarised.engine
    options = {"by": list(columns), "confidence_level": confidence_level, "missing": "pairwise" if pairwise
               else "listwise", "bootstrap": n_resamples, "seed": seed, "min_group": min_group,
               "thresholds": thresholds.to_dict()}
    emit(command="reliability", inputs=inputs, body=body, tables=reliability_tables(reports), fmt=fmt, out=out,
         decimals=decimals, options=options)
