"""`scalewright score`: write the scored file."""
from __future__ import annotations

from pathlib import Path

import click

from ..errors import UsageError
from ..files import refuse_input_overwrite
from ..present.render import visible_controls
from ..present.table import Table
from ..scoring import SCORE_FILE_TYPES, STANDARDIZE, score_scales, write_scores
from .common import (
    choose_format,
    data_argument,
    emit,
    input_options,
    load_inputs,
    output_options,
    scales_option,
    weight_option,
)
from .row_route import row_engine_options, row_route, said_read_whole


@click.command("score", epilog=("Examples:\n\n\b\n"
                  "  scalewright score survey.csv --scales survey.yaml --out scores.csv\n"
                  "  scalewright score survey.csv -s survey.yaml --standardize pomp --out scores.xlsx\n"))
@data_argument
@scales_option
@click.option("--standardize", type=click.Choice(STANDARDIZE), default=None,
              help="Also write a rescaled score beside the raw one, as <scale>__pomp (percent of maximum "
                   "possible, 0-100) or <scale>__z (standard scores in this sample; with survey weights from "
                   "the weighted mean and sd).")
@click.option("--force", is_flag=True, help="Replace --out if it exists (never an input file).")
@weight_option
@input_options
@row_engine_options
@output_options
def score(data: Path, scales: Path, standardize: str | None, force: bool, lenient: bool, exclude: Path | None,
          engine: str, block_size: int | None, fmt: str | None, out: Path | None, decimals: int) -> None:
    """Write the scored file: id, one column per scale and <scale>__answered.

    With --out FILE ending in .csv, .xlsx or .parquet the scores are written there
    (rows in input order); without it a summary of what was scored is shown.
    Numbers are written in full: the shortest text that reads back as the same number.
    With --engine stream (or auto on a large file) a .csv or .parquet scored file is
    read, scored and written a block at a time.
    """
    if out is not None:
        refuse_input_overwrite(out, [data, scales, exclude])
        if out.exists() and not force:
            raise UsageError(f"{out} exists; add --force to replace it")
    writes_scores = out is not None and out.suffix.lower() in SCORE_FILE_TYPES and fmt is None
    if _streamed(data, scales, standardize=standardize, lenient=lenient, exclude=exclude, engine=engine,
                 block_size=block_size, fmt=fmt, out=out, decimals=decimals, writes_scores=writes_scores):
        return
    inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
    weights = getattr(inputs.responses, "weights", None)
    table = score_scales(inputs.responses, inputs.spec, standardize=standardize, weights=weights)
    summary = _scores_table(table)
    if out is not None and out.suffix.lower() in SCORE_FILE_TYPES and fmt is None:
        write_scores(table, out, inputs=[data, scales, exclude])
        click.echo(f"wrote {out} ({inputs.responses.n} rows, {len(table.scales)} scale(s))", err=True)
        for note in [*inputs.notes, *_z_lines(table)]:
            click.echo(f"note: {visible_controls(note)}", err=True)
        return
    body = {"scores": table.to_dict(), "reading": inputs.responses.reading_summary()}
    tables = [summary, *_weighted(body, inputs, table)]
    emit(command="score", inputs=inputs, body=body, tables=tables, fmt=choose_format(fmt, out), out=out,
         decimals=decimals, options={"standardize": standardize}, preface=_z_lines(table))


def _z_lines(table) -> list[str]:
    """What the z scores are taken from: the sample's mean and sd, or the weighted ones."""
    if table.standardize != "z":
        return []
    from ..notes import note
    from ..present.messages import describe

    weighted = [s.standardized_basis["weight_column"] for s in table.scales.values()
                if s.standardized_basis and s.standardized_basis.get("weighted")]
    if weighted:
        return [describe(note("z-weighted", weight_column=weighted[0]))]
    return [describe(note("z-unweighted"))]


