"""Render lists of ``Table`` objects as terminal text, Markdown or CSV, and documents as JSON."""
from __future__ import annotations

import csv
import io
import json
import re
import textwrap
from collections.abc import Sequence
from typing import Any

from ..files import neutralise_formula
from ..results import JsonRows, to_jsonable
from .numbers import format_value
from .table import Table

#: characters a terminal acts on instead of showing (C0 and C1 controls, DEL), line and paragraph separators, and
#: the bidirectional controls that reorder what is shown
_CONTROLS = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029\u200e\u200f\u202a-\u202e\u2066-\u2069]")
_NAMED = {"\t": "\\t", "\n": "\\n", "\r": "\\r"}


def _escape_control(match: re.Match[str]) -> str:
    char = match.group()
    if char in _NAMED:
        return _NAMED[char]
    return f"\\x{ord(char):02x}" if ord(char) < 0x100 else f"\\u{ord(char):04x}"


def visible_controls(text: str) -> str:
    r"""``text`` with every control character shown as its escape (``\x1b``, ``\r``, ``\u202e``).

    An escape sequence in a group level or a label could otherwise retitle the terminal, write to the
    clipboard or hide text; a careful command-line tool shows such characters instead of sending them.
    """
    return _CONTROLS.sub(_escape_control, text)


def _cells(table: Table, decimals: int) -> list[list[str]]:
    return [
        [format_value(value, table.kind_of(column), decimals) for column, value in zip(table.columns, row, strict=True)]
        for row in table.rows
    ]


def _is_numeric_column(table: Table, column: str) -> bool:
    return table.kind_of(column) != "text"


#: text cells longer than this are wrapped onto several lines in terminal tables
TEXT_CELL_WIDTH = 60


def _aligned_line(table: Table, widths: Sequence[int], values: Sequence[str]) -> str:
    """One terminal line of ``table``: numbers right-aligned, text left-aligned, each padded to its width."""
    parts = []
    for column, value, width in zip(table.columns, values, widths, strict=True):
        parts.append(value.rjust(width) if _is_numeric_column(table, column) else value.ljust(width))
    return "  ".join(parts).rstrip()


def render_text(tables: Sequence[Table], *, decimals: int = 2, preface: Sequence[str] = (),
                text_width: int = TEXT_CELL_WIDTH) -> str:
    """Plain aligned columns for a terminal: text left-aligned (long text wrapped), numbers right-aligned."""
    out: list[str] = [visible_controls(p) for p in preface]
    if preface:
        out.append("")
    for table in tables:
        # everything shown on a terminal has its control characters escaped first
        table = Table(title=visible_controls(table.title), columns=tuple(visible_controls(c) for c in table.columns),
                      rows=tuple(tuple(visible_controls(v) if isinstance(v, str) else v for v in row)
                                 for row in table.rows),
                      kinds={visible_controls(c): k for c, k in table.kinds.items()},
                      notes=tuple(visible_controls(n) for n in table.notes), key=table.key)
        cells = _cells(table, decimals)
        wrapped = [[textwrap.wrap(value, text_width) or [""] if not _is_numeric_column(table, column)
                    and len(value) > text_width else [value]
                    for column, value in zip(table.columns, row, strict=True)] for row in cells]
        widths = [len(c) for c in table.columns]
        for row in wrapped:
            widths = [max(w, *(len(part) for part in parts)) for w, parts in zip(widths, row, strict=True)]
        out.append(table.title)
        out.append("=" * max(len(table.title), 1))

        if table.columns:
            out.append(_aligned_line(table, widths, table.columns))
            out.append("  ".join("-" * w for w in widths))
            for row in wrapped:
                for depth in range(max(len(parts) for parts in row)):
                    out.append(_aligned_line(table, widths, [parts[depth] if depth < len(parts) else ""
                                                             for parts in row]))
        for note in table.notes:
            out.append(f"  note: {note}")
        out.append("")
    return "\n".join(out).rstrip() + "\n"


_LINE_BREAKS = re.compile("[\n\r\v\f\x1c\x1d\x1e\x85\u2028\u2029]+")


