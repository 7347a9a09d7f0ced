"""`scalewright report`: every analysis into one folder (index.html, report.md, results.json, figures/, scores.csv)."""
from __future__ import annotations

from pathlib import Path
from typing import Any

import click

from .common import (
    by_option,
    chosen_max_levels,
    input_options,
    load_inputs,
    missing_option,
    resolve_by,
    resolve_missing,
    scales_option,
    weight_option,
)
from .engine_route import dataset_argument
from .report_route import check_dask_options, report_engine_options
from .row_route import row_route, said_read_whole


def report_from_files(data: Path, scales: Path, out: Path, *, by: tuple[str, ...] = (), lenient: bool = False,
                      exclude: Path | None = None, decimals: int = 2, force: bool = False,
                      seed: int | None = None, iterations: int = 100, confidence_level: float = 0.95,
                      min_group: int = 10, min_cell: int = 5, duration_column: str | None = None,
                      duration_unit: str = "s", quiet: bool = False, single_file: bool = False,
                      missing: str = "listwise", png: bool = False, max_levels: int | None = None,
                      engine: str = "memory", block_size: int | None = None, scheduler: str | None = None,
                      workers: int | None = None) -> Any:
    """Read the inputs, turn the options into ``ReportOptions`` and build the report folder; returns the
    ``ReportResults`` (:func:`scalewright.report_folder.build_report_folder` does the work).

    With ``engine`` "stream" (or "auto" on a large file) the file is read in blocks: see
    :func:`_streamed_report_folder`.
    """
    from ..present.progress import Progress
    from ..report import DEFAULT_SEED, ReportOptions
    from ..report_folder import build_report_folder, report_folder_steps

    progress = Progress(1 + report_folder_steps(), quiet=quiet)
    progress.step("reading the inputs")
    needs_rows = "--exclude" if exclude is not None else None
    check_dask_options(engine, scheduler, workers)
    if row_route(engine, data, needs_rows=needs_rows) in ("stream", "dask"):
        streamed = _streamed_report_folder(data, scales, out, by=by, lenient=lenient, decimals=decimals, force=force,
                                           seed=seed, iterations=iterations, confidence_level=confidence_level,
                                           min_group=min_group, min_cell=min_cell, duration_column=duration_column,
                                           duration_unit=duration_unit, single_file=single_file, png=png,
                                           max_levels=max_levels, engine=engine, block_size=block_size,
                                           progress=progress, scheduler=scheduler, workers=workers, missing=missing)
        if streamed is not None:
            return streamed
    inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
    options = ReportOptions(by=resolve_by(by, inputs.spec), max_levels=max_levels or chosen_max_levels(),
                            seed=DEFAULT_SEED if seed is None else seed, iterations=iterations,
                            confidence_level=confidence_level, min_group=min_group, min_cell=min_cell,
                            lenient=lenient, exclude=None if exclude is None else str(exclude), decimals=decimals,
                            duration_column=duration_column, duration_unit=duration_unit, missing=missing)
    results = build_report_folder(inputs, out, options=options, sources=[data, scales, exclude], force=force,
                                  single_file=single_file, png=png, progress=progress.step)
    folder = Path(out)
    progress.finish(f"wrote the report to {folder} (open {folder / 'index.html'})")
    return results


