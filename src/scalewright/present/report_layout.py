"""The report as a document: sections of paragraphs, tables and figures, shared by the HTML and Markdown pages.

Both renderers walk the same :class:`ReportDocument`, so the page and ``report.md`` say the same things.
Text here is plain (never markup): each renderer escapes it for its own format.
"""
from __future__ import annotations

from dataclasses import dataclass, field

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
    """A figure saved as ``<stem>.svg`` (and ``<stem>.png`` when ``png``); ``stem`` is relative to the report folder."""

    stem: str
    title: str
    description: str
    png: bool = False


@dataclass(frozen=True)
class FigureRow:
    """Figures shown side by side where the page is wide enough."""

    figures: tuple[FigureBlock, ...]


@dataclass(frozen=True)
class Findings:
    """The report's opening list: one plain sentence per finding, each linked to the section that holds its
    detail (``anchor``)."""

    items: tuple[tuple[str, str], ...]  # (sentence, anchor)


@dataclass(frozen=True)
class Details:
    """Detail a reader opens on demand: folded on screen, printed expanded. ``summary`` is the one-line label."""

    summary: str
    blocks: tuple[Block, ...]


Block = Paragraph | Bullets | TableBlock | FigureBlock | FigureRow | Findings | Details


@dataclass(frozen=True)
class Section:
    """A headed part of the report; nesting gives the heading level (top sections are level 2)."""

    anchor: str
    title: str
    blocks: tuple[Block, ...] = ()
    subsections: tuple[Section, ...] = ()


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

        def visit(blocks: tuple[Block, ...]) -> None:
            for block in blocks:
                if isinstance(block, FigureBlock):
                    found.append(block)
                elif isinstance(block, FigureRow):
                    found.extend(block.figures)
                elif isinstance(block, Details):
                    visit(block.blocks)

        def walk(section: Section) -> None:
            visit(section.blocks)
            for child in section.subsections:
                walk(child)

        for section in self.sections:
            walk(section)
        return found