def escape_markdown(text: str) -> str:
    """Escape text so Markdown (and the HTML it may become) shows it literally.

    The text stays readable as plain text (report.md is read as a file too): no HTML entities and no
    escaped decimals. Only what Markdown would act on is backslash-escaped: ``<`` before a letter, ``/``,
    ``!`` or ``?`` (which could open a tag), ``&`` before what could be an entity (``&amp;``, ``&#60;``),
    the inline markers (emphasis, code, links, tables), and a marker that only counts at the start of a line
    (heading, list, quote; a number followed by ``.`` or ``)`` and a space). "< .001", "4.65" and "R&D"
    stay as they are.
    """
    # every line break Markdown knows (\n, \r, \r\n) and the ones other readers split on become a space, so
    # no text can start a line of its own (a heading, a list); other control characters are shown escaped
    text = visible_controls(_LINE_BREAKS.sub(" ", text))
    for char in "\\`*_{}[]|~":
        text = text.replace(char, "\\" + char)
    text = re.sub(r"<(?=[A-Za-z/!?])", r"\\<", text)
    text = re.sub(r"&(?=#?\w+;)", r"\\&", text)
    stripped = text.lstrip()
    lead = len(text) - len(stripped)
    numbered = re.match(r"\d+(?=[.)](\s|$))", stripped)
    if numbered:  # "1. first" would start an ordered list: escape the dot
        end = lead + numbered.end()
        text = text[:end] + "\\" + text[end:]
    elif re.match(r"[-+*]\s|#{1,6}(\s|$)|>|[=-]+\s*$", stripped):
        text = text[:lead] + "\\" + stripped
    return text


def render_markdown(tables: Sequence[Table], *, decimals: int = 2, heading_level: int = 2,
                    preface: Sequence[str] = ()) -> str:
    out: list[str] = [escape_markdown(p) for p in preface]
    if preface:
        out.append("")
    for table in tables:
        out.append(f"{'#' * heading_level} {escape_markdown(table.title)}")
        out.append("")
        out.extend(markdown_table_lines(table, decimals=decimals))
    return "\n".join(out).rstrip() + "\n"


def markdown_table_lines(table: Table, *, decimals: int = 2) -> list[str]:
    """A table's Markdown lines below its title: header, alignment row, cells, then its notes."""
    out: list[str] = []
    if table.columns:
        out.append("| " + " | ".join(escape_markdown(c) for c in table.columns) + " |")
        out.append("| " + " | ".join("---:" if _is_numeric_column(table, c) else ":---"
                                     for c in table.columns) + " |")
        for row in _cells(table, decimals):
            out.append("| " + " | ".join(escape_markdown(c) for c in row) + " |")
        out.append("")
    for note in table.notes:
        out.append(f"*Note.* {escape_markdown(note)}")
        out.append("")
    return out


def render_csv(tables: Sequence[Table]) -> str:
    """One long CSV: a ``table`` column, then the union of all columns. Values are not rounded."""
    columns: list[str] = []
    for table in tables:
        for column in table.columns:
            if column not in columns:
                columns.append(column)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["table", *columns])
    for table in tables:
        name = table.key or table.title
        for row in table.rows:
            record = dict(zip(table.columns, row, strict=True))
            values = []
            for column in columns:
                value = to_jsonable(record.get(column))
                values.append("" if value is None else neutralise_formula(value))
            writer.writerow([name, *values])
    return buffer.getvalue()


#: a list longer than this is written one element per line (each element compact), not one value per line
LONG_LIST = 50

#: the C encoder (json.dumps with an indent falls back to the pure-Python one, about 20 times slower)
_compact = json.JSONEncoder(ensure_ascii=False, allow_nan=False, separators=(", ", ": ")).encode


def _write_json(value: Any, level: int, out: list[str]) -> None:
    """Append the text of a JSON-ready ``value``, indented by two spaces a level, as ``json.dumps(indent=2)``
    writes it except that a list longer than :data:`LONG_LIST` (or any :class:`JsonRows`) has one compact
    element per line."""
    kind = type(value)
    if (kind is not dict and kind is not list and kind is not JsonRows) or not value:
        out.append(_compact(value))
        return
    inner, outer = "\n" + "  " * (level + 1), "\n" + "  " * level
    if kind is JsonRows or (kind is list and len(value) > LONG_LIST):
        out.append("[" + inner + ("," + inner).join(map(_compact, value)) + outer + "]")
        return
    out.append("{" if kind is dict else "[")
    separator = inner
    for key, item in value.items() if kind is dict else ((None, v) for v in value):
        out.append(separator if key is None else f"{separator}{_compact(key)}: ")
        _write_json(item, level + 1, out)
        separator = "," + inner
    out.append(outer + ("}" if kind is dict else "]"))


def render_json(document: dict[str, Any]) -> str:
    """The document as indented JSON; long lists (rows of respondents) hold one element per line."""
    out: list[str] = []
    _write_json(to_jsonable(document), 0, out)
    return "".join(out) + "\n"