def _streamed_report_folder(data: Path, scales: Path, out: Path, *, by: tuple[str, ...], lenient: bool, decimals: int,
                            force: bool, seed: int | None, iterations: int, confidence_level: float, min_group: int,
                            min_cell: int, duration_column: str | None, duration_unit: str, single_file: bool,
                            png: bool, max_levels: int | None, engine: str, block_size: int | None,
                            progress: Any, scheduler: str | None = None, workers: int | None = None,
                            missing: str = "listwise") -> Any:
    """The report of a file read in blocks (:mod:`scalewright.analyses.report_streamed`): one pass for the
    summaries, one that writes ``scores.csv`` a block at a time, three for the screen (``screen.csv``; not on
    Dask); None when the file must be read whole."""
    from ..analyses.report_streamed import report_plan, streamed_report
    from ..engine.blocks import CannotStream
    from ..errors import DataError, Problem
    from ..present.report_files import prepare_report_folder, write_report_folder, write_single_page
    from ..report import DEFAULT_SEED, ReportOptions
    from ..spec import load_spec
    from .engine_route import StreamedLevels

    spec = load_spec(scales)
    options = ReportOptions(by=resolve_by(by, spec), max_levels=max_levels or chosen_max_levels(),
                            seed=DEFAULT_SEED if seed is None else seed, iterations=iterations,
                            confidence_level=confidence_level, min_group=min_group, min_cell=min_cell, lenient=lenient,
                            exclude=None, decimals=decimals, duration_column=duration_column,
                            duration_unit=duration_unit, missing=missing)
    from .report_route import report_scores, report_summary

    weight, weight_notes = _report_weight(spec)
    try:  # the first pass: the merged summary, of the file's blocks or of the partitions on Dask
        first = report_summary(data, scales, spec, report_plan(spec, options, weight=weight), engine=engine,
                               lenient=lenient, block_size=block_size, scheduler=scheduler, workers=workers)
    except CannotStream as reason:
        said_read_whole(engine, data, reason)
        return None
    summary, outcome, info = first.summary, first.outcome, first.info
    # the checks of the whole-file route, before the folder is touched
    if weight:
        from ..analyses.summarised_weighted import check_weights

        weight_notes = check_weights(str(data), summary["weight_reading"], weight, lenient=lenient)
    resolve_by(options.by, spec, StreamedLevels(summary), max_levels=options.max_levels)
    if duration_column and duration_column not in outcome.counts.file_columns:
        raise DataError(Problem(file=str(data), message=f"no column named {duration_column!r}"))
    if weight and missing != "listwise":
        from ..errors import UsageError

        raise UsageError(f"survey weights work with --missing listwise only (the weighted covariance of complete "
                         f"answers), not {missing}")
    folder = prepare_report_folder(out, force=force, inputs=[data, scales], single_file=single_file)
    progress.step("scoring")
    try:
        score_table = report_scores(first, data, spec, None if single_file else folder / "scores.csv",
                                    lenient=lenient, block_size=block_size, inputs=[data, scales])
    except CannotStream as reason:  # the first pass read it: only a file changed meanwhile gets here
        raise DataError(Problem(file=str(data), message=f"the file changed while it was read ({reason})")) from None
    # the screen judges every row: three more passes over the file's blocks, or over the partitions on Dask
    if engine == "dask":
        from .screen_dask import dask_screen_csv

        screen = dask_screen_csv(data, spec, None if single_file else folder / "screen.csv",
                                 duration_column=options.duration_column, duration_unit=options.duration_unit,
                                 lenient=options.lenient, block_size=block_size, weight=weight, scheduler=scheduler,
                                 workers=workers)
    else:
        screen = _streamed_screen(data, spec, folder, options, block_size=block_size, single_file=single_file,
                                  weight=weight)
    results = streamed_report(spec, summary, outcome, info=info, options=options, score_table=score_table,
                              input_notes=(*outcome.notes(), *weight_notes), progress=progress.step, screen=screen,
                              weight=weight)
    if single_file:
        write_single_page(results, folder, decimals=decimals, inputs=[data, scales], progress=progress.step)
    else:
        write_report_folder(results, folder, decimals=decimals, inputs=[data, scales], progress=progress.step,
                            png=png, scores_written=True)
    progress.finish(f"wrote the report to {folder} (open {folder / 'index.html'})")
    return results


def _report_weight(spec: Any) -> tuple[str | None, list[str]]:
    """The survey weight column the report weighs by, chosen as the whole-file reader chooses it
    (``cli.common._with_weights``): ``--weight`` or the scale file's ``weight`` in a command that offers
    ``--weight``; elsewhere none, with the note that the scale file's weights were not used."""
    import click

    from .common import weight_in_force

    ctx = click.get_current_context(silent=True)
    column = weight_in_force(spec)
    if column is None or (ctx is not None and "scalewright.weight" in ctx.meta):
        return column, []
    from ..notes import note
    from ..present.messages import describe

    return None, [describe(note("weights-not-used", weight_column=column, command=ctx.info_name if ctx else ""))]


