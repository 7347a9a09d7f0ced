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
@output_options
def score(data: Path, scales: Path, standardize: str | None, force: bool, lenient: bool, exclude: Path | None,
          fmt: str | None, out: Path | None, decimals: int) -> None:
    """Write the scored file: id, one column per scale and <scale>__answered.

    With --out FILE ending in .csv, .xlsx or .parquet the scores are written there
    (rows in input order); without it a summary of what was scored is shown.
    Numbers are written in full: the shortest text that reads back as the same number.
    """
    if out is not None:
        refuse_input_overwrite(out, [data, scales, exclude])
        if out.exists() and not force:
            raise UsageError(f"{out} exists; add --force to replace it")
    inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
    weights = getattr(inputs.responses, "weights", None)
    table = score_scales(inputs.responses, inputs.spec, standardize=standardize, weights=weights)
    summary = Table(
        title="Scores",
        columns=("scale", "items", "method", "needs answered", "scored", "not scored"),
        rows=tuple((name, s.k, s.method, s.required, s.n_scored, s.n_unscored) for name, s in table.scales.items()),
        kinds={"scale": "text", "method": "text", "items": "int", "needs answered": "int", "scored": "int",
               "not scored": "int"},
        key="scores")
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


def _weighted(body, inputs, table) -> list:
    """Weighted mean and sd of every scale score (``weighted.<scale>``); the scored file keeps every row."""
    weights = getattr(inputs.responses, "weights", None)
    if weights is None:
        return []
    from ..present.weighted import weighted_scores_table
    from ..stats.weighted import weighted_summary

    found = {name: weighted_summary(s.scores, weights.values, weight_column=weights.column)
             for name, s in table.scales.items()}
    body["weighted"] = {name: summary.to_dict() for name, summary in found.items()}
    return [weighted_scores_table(found)]
