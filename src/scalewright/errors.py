"""Project exceptions. Each names the place of the problem; the CLI turns them into one ``error:`` line."""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One problem found in an input file, with where it was found."""

    file: str
    message: str
    line: int | None = None
    where: str = ""  # key path in a scale file, or "column X" in a data file

    def __str__(self) -> str:
        place = self.file
        if self.line is not None:
            place += f":{self.line}"
        if self.where:
            place += f" ({self.where})" if place else self.where
        return f"{place}: {self.message}" if place else self.message


class ScalewrightError(Exception):
    """Base class of every error the tool reports to a user."""

    exit_code = 1


class UsageError(ScalewrightError):
    """The command line asks for something that cannot be done."""

    exit_code = 2


class _ProblemsError(ScalewrightError):
    def __init__(self, problems: list[Problem] | Problem | str, *, file: str = "") -> None:
        if isinstance(problems, str):
            problems = [Problem(file=file, message=problems)]
        elif isinstance(problems, Problem):
            problems = [problems]
        self.problems: tuple[Problem, ...] = tuple(problems)
        super().__init__(self.summary())

    def summary(self) -> str:
        first = str(self.problems[0]) if self.problems else "unknown problem"
        more = len(self.problems) - 1
        if more > 0:
            first += f" (and {more} more problem{'s' if more > 1 else ''}; `scalewright lint` lists them all)"
        return first


class SpecError(_ProblemsError):
    """The scale file is invalid."""

    exit_code = 3


class DataError(_ProblemsError):
    """The data file cannot be read or does not fit the scale file."""

    exit_code = 4