def _scores_table(table) -> Table:
    return Table(
        title="Scores",
        columns=("scale", "items", "method", "needs answered", "scored", "not scored"),
        rows=tuple((name, s.k, s.method, s.required, s.n_scored, s.n_unscored) for name, s in table.scales.items()),
        kinds={"scale": "text", "method": "text", "items": "int", "needs answered": "int", "scored": "int",
               "not scored": "int"},
        key="scores")


def _streamed(data: Path, scales: Path, *, standardize: str | None, lenient: bool, exclude: Path | None,
              engine: str, block_size: int | None, fmt: str | None, out: Path | None, decimals: int,
              writes_scores: bool) -> bool:
    """Score the file a block at a time when the route says so; False when it is to be read whole. With survey
    weights the weighted mean and sd (the summary's and the z scores') come from exact sums, the same to the
    bit as the whole-file route's."""
    needs_rows = ("--exclude" if exclude is not None
                  else f"--out {out.name}" if writes_scores and out is not None and out.suffix.lower() == ".xlsx"
                  else None)
    if row_route(engine, data, needs_rows=needs_rows) != "stream":
        return False
    from concurrent.futures import ThreadPoolExecutor

    from ..engine.blocks import CannotStream
    from ..engine.score_stream import stream_scores
    from ..present.document import InputInfo
    from ..spec import load_spec
    from .common import Inputs
    from .weight_check import WeightCheck

    spec = load_spec(scales)
    weighing = WeightCheck(str(data), spec, lenient=lenient)  # survey weights: refused or noted as whole
    with ThreadPoolExecutor(max_workers=1) as pool:  # the provenance digests beside the blocks
        digests = pool.submit(InputInfo.from_paths, data, scales)
        try:
            z_bases = None
            if standardize == "z":  # a first pass for the sample's mean and SD (engine/score_z.py)
                from ..engine.score_z import z_bases_of_file

                z_bases = z_bases_of_file(data, spec, lenient=lenient, block_bytes=block_size, **weighing.options())
            found = stream_scores(data, spec, out if writes_scores else None, standardize=standardize,
                                  lenient=lenient, block_bytes=block_size, inputs=[data, scales], z_bases=z_bases,
                                  **weighing.options())
        except CannotStream as reason:
            said_read_whole(engine, data, reason)
            return False
        info = digests.result()
    notes = (*found.outcome.notes(), *weighing.notes)
    if writes_scores:
        click.echo(f"wrote {out} ({found.n} rows, {len(found.table.scales)} scale(s))", err=True)
        for note in [*notes, *_z_lines(found.table)]:
            click.echo(f"note: {visible_controls(note)}", err=True)
        return True
    table = found.table
    summary = _scores_table(table)
    body = {"scores": table.to_dict(), "reading": found.outcome.reading_summary(), "engine": {"name": "stream"}}
    tables = [summary]
    if found.weighted is not None:
        from ..stats.weighted_scores import exact_weighted_summary

        tables += _weighted_block(body, {name: exact_weighted_summary(sums, weight_column=str(weighing.column))
                                         for name, sums in found.weighted.items()})
    inputs = Inputs(spec=spec, responses=found.outcome, info=info, excluded=0, notes=notes)
    emit(command="score", inputs=inputs, body=body, tables=tables, fmt=choose_format(fmt, out), out=out,
         decimals=decimals, options={"standardize": standardize}, preface=_z_lines(table))
    return True


def _weighted(body, inputs, table) -> list:
    """Weighted mean and sd of every scale score (``weighted.<scale>``), from exact sums
    (:mod:`scalewright.stats.weighted_scores`); the scored file keeps every row."""
    weights = getattr(inputs.responses, "weights", None)
    if weights is None:
        return []
    from ..stats.weighted_scores import exact_weighted_summary_of

    return _weighted_block(body, {name: exact_weighted_summary_of(s.scores, weights.values, weight_column=weights.column)
                                  for name, s in table.scales.items()})


def _weighted_block(body: dict, found: dict) -> list:
    """``body["weighted"]`` and its table from each scale's weighted summary (the same on both routes)."""
    from ..present.weighted import weighted_scores_table

    body["weighted"] = {name: summary.to_dict() for name, summary in found.items()}
    return [weighted_scores_table(found)]