def _streamed_screen(data: Path, spec: Any, folder: Path, options: Any, *, block_size: int | None,
                     single_file: bool, weight: str | None = None) -> Any:
    """The screen of the file read in blocks (:mod:`scalewright.engine.screen_stream`); every respondent's
    record is written to ``screen.csv`` in the folder as it is judged (results.json holds the first flagged);
    with ``weight`` the weighted screen."""
    from ..cli.screen_streamed import streamed_screen_csv

    return streamed_screen_csv(data, spec, None if single_file else folder / "screen.csv",
                               duration_column=options.duration_column, duration_unit=options.duration_unit,
                               lenient=options.lenient, block_size=block_size, weight=weight)


@click.command("report", epilog=("Examples:\n\n\b\n"
                  "  scalewright report survey.csv --scales survey.yaml --out report/\n"
                  "  scalewright report survey.csv -s survey.yaml --by shift --exclude flagged.csv --out report/\n"))
@dataset_argument
@scales_option
@by_option
@click.option("--out", "-o", "out", required=True, type=click.Path(file_okay=False, path_type=Path),
              help="Folder for the report (created if missing; must be empty unless --force).")
@click.option("--force", is_flag=True, help="Write into a folder that already holds files.")
@click.option("--decimals", type=click.IntRange(0, 6), default=2, show_default=True,
              help="Decimals shown in the pages (results.json keeps full precision).")
@click.option("--seed", type=click.IntRange(min=0), default=None,
              help="Seed of every random step (parallel analysis, dip test); default 2026, the same in every command, "
                   "recorded in the report.")
@click.option("--iterations", type=click.IntRange(1, 100_000), default=100, show_default=True,
              help="Random data sets drawn for parallel analysis (fewer is faster, less exact).")
@click.option("--confidence-level", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=0.95,
              show_default=True, help="Coverage of the confidence intervals.")
@click.option("--min-group", type=click.IntRange(min=3), default=10, show_default=True,
              help="Subgroup levels with fewer respondents are named but not analysed.")
@click.option("--min-cell", type=click.IntRange(min=1), default=5, show_default=True,
              help="Groups and answer counts below this are shown as '< N'.")
@click.option("--duration-column", metavar="COLUMN", default=None,
              help="Column of completion times; enables the screen's check for respondents who went too fast.")
@click.option("--duration-unit", type=click.Choice(["s", "min"]), default="s", show_default=True,
              help="Unit of the completion times, shown beside them.")
@click.option("--png", is_flag=True,
              help="Also write every figure as a PNG image (for slides and word processors); the pages use SVG.")
@click.option("--quiet", "-q", is_flag=True, help="Say nothing on stderr while working.")
@click.option("--single-file", is_flag=True,
              help="Write only DIR/index.html, every figure inside it: one file to send (no other files).")
@missing_option
@weight_option
@input_options
@report_engine_options
def report(data: Path, scales: Path, by: tuple[str, ...], out: Path, force: bool, decimals: int, seed: int | None,
           iterations: int, confidence_level: float, min_group: int, min_cell: int, duration_column: str | None,
           duration_unit: str, png: bool, quiet: bool, single_file: bool, missing: str | None, lenient: bool,
           exclude: Path | None, engine: str, block_size: int | None, scheduler: str | None,
           workers: int | None) -> None:
    """Build the full report: every scale's reliability, items, scores, subgroups and structure.

    Writes DIR/index.html (one self-contained page: no scripts, nothing from the
    network), DIR/report.md, DIR/results.json (every result at full precision),
    DIR/figures/ (SVG; PNG too with --png) and DIR/scores.csv. With --single-file,
    only DIR/index.html, with every figure inside it. With --engine stream (or auto on
    a large file) the file is read in blocks: every section computed from summaries,
    the screen in three more passes (every respondent's record in DIR/screen.csv); with
    --engine dask the same from a Parquet dataset or CSV files summarised and screened
    on a Dask cluster.
    """
    report_from_files(data, scales, out, by=by, lenient=lenient, exclude=exclude, decimals=decimals, force=force,
                        seed=seed, iterations=iterations, confidence_level=confidence_level, min_group=min_group,
                        min_cell=min_cell, duration_column=duration_column, duration_unit=duration_unit, quiet=quiet,
                        single_file=single_file, missing=resolve_missing(missing), png=png, engine=engine,
                        block_size=block_size, scheduler=scheduler, workers=workers)
