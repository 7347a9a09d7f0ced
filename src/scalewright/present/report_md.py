"""The report as Markdown (``report.md``): the same document as the HTML page, figures as files beside it."""
from __future__ import annotations

import html

from .render import escape_markdown, markdown_table_lines
from .report_layout import (
    Block,
    Bullets,
    Details,
    FigureBlock,
    FigureRow,
    Findings,
    Paragraph,
    ReportDocument,
    Section,
    TableBlock,
)
from .table import Table


def _table(table: Table, *, decimals: int) -> list[str]:
    return [f"**{escape_markdown(table.title)}**", "", *markdown_table_lines(table, decimals=decimals)]


def _figure(block: FigureBlock, number: int) -> list[str]:
    # the image path is ours (a slug), never user text; the alt text is escaped
    also = f" (PNG version: `{block.stem}.png`)" if block.png else ""
    return [f"![{escape_markdown(block.title)}]({block.stem}.svg)", "",
            f"*Figure {number}.* {escape_markdown(block.title)}. {escape_markdown(block.description)}{also}", ""]


def _block(block: Block, *, decimals: int, counter: list[int]) -> list[str]:
    if isinstance(block, Paragraph):
        text = escape_markdown(block.text)
        if block.tone == "caution":
            return [f"> **Caution.** {text}", ""]
        if block.tone == "note":
            return [f"*{text}*" if text else "", ""]
        return [text, ""]
    if isinstance(block, Bullets):
        return [f"- {escape_markdown(item)}" for item in block.items] + [""]
    if isinstance(block, TableBlock):
        return _table(block.table, decimals=decimals)
    if isinstance(block, FigureBlock):
        counter[0] += 1
        return _figure(block, counter[0])
    if isinstance(block, FigureRow):
        out: list[str] = []
        for figure in block.figures:
            counter[0] += 1
            out.extend(_figure(figure, counter[0]))
        return out
    if isinstance(block, Findings):
        return [f"{number}. {escape_markdown(text)} [detail](#{anchor})"
                for number, (text, anchor) in enumerate(block.items, start=1)] + [""]
    if isinstance(block, Details):
        out = [f"**{escape_markdown(block.summary)}**", ""]
        for inner in block.blocks:
            out.extend(_block(inner, decimals=decimals, counter=counter))
        return out
    raise TypeError(f"unknown report block {type(block).__name__}")


def _section(section: Section, level: int, *, decimals: int, counter: list[int]) -> list[str]:
    # an explicit anchor, so the findings' links resolve whatever slugs the Markdown viewer makes
    out = [f'<a id="{html.escape(section.anchor, quote=True)}"></a>', "", f"{'#' * level} {escape_markdown(section.title)}", ""]
    for block in section.blocks:
        out.extend(_block(block, decimals=decimals, counter=counter))
    for child in section.subsections:
        out.extend(_section(child, min(level + 1, 6), decimals=decimals, counter=counter))
    return out


def render_report_markdown(document: ReportDocument) -> str:
    """``report.md``: headings in order, tables as pipe tables, figures linked as SVG files."""
    counter = [0]
    out = [f"# {escape_markdown(document.title)}", "", escape_markdown(document.subtitle), ""]
    for key, value in document.facts:
        out.append(f"- **{escape_markdown(key)}:** {escape_markdown(value)}")
    if document.facts:
        out.append("")
    for paragraph in document.lead:
        out.extend([escape_markdown(paragraph), ""])
    out.append("## Contents")
    out.append("")
    for position, section in enumerate(document.sections, start=1):
        out.append(f"{position}. {escape_markdown(section.title)}")
    out.append("")
    for section in document.sections:
        out.extend(_section(section, 2, decimals=document.decimals, counter=counter))
    return "\n".join(out).rstrip() + "\n"
