"""The report as a document: sections of paragraphs, tables and figures, shared by the HTML and Markdown pages.

Both renderers walk the same :class:`ReportDocument`, so the page and ``report.md`` say the same things.
Text here is plain (never markup): each renderer escapes it for its own format.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Union

from .table import Table


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text; ``tone`` is ``plain``, ``note`` (smaller, muted) or ``caution`` (boxed)."""

    text: str
    tone: str = "plain"


@dataclass(frozen=True)
class Bullets:
    items: tuple[str, ...]
    tone: str = "plain"


@dataclass(frozen=True)
class TableBlock:
    """A table; ``flag_column`` names a column whose comma-separated codes are shown as badges."""

    table: Table
    flag_column: str | None = None


@dataclass(frozen=True)
class FigureBlock:
    """A figure saved as ``<stem>.svg`` and ``<stem>.png`` (``stem`` relative to the report folder)."""

    stem: str
    title: str
    description: str


@dataclass(frozen=True)
class FigureRow:
    """Figures shown side by side where the page is wide enough."""

    figures: tuple[FigureBlock, ...]


Block = Union[Paragraph, Bullets, TableBlock, FigureBlock, FigureRow]


@dataclass(frozen=True)
class Section:
    """A headed part of the report; nesting gives the heading level (top sections are level 2)."""

    anchor: str
    title: str
    blocks: tuple[Block, ...] = ()
    subsections: tuple["Section", ...] = ()


@dataclass(frozen=True)
class ReportDocument:
    title: str
    subtitle: str
    lead: tuple[str, ...]
    sections: tuple[Section, ...]
    decimals: int = 2
    facts: tuple[tuple[str, str], ...] = field(default=())

    def figures(self) -> list[FigureBlock]:
        """Every figure of the document, in reading order."""
        found: list[FigureBlock] = []

        def walk(section: Section) -> None:
            for block in section.blocks:
                if isinstance(block, FigureBlock):
                    found.append(block)
                elif isinstance(block, FigureRow):
                    found.extend(block.figures)
            for child in section.subsections:
                walk(child)

        for section in self.sections:
            walk(section)
        return found

