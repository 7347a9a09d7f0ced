"""Project exceptions. Each names the place of the problem; the CLI turns them into one ``error:`` line."""
from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from typing import Any

from .limits import MAX_QUOTED_CHARS

#: control characters (C0, DEL, C1) and the Unicode line and paragraph separators: none may reach a
#: message as itself, or it would split the one line or drive the terminal
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029]")
MAX_MESSAGE_CHARS = 1000


def one_line(text: str) -> str:
    """``text`` with every control character shown escaped (``\\n``, ``\\x1b``), cut to a readable length."""
    escaped = _CONTROL.sub(lambda found: repr(found.group())[1:-1], str(text))
    return escaped if len(escaped) <= MAX_MESSAGE_CHARS else escaped[: MAX_MESSAGE_CHARS - 3] + "..."


def quoted(value: Any) -> str:
    """A value as a message quotes it: ``repr`` of text, cut to :data:`MAX_QUOTED_CHARS` characters."""
    text = str(value)
    if len(text) > MAX_QUOTED_CHARS:
        return repr(text[:MAX_QUOTED_CHARS]) + f"... ({len(text):,} characters)"
    return repr(text)


def did_you_mean(word: str, choices: list[str]) -> str:
    """'; did you mean X?' for the closest of ``choices`` (difflib's default cut-off), else ''."""
    close = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


@dataclass(frozen=True)
class Problem:
    """One problem found in an input file, with where it was found."""

    file: str
    message: str
    line: int | None = None
    where: str = ""  # key path in a scale file, or "column X" in a data file
    total: bool = False  # a count of the problems listed before it ("... in all"), not one more problem

    def __str__(self) -> str:
        place = self.file
        if self.line is not None:
            place += f":{self.line}"
        if self.where:
            place += f" ({self.where})" if place else self.where
        return one_line(f"{place}: {self.message}" if place else self.message)


class ScalewrightError(Exception):
    """Base class of every error the tool reports to a user.

    ``setting`` names the library setting that gets past the error (``"lenient"``, ``"sheet"``,
    ``"standardize"``), if any; the command line words it as its option (the library names no options).
    """

    exit_code = 1
    setting = ""

    def with_setting(self, setting: str) -> ScalewrightError:
        self.setting = setting
        return self


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
        more = sum(not problem.total for problem in self.problems[1:])
        if more > 0:
            first += f" (and {more} more problem{'s' if more > 1 else ''}; `scalewright lint` lists them all)"
        return first


class SpecError(_ProblemsError):
    """The scale file is invalid."""

    exit_code = 3


class DataError(_ProblemsError):
    """The data file cannot be read or does not fit the scale file."""

    exit_code = 4
