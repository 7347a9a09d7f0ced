"""`scalewright lint`: list every problem of a scale file and of the data against it."""
from __future__ import annotations

from pathlib import Path

import click

from ..data import read_responses
from ..errors import DataError, Problem
from ..exclusion import exclude_respondents, read_exclusion_list
from ..present.messages import describe
from ..present.render import visible_controls
from ..spec import check_spec


@click.command("lint")
@click.argument("data", required=False, type=click.Path(dir_okay=False, path_type=Path))
@click.option("--scales", "-s", "scales", required=True, type=click.Path(dir_okay=False, path_type=Path),
              help="Scale file (YAML).")
@click.option("--exclude", type=click.Path(dir_okay=False, path_type=Path),
              help="Also check a file of respondent ids to set aside: how many it would set aside, which ids "
                   "the data do not have.")
@click.option("--sheet", metavar="NAME", help="The sheet to read from a workbook (.xlsx) with several.")
def lint(data: Path | None, scales: Path, exclude: Path | None, sheet: str | None) -> None:
    """Check a scale file (and, if DATA is given, the data against it); exit 0 only when clean."""
    spec, problems = check_spec(scales)
    data_problems: list[Problem] = []
    if spec is not None and data is not None:
        try:
            responses = read_responses(data, spec, sheet=sheet)
        except DataError as error:
            data_problems = list(error.problems)
        else:
            click.echo(f"{data}: {responses.n} respondent(s), {len(responses.item_names)} item(s) read")
            for line in responses.notes():
                click.echo(f"note: {line}")
            if exclude is not None:
                try:
                    _, exclusion = exclude_respondents(responses, read_exclusion_list(exclude, id_column=spec.id_column))
                except DataError as error:
                    data_problems = list(error.problems)
                else:
                    for note in exclusion.notes():
                        click.echo(f"note: {visible_controls(describe(note))}")
    for problem in [*problems, *data_problems]:
        click.echo(str(problem))
    total = len(problems) + len(data_problems)
    if total:
        raise click.exceptions.Exit(3 if problems else 4)
    for line in missing_text_lines(spec):
        click.echo(line)
    click.echo(f"{scales}: {len(spec.scales)} scale(s), {len(spec.items)} item(s); no problems found")


def missing_text_lines(spec) -> list[str]:
    """Which texts are read as "no answer": in the other columns, and in each scale's items where they differ."""
    shown = lambda texts: ", ".join(texts) if texts else "(none)"  # noqa: E731
    lines = [f"'no answer' texts (missing_texts): {shown(spec.missing_texts)}"]
    for scale in spec.scales.values():
        if scale.response.missing_texts != spec.missing_texts:
            lines.append(f"  in the items of {scale.name}: {shown(scale.response.missing_texts)}")
    return lines
