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


@click.command("lint", epilog=("Examples:\n\n\b\n"
                  "  scalewright lint survey.csv --scales survey.yaml\n"
                  "  scalewright lint --scales survey.yaml --format json\n"))
@click.argument("data", required=False, type=click.Path(dir_okay=False, path_type=Path))
@click.option("--scales", "-s", "scales", required=True, type=click.Path(dir_okay=False, path_type=Path),
              help="Scale file (YAML).")
@click.option("--exclude", type=click.Path(dir_okay=False, path_type=Path),
              help="Also check a file of respondent ids to set aside: how many it would set aside, which ids "
                   "the data do not have.")
@click.option("--sheet", metavar="NAME", help="The sheet to read from a workbook (.xlsx) with several.")
@click.option("--format", "-f", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True,
              help="text: one line per problem; json: one document listing every problem (file, line, where, "
                   "message) and the exit code.")
def lint(data: Path | None, scales: Path, exclude: Path | None, sheet: str | None, fmt: str) -> None:
    """Check a scale file (and, if DATA is given, the data against it); exit 0 only when clean."""
    code, problems, findings = check_files(data, scales, exclude, sheet=sheet)
    if fmt == "json":
        from ..files import sha256_of
        from ..present.document import InputInfo, envelope
        from ..present.render import render_json

        def digest(path: Path | None) -> str | None:
            return sha256_of(path) if path is not None and path.is_file() else None

        info = InputInfo(data=str(data) if data else None, data_sha256=digest(data), scales=str(scales),
                         scales_sha256=digest(scales))
        body = {"clean": code == 0, "exit_code": code, "findings": findings,
                "problems": [{"file": p.file, "line": p.line, "where": p.where or None, "message": p.message,
                              "text": str(p)} for p in problems]}
        click.echo(render_json(envelope("lint", info, body)), nl=False)
    else:
        for position, line in enumerate(findings):
            last = position == len(findings) - 1
            click.echo(f"{line}; no problems found" if last and not code else line)
        for problem in problems:
            click.echo(str(problem))
    if code:
        raise click.exceptions.Exit(code)


def check_files(data: Path | None, scales: Path, exclude: Path | None, *,
                sheet: str | None = None) -> tuple[int, list[Problem], list[str]]:
    """(exit code: 0 clean, 3 scale file, 4 data; every problem; what was read) of the inputs."""
    spec, problems = check_spec(scales)
    data_problems: list[Problem] = []
    findings: list[str] = []
    if spec is not None and data is not None:
        try:
            responses = read_responses(data, spec, sheet=sheet)
        except DataError as error:
            data_problems = list(error.problems)
        else:
            findings.append(f"{data}: {responses.n} respondent(s), {len(responses.item_names)} item(s) read")
            findings.extend(f"note: {describe(line)}" for line in responses.notes())
            data_problems = _weight_problems(spec, responses, findings)
            if exclude is not None:
                try:
                    _, exclusion = exclude_respondents(responses,
                                                       read_exclusion_list(exclude, id_column=spec.id_column))
                except DataError as error:
                    data_problems = list(error.problems)
                else:
                    findings.extend(f"note: {visible_controls(describe(note))}" for note in exclusion.notes())
    code = 3 if problems else 4 if data_problems else 0
    if spec is not None and not code:
        findings.extend(missing_text_lines(spec))
        findings.append(f"{scales}: {len(spec.scales)} scale(s), {len(spec.items)} item(s)")
    return code, [*problems, *data_problems], findings


def _weight_problems(spec, responses, findings: list[str]) -> list[Problem]:
    """Every bad weight of the scale file's weight column (the commands stop at the first 20)."""
    if getattr(spec, "weight", None) is None:
        return []
    from ..weights import read_weights

    try:
        weights = read_weights(responses.frame, spec.weight, responses.line_numbers, path=responses.path)
    except DataError as error:
        return list(error.problems)
    if weights.n_zero_weight:
        findings.append(f"note: {weights.n_zero_weight} row(s) have weight 0 in {spec.weight} (left out of estimates)")
    return []


def missing_text_lines(spec) -> list[str]:
    """Which texts are read as "no answer": in the other columns, and in each scale's items where they differ."""
    shown = lambda texts: ", ".join(texts) if texts else "(none)"  # noqa: E731
    lines = [f"'no answer' texts (missing_texts): {shown(spec.missing_texts)}"]
    for scale in spec.scales.values():
        if scale.response.missing_texts != spec.missing_texts:
            lines.append(f"  in the items of {scale.name}: {shown(scale.response.missing_texts)}")
    return lines
