"""Setting respondents aside (``--exclude FILE``): which ids a file lists, and what became of each.

The file is a plain list (one id per line, ``#`` starts a comment) or a CSV/TSV with a header. In a CSV the
ids come from the scale file's id column when the header has it, else from a column named ``id`` (what
``screen --out`` writes), else from the first column. When the file has a ``flagged`` column (``screen --out``
without ``--flagged-only``) only the rows flagged ``yes`` are set aside. An id that ``screen --out`` wrote with
a neutralising apostrophe (``'-17``, ``'=x``: spreadsheets would run them as formulas) is read back as the id.
"""
from __future__ import annotations

import csv
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from .data_file import decode_check, sniff_delimiter
from .errors import DataError, Problem
from .notes import Note, note
from .responses import Responses
from .results import ResultMixin

#: the column of ``screen --out`` that says whether a respondent was flagged
FLAGGED_COLUMN = "flagged"
#: what a ``flagged`` cell may hold
FLAGGED_YES = frozenset({"yes", "y", "true", "1"})
FLAGGED_NO = frozenset({"no", "n", "false", "0"})
#: first characters ``files.neutralise_formula`` protects with an apostrophe
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
#: unknown ids named in a note or message (the rest are counted)
SHOWN_IDS = 5


@dataclass(frozen=True)
class ExclusionList:
    """The ids a file asks to set aside, and how they were read."""

    path: str
    ids: tuple[str, ...]
    column: str | None = None          # the CSV column read; None for a plain list
    flagged_column: str | None = None  # set when only the rows flagged 'yes' were taken
    not_flagged: int = 0               # rows of the file left in because they were not flagged


def _unquote_formula(text: str) -> str | None:
    """The id behind a neutralised cell (``'-17`` -> ``-17``), or None when ``text`` is not one."""
    if text.startswith("'") and text[1:2] and text[1] in FORMULA_STARTS:
        return text[1:]
    return None


def _pick_column(header: list[str], id_column: str | None) -> int:
    stripped = [name.strip() for name in header]
    for wanted in (id_column, "id"):
        if wanted is None:
            continue
        for fold in (False, True):
            for position, name in enumerate(stripped):
                if (name.casefold() == wanted.casefold()) if fold else (name == wanted):
                    return position
    return 0


def _is_flagged(path: Path, row_number: int, value: str) -> bool:
    text = value.strip().casefold()
    if text in FLAGGED_YES:
        return True
    if text in FLAGGED_NO:
        return False
    raise DataError(Problem(file=str(path), where=f"row {row_number}, column {FLAGGED_COLUMN}",
                            message=f"{value[:40]!r} is neither yes nor no"))


def read_exclusion_list(path: str | Path, *, id_column: str | None = None) -> ExclusionList:
    """Ids to set aside: a CSV/TSV (see the module's rules for the column) or plain text with one id per line."""
    path = Path(path)
    if not path.exists():
        raise DataError(Problem(file=str(path), message="exclusion list not found"))
    body = decode_check(path, path.read_bytes()).decode("utf-8")
    if path.suffix.lower() not in (".csv", ".tsv"):
        lines = [line.strip() for line in body.splitlines()]
        return ExclusionList(path=str(path), ids=tuple(line for line in lines if line and not line.startswith("#")))
    lines = body.splitlines()
    first = next((line for line in lines if line.strip()), "")
    sep = "\t" if path.suffix.lower() == ".tsv" else sniff_delimiter(first)
    # row numbers as a spreadsheet shows them: the header is row 1, blank lines count
    rows = [(number, row) for number, row in enumerate(csv.reader(lines, delimiter=sep), start=1)]
    rows = [(number, row) for number, row in rows if row and any(cell.strip() for cell in row)]
    if not rows:
        return ExclusionList(path=str(path), ids=())
    header = rows[0][1]
    column = _pick_column(header, id_column)
    flagged = next((i for i, name in enumerate(header) if name.strip().casefold() == FLAGGED_COLUMN), None)
    ids: list[str] = []
    not_flagged = 0
    for number, row in rows[1:]:
        value = row[column].strip() if column < len(row) else ""
        if not value:
            continue
        if flagged is not None and not _is_flagged(path, number, row[flagged] if flagged < len(row) else ""):
            not_flagged += 1
            continue
        ids.append(value)
    return ExclusionList(path=str(path), ids=tuple(ids), column=header[column].strip(),
                         flagged_column=None if flagged is None else header[flagged].strip(),
                         not_flagged=not_flagged)


@dataclass(frozen=True)
class Exclusion(ResultMixin):
    """What setting respondents aside did: how many ids were listed, set aside, and not found in the data."""

    path: str
    column: str | None
    flagged_column: str | None
    listed: int
    set_aside: int
    not_flagged: int
    unknown: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"file": self.path, "column": self.column, "flagged_column": self.flagged_column,
                "listed": self.listed, "set_aside": self.set_aside, "not_flagged": self.not_flagged,
                "not_found": len(self.unknown), "not_found_first": list(self.unknown[:SHOWN_IDS])}

    def notes(self) -> list[Note]:
        """What a reader must know: how many were set aside, from which column, and which ids were unknown."""
        out = [note("respondents-set-aside", n=self.set_aside, file=self.path, listed=self.listed,
                    not_found=len(self.unknown))]
        if self.column is not None:
            out.append(note("exclusion-column", column=self.column, file=self.path))
        if self.flagged_column is not None:
            out.append(note("exclusion-flagged-only", column=self.flagged_column, flagged=self.listed,
                            not_flagged=self.not_flagged))
        if self.unknown:
            out.append(note("exclusion-ids-not-found", n=len(self.unknown), first=self.unknown[:SHOWN_IDS]))
        return out


def exclude_respondents(responses: Responses, listing: ExclusionList) -> tuple[Responses, Exclusion]:
    """The responses without the listed respondents, and the account of what was set aside.

    Raises ``DataError`` when the list would set aside every respondent, or when it lists ids of which
    none is in the data (most likely the wrong file or the wrong column).
    """
    present = [str(i) for i in responses.ids]
    known = set(present)
    wanted: set[str] = set()
    unknown: list[str] = []
    for listed in dict.fromkeys(listing.ids):
        unquoted = _unquote_formula(listed)
        if listed in known:
            wanted.add(listed)
        elif unquoted is not None and unquoted in known:
            wanted.add(unquoted)
        else:
            unknown.append(listed)
    drop = np.fromiter((i in wanted for i in present), dtype=bool, count=len(present))
    account = Exclusion(path=listing.path, column=listing.column, flagged_column=listing.flagged_column,
                        listed=len(listing.ids), set_aside=int(drop.sum()), not_flagged=listing.not_flagged,
                        unknown=tuple(unknown))
    where = f"column {listing.column}" if listing.column else ""
    if listing.ids and not wanted:
        shown = ", ".join(repr(i[:40]) for i in unknown[:SHOWN_IDS])
        raise DataError(Problem(file=listing.path, where=where, message=(
            f"none of the {len(listing.ids)} listed id(s) is an id of {responses.path} ({shown}"
            f"{', ...' if len(unknown) > SHOWN_IDS else ''}): is it the right file, and the right column?")))
    if responses.n and drop.all():
        raise DataError(Problem(file=listing.path, where=where, message=(
            f"it lists all {responses.n} respondents of {responses.path}: setting every one aside leaves "
            "nothing to analyse (a screen file with a 'flagged' column sets aside only the rows flagged yes)")))
    return responses.subset(~drop), account
