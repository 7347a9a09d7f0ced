"""`scalewright score`: write the scored file."""
from __future__ import annotations

from pathlib import Path

import click

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
)


@click.command("score", epilog=("Examples:\n\n\b\n"
                  "  scalewright score survey.csv --scales survey.yaml --out scores.csv\n"
                  "  scalewright score survey.csv -s survey.yaml --standardize pomp --out scores.xlsx\n"))
@data_argument
@scales_option
@click.option("--standardize", type=click.Choice(STANDARDIZE), default=None,
              help="Also rescale: pomp = percent of maximum possible (0-100), z = standard scores in this sample.")
@input_options
@output_options
def score(data: Path, scales: Path, standardize: str | None, lenient: bool, exclude: Path | None,
          fmt: str | None, out: Path | None, decimals: int) -> None:
    """Write the scored file: id, one column per scale and <scale>__answered.

    With --out FILE ending in .csv, .xlsx or .parquet the scores are written there
    (rows in input order); without it a summary of what was scored is shown.
    """
    inputs = load_inputs(data, scales, lenient=lenient, exclude=exclude)
    table = score_scales(inputs.responses, inputs.spec, standardize=standardize)
    summary = Table(
        title="Scores",
        columns=("scale", "items", "method", "needs answered", "scored", "not scored"),
        rows=tuple((name, s.k, s.method, s.required, s.n_scored, s.n_unscored) for name, s in table.scales.items()),
        kinds={"scale": "text", "method": "text", "items": "int", "needs answered": "int", "scored": "int",
               "not scored": "int"},
        key="scores")
    if out is not None and out.suffix.lower() in SCORE_FILE_TYPES and fmt is None:
        write_scores(table, out, inputs=[data, scales])
        click.echo(f"wrote {out} ({inputs.responses.n} rows, {len(table.scales)} scale(s))", err=True)
        for note in inputs.notes:
            click.echo(f"note: {note}", err=True)
        return
    body = {"scores": table.to_dict(), "reading": inputs.responses.reading_summary()}
    emit(command="score", inputs=inputs, body=body, tables=[summary], fmt=choose_format(fmt, out), out=out,
         decimals=decimals, options={"standardize": standardize})
