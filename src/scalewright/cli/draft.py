"""`scalewright draft`: a first scale file from a data file's columns."""
from __future__ import annotations

from pathlib import Path

import click

from ..errors import UsageError
from ..files import refuse_input_overwrite, write_atomic


@click.command("draft", epilog=("Examples:\n\n\b\n"
                  "  scalewright draft survey.csv --out survey.yaml\n"))
@click.argument("data", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--out", "-o", "out", type=click.Path(dir_okay=False, path_type=Path),
              help="Write the drafted scale file here (default: print it).")
@click.option("--force", is_flag=True, help="Replace --out if it exists (never the data file).")
@click.option("--sheet", metavar="NAME", help="The sheet to read from a workbook (.xlsx) with several.")
def draft(data: Path, out: Path | None, force: bool, sheet: str | None) -> None:
    """Draft a scale file from DATA: item groups, answer range and labels, suspected reverse items.

    Every choice is written with its evidence as a comment; check them against the questionnaire,
    then run `scalewright lint DATA --scales FILE`. A short summary goes to stderr.
    """
    from ..data_file import read_table
    from ..drafting.build import draft_scales
    from ..present.draft_yaml import draft_summary_lines, draft_yaml_text

    if out is not None:
        refuse_input_overwrite(out, [data])
        if out.exists() and not force:
            raise UsageError(f"{out} exists; add --force to replace it")
    from ..spec_model import DEFAULT_MISSING_TEXTS

    result = draft_scales(read_table(data, sheet=sheet, missing_texts=DEFAULT_MISSING_TEXTS))
    out_name = str(out) if out is not None else "SCALE_FILE"
    text = draft_yaml_text(result, data_name=str(data), out_name=out_name)
    if out is None:
        click.echo(text, nl=False)
    else:
        write_atomic(out, text, inputs=[data])
        click.echo(f"wrote {out}", err=True)
    for line in draft_summary_lines(result, data_name=str(data), out_name=out_name):
        click.echo(line, err=True)
