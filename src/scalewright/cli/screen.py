"""`scalewright screen`: careless-responding and data-quality flags per respondent."""
from __future__ import annotations

from pathlib import Path

import click

from ..analyses.screen import analyse_screen, weighted_screen_summary
from ..errors import UsageError
from .common import (
    choose_format,
    emit,
    input_options,
    load_inputs,
    output_options,
    scales_option,
    weight_option,
)
from .engine_route import dataset_argument
from .row_route import row_route
from .screen_dask import screen_engine_options


@click.command("screen", epilog=("Examples:\n\n\b\n"
                  "  scalewright screen survey.csv --scales survey.yaml\n"
                  "  scalewright screen survey.csv -s survey.yaml --out flagged.csv --flagged-only\n"))
@dataset_argument
@scales_option
@click.option("--duration-column", metavar="COLUMN", default=None,
              help="Column holding each respondent's completion time; enables the 'fast' flag.")
@click.option("--duration-unit", type=click.Choice(["s", "min"]), default="s", show_default=True,
              help="Unit of the completion times, shown beside them.")
@click.option("--speed-share", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=1 / 3,
              show_default="1/3", help="Flag 'fast' below this share of the median completion time.")
@click.option("--flagged-only", is_flag=True,
              help="List (and with --out FILE.csv write) only the flagged respondents.")
@click.option("--long-run-share", type=click.FloatRange(0, 1, min_open=True), default=0.6, show_default=True,
              help="Flag 'long-run' when one answer repeats over at least this share of the items.")
@click.option("--mahalanobis-p", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.001,
              show_default=True, help="Flag 'far-from-sample' below this chi-square p of the Mahalanobis distance.")
@click.option("--mahalanobis-p-weak", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.05,
              show_default=True, help="Weak signal 'somewhat-far' below this p.")
@click.option("--even-odd-min", type=click.FloatRange(-1, 1), default=0.3, show_default=True,
              help="Weak signal 'uneven-halves' below this even-odd consistency.")
@click.option("--person-total-min", type=click.FloatRange(-1, 1), default=0.15, show_default=True,
              help="Weak signal 'against-sample' below this person-total correlation.")
@click.option("--missing-share-max", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.5,
              show_default=True, help="List 'many-missing' above this share of unanswered items.")
@click.option("--duplicate-min-items", type=click.IntRange(min=1), default=10, show_default=True,
              help="Flag identical answer rows only when at least this many items are answered.")
@click.option("--long-run-min-items", type=click.IntRange(min=1), default=10, show_default=True,
              help="Flag long runs of one answer only on questionnaires of at least this many items.")
@weight_option
@input_options
@screen_engine_options
@output_options
def screen(data: Path, scales: Path, duration_column: str | None, duration_unit: str, speed_share: float, flagged_only: bool,
           long_run_share: float, mahalanobis_p: float, mahalanobis_p_weak: float, even_odd_min: float,
           person_total_min: float, missing_share_max: float, duplicate_min_items: int, long_run_min_items: int,
           lenient: bool,
           exclude: Path | None, engine: str, block_size: int | None, scheduler: str | None, workers: int | None,
           fmt: str | None, out: Path | None, decimals: int) -> None:
    """Flag respondents whose answers look careless or whose records look suspicious.

    With --out FILE.csv the per-respondent table is written with the id first, so
    `--exclude FILE.csv` of any other command reads it directly (use --flagged-only
    to list only the flagged). A flag marks a record to look at, not a verdict on a person.
    With --engine stream (or auto on a large file) the file is read three times in
    blocks and each respondent's record is written out as it is judged. With --engine
    dask the same three passes run on a Dask cluster over a Parquet dataset (a folder,
    a glob or a URL) or a set of CSV files, and the records come back a partition at a
    time, written in dataset order.
    """
    from ..files import write_atomic
    from ..present.quality import duplicate_notes, respondents_csv, screen_notes, screen_tables
    from ..present.render import visible_controls
    from ..stats.screen_rules import ScreenThresholds
    from .report_route import check_dask_options

    check_dask_options(engine, scheduler, workers)
    if mahalanobis_p_weak < mahalanobis_p:
        raise UsageError(f"--mahalanobis-p-weak ({mahalanobis_p_weak:g}) must not be below --mahalanobis-p "
                         f"({mahalanobis_p:g}): the weak signal is the wider net")
    thresholds = ScreenThresholds(
        long_run_share=long_run_share, mahalanobis_p=mahalanobis_p, mahalanobis_p_weak=mahalanobis_p_weak,
        person_total_min=person_total_min, even_odd_min=even_odd_min, missing_share_max=missing_share_max,
        speed_share=speed_share, duplicate_min_items=duplicate_min_items, long_run_min_items=long_run_min_items)
    # survey weights stream: only the Mahalanobis centre, the alphas and the flagged shares are weighted
    route = row_route(engine, data, needs_rows="--exclude" if exclude is not None else None)
    if route == "dask":
        from .screen_dask import dask_screened

        dask_screened(data, scales, scheduler=scheduler, workers=workers, block_size=block_size, lenient=lenient,
                      thresholds=thresholds, duration_column=duration_column, duration_unit=duration_unit,
                      flagged_only=flagged_only, fmt=fmt, out=out, decimals=decimals)
        return
    if route == "stream":
        from .screen_streamed import streamed_screen

        if streamed_screen(data, scales, engine=engine, block_size=block_size, lenient=lenient, thresholds=thresholds,
                           duration_column=duration_column, duration_unit=duration_unit, flagged_only=flagged_only,
                           fmt=fmt, out=out, decimals=decimals):
            return
    inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
    result = analyse_screen(inputs.spec, inputs.responses, duration_column=duration_column, thresholds=thresholds,
                            duration_unit=duration_unit)
    document = result.to_dict()
    weights = getattr(inputs.responses, "weights", None)
    weighted_tables = []
    if weights is not None:
        from ..present.weighted import weighted_screen_table
        from ..results import to_jsonable

        block = weighted_screen_summary(result, weights)
        document["summary"]["weighted"] = to_jsonable(block)
        weighted_tables.append(weighted_screen_table(block, result.flag_counts(), result.n))
    if out is not None and fmt is None and out.suffix.lower() == ".csv":
        write_atomic(out, respondents_csv(document, flagged_only=flagged_only), inputs=[data, scales])
        written = result.n if not flagged_only else int(result.flagged.sum())
        click.echo(f"wrote {out} ({written} respondent(s); {int(result.flagged.sum())} of {result.n} flagged)",
                   err=True)
        lines = [t.notes[0] for t in weighted_tables]
        for note in (*inputs.notes, *screen_notes(document), *duplicate_notes(document), *lines):
            click.echo(f"note: {visible_controls(note)}", err=True)
        return
    if flagged_only:
        document["respondents"] = [r for r in document["respondents"] if r["flagged"]]
    emit(command="screen", inputs=inputs, body=document,
         tables=[*screen_tables(result.to_dict(), flagged_only=True), *weighted_tables],
         fmt=choose_format(fmt, out), out=out, decimals=decimals,
         options={"duration_column": duration_column, "flagged_only": flagged_only, "excluded": inputs.excluded})
