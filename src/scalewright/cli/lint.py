"""`scalewright lint`: list every problem of a scale file and of the data against it."""
from __future__ import annotations

from pathlib import Path

import click

from ..data import read_responses
from ..errors import DataError, Problem
from ..spec import check_spec


@click.command("lint")
@click.argument("data", required=False, type=click.Path(dir_okay=False, path_type=Path))
@click.option("--scales", "-s", "scales", required=True, type=click.Path(dir_okay=False, path_type=Path),
              help="Scale file (YAML).")
def lint(data: Path | None, scales: Path) -> None:
    """Check a scale file (and, if DATA is given, the data against it); exit 0 only when clean."""
    spec, problems = check_spec(scales)
    data_problems: list[Problem] = []
    if spec is not None and data is not None:
        try:
            responses = read_responses(data, spec)
        except DataError as error:
            data_problems = list(error.problems)
        else:
            click.echo(f"{data}: {responses.n} respondent(s), {len(responses.item_names)} item(s) read")
    for problem in [*problems, *data_problems]:
        click.echo(str(problem))
    total = len(problems) + len(data_problems)
    if total:
        raise click.exceptions.Exit(3 if problems else 4)
    click.echo(f"{scales}: {len(spec.scales)} scale(s), {len(spec.items)} item(s); no problems found")
