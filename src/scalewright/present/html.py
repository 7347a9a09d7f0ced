"""The report as one self-contained HTML page: inline CSS, figures inlined as SVG, no scripts, no network.

Every text that may come from a user's files passes through :func:`html.escape`; figures are parsed as
XML and rebuilt from an allow-list (no scripts, no event handlers, no outside links), so nothing in the
data can run in the browser. The page reads the same with scripts off, since it has none.
"""
from __future__ import annotations

import html
import re
import xml.etree.ElementTree as ElementTree
from pathlib import Path

from .numbers import format_value
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
from .table_split import split_wide_table

SVG_NS = "http://www.w3.org/2000/svg"
XLINK_NS = "http://www.w3.org/1999/xlink"
#: SVG elements a figure may keep; anything else (script, foreignObject, a, iframe ...) is dropped
SVG_ELEMENTS = frozenset({
    "svg", "g", "path", "rect", "circle", "ellipse", "line", "polyline", "polygon", "text", "tspan", "defs",
    "clipPath", "use", "image", "title", "desc", "metadata", "style", "linearGradient", "radialGradient", "stop",
    "pattern", "mask", "symbol", "marker",
})
_METADATA_CHILDREN_DROPPED = True  # matplotlib's RDF metadata names the library only; it is left out
_URL_REFERENCE = re.compile(r"url\(#([^)]+)\)")
_UNSAFE_STYLE = re.compile(r"url\(\s*['\"]?(?!#)|@import|expression\(|javascript:", re.IGNORECASE)

CSS = """
:root{--ink:#1d2430;--muted:#5b6472;--rule:#d9dde3;--paper:#ffffff;--tint:#f4f6f8;--accent:#0b5d91;
--flag-bg:#fff1e0;--flag-ink:#8a3b00;--caution-bg:#f3f7fb;--caution-rule:#0b5d91}
*{box-sizing:border-box}
html{background:var(--tint)}
body{margin:0;color:var(--ink);background:var(--paper);font:16px/1.55 system-ui,-apple-system,"Segoe UI",
"Noto Sans","Liberation Sans",Arial,sans-serif;max-width:76rem;margin-inline:auto;padding:0 2rem 3rem;
font-variant-numeric:tabular-nums}
header.masthead{border-bottom:3px solid var(--accent);padding:2.2rem 0 1.2rem;margin-bottom:1.5rem}
.masthead .kicker{text-transform:uppercase;letter-spacing:.12em;font-size:.78rem;color:var(--accent);margin:0}
h1{font-size:2rem;line-height:1.2;margin:.3rem 0 .4rem}
.masthead .subtitle{color:var(--muted);margin:0}
dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.15rem 1rem;margin:1rem 0 0;font-size:.92rem}
dl.facts dt{color:var(--muted)}dl.facts dd{margin:0}
nav.contents{background:var(--tint);border-radius:6px;padding:.8rem 1.2rem;margin:1.2rem 0 2rem}
nav.contents h2{font-size:1rem;margin:0 0 .3rem;border:0;padding:0}
nav.contents ol{margin:0;padding-left:1.3rem;columns:2;column-gap:2rem}
nav.contents li{break-inside:avoid}
a{color:var(--accent)}
section{margin-top:2.4rem}
section section{margin-top:1.6rem}
h2{font-size:1.5rem;border-bottom:1px solid var(--rule);padding-bottom:.25rem;margin:0 0 .8rem}
h3{font-size:1.2rem;margin:0 0 .6rem}
h4{font-size:1.02rem;margin:0 0 .5rem;color:var(--muted)}
p{margin:.5rem 0;max-width:48rem}
p.note,ul.note{color:var(--muted);font-size:.9rem}
.caution{background:var(--caution-bg);border-left:4px solid var(--caution-rule);padding:.7rem 1rem;
border-radius:0 6px 6px 0;max-width:none}
.table-wrap{overflow-x:auto;margin:.8rem 0 1.2rem}
table{border-collapse:collapse;font-size:.88rem;min-width:50%;max-width:100%}
caption{text-align:left;font-weight:600;padding:.2rem 0 .45rem;caption-side:top}
th,td{padding:.3rem .6rem;border-bottom:1px solid var(--rule);vertical-align:top;text-align:left}
thead th{border-bottom:2px solid var(--ink);font-weight:600;overflow-wrap:normal;hyphens:auto}
tbody tr:nth-child(even){background:var(--tint)}
tbody th{font-weight:500}
td.num,th.num{text-align:right;white-space:nowrap}
td.wide{min-width:12rem;max-width:24rem;overflow-wrap:anywhere}
td.flags,th.flags{white-space:normal;min-width:7rem}
ol.findings{margin:.4rem 0 1rem;padding-left:1.4rem;max-width:52rem}
ol.findings li{margin:.35rem 0}
ol.findings a{font-size:.88rem;white-space:nowrap}
details{margin:.6rem 0 1rem;border:1px solid var(--rule);border-radius:6px;padding:.1rem .9rem}
details[open]{padding-bottom:.6rem}
summary{cursor:pointer;font-weight:600;color:var(--accent);padding:.45rem 0}
.bar{display:inline-block;height:.7em;background:var(--accent);opacity:.55;vertical-align:baseline;
border-radius:1px;margin-right:.3rem}
td.bar-cell{min-width:9rem;white-space:nowrap}
p.table-note{font-size:.82rem;color:var(--muted);margin:.15rem 0}
.flag{display:inline-block;background:var(--flag-bg);color:var(--flag-ink);border:1px solid #f0c89a;
border-radius:3px;padding:0 .35rem;margin:0 .2rem .1rem 0;font-size:.78rem;white-space:nowrap}
figure{margin:1rem 0 1.6rem;break-inside:avoid;page-break-inside:avoid}
figure svg{display:block;width:100%;max-width:44rem;height:auto}
figcaption{font-size:.86rem;color:var(--muted);margin-top:.35rem;max-width:48rem}
figcaption strong{color:var(--ink)}
.figure-row{display:grid;grid-template-columns:repeat(auto-fit,minmax(20rem,1fr));gap:1.2rem;align-items:start}
footer{margin-top:3rem;border-top:1px solid var(--rule);padding-top:.8rem;font-size:.82rem;color:var(--muted)}
@media (max-width:40rem){body{padding:0 1rem 2rem}nav.contents ol{columns:1}}
@media print{
@page{size:A4;margin:16mm 14mm}
html,body{background:#fff}
body{max-width:none;padding:0;font-size:10pt}
nav.contents{break-after:page}
section#findings{break-after:page}
h2,h3,h4{break-after:avoid;page-break-after:avoid}
table,figure,.caution{break-inside:avoid;page-break-inside:avoid}
.table-wrap{overflow:visible}
table{font-size:7.5pt;width:auto}th,td{padding:.15rem .3rem}thead th{white-space:normal}
td.wide{min-width:0;max-width:none}td.flags,th.flags{min-width:0}td.bar-cell{min-width:0}
details{border:0;padding:0}details>summary{list-style:none;color:var(--ink)}
details::details-content{content-visibility:visible;display:block}
section.scale,section#quality,section#structure,section#methods{break-before:page}
.figure-row{display:block}
a{color:inherit;text-decoration:none}
}
""".strip()


FOOTERS = {
    True: "Every number in this page is also in results.json at full precision.",
    False: "This page is the whole report: its figures are inside it. Run the report without --single-file "
           "for results.json, report.md and scores.csv.",
}


def esc(text: object) -> str:
    """Escape any text for HTML content and attribute values (quotes included)."""
    return html.escape(str(text), quote=True)


# ------------------------------------------------------------------------------------------------ figures

def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def sanitise_svg(svg_text: str, *, prefix: str, title: str, description: str) -> str:
    """Rebuild an SVG file's markup so it is safe and unambiguous inside the page.

    Drops every element outside :data:`SVG_ELEMENTS`, comments, processing instructions, event handler
    attributes and links that leave the document; gives every ``id`` the figure's ``prefix`` (figures
    made by the same library reuse ids); adds ``role="img"``, a ``<title>`` and a ``<desc>``.
    """
    parser = ElementTree.XMLParser()  # no DTD loading, no external entities: the standard library refuses them
    root = ElementTree.fromstring(svg_text.encode("utf-8"), parser=parser)
    if _local(root.tag) != "svg":
        raise ValueError("not an SVG document")
    ids = {element.get("id") for element in root.iter() if element.get("id")}

    def clean(element: ElementTree.Element) -> None:
        for child in list(element):
            name = _local(child.tag) if isinstance(child.tag, str) else ""
            if name not in SVG_ELEMENTS or name == "metadata":
                element.remove(child)
                continue
            clean(child)
        for attribute in list(element.attrib):
            value = element.attrib[attribute]
            name = _local(attribute).lower()
            if name.startswith("on"):
                del element.attrib[attribute]
            elif name == "href":
                if value.startswith("#") and value[1:] in ids:
                    element.attrib[attribute] = f"#{prefix}-{value[1:]}"
                elif not value.startswith(("data:image/png;", "data:image/jpeg;")):
                    del element.attrib[attribute]
            elif name == "id":
                element.attrib[attribute] = f"{prefix}-{value}"
            elif "url(" in value:
                element.attrib[attribute] = _URL_REFERENCE.sub(
                    lambda m: f"url(#{prefix}-{m.group(1)})" if m.group(1) in ids else "none", value)
            if name == "style" and _UNSAFE_STYLE.search(element.attrib.get(attribute, "")):
                del element.attrib[attribute]
        if _local(element.tag) == "style" and element.text and _UNSAFE_STYLE.search(element.text):
            element.text = ""

    clean(root)
    for existing in [c for c in root if _local(c.tag) in ("title", "desc")]:
        root.remove(existing)
    title_element = ElementTree.Element(f"{{{SVG_NS}}}title", {"id": f"{prefix}-title"})
    title_element.text = title
    desc_element = ElementTree.Element(f"{{{SVG_NS}}}desc", {"id": f"{prefix}-desc"})
    desc_element.text = description
    root.insert(0, desc_element)
    root.insert(0, title_element)
    root.set("role", "img")
    root.set("aria-labelledby", f"{prefix}-title {prefix}-desc")
    root.set("focusable", "false")
    for size in ("width", "height"):
        root.attrib.pop(size, None)  # the viewBox keeps the proportions; CSS sets the width
    ElementTree.register_namespace("", SVG_NS)
    ElementTree.register_namespace("xlink", XLINK_NS)
    return ElementTree.tostring(root, encoding="unicode", short_empty_elements=True)


def _figure(block: FigureBlock, folder: Path, number: int) -> str:
    svg_path = folder / f"{block.stem}.svg"
    caption = (f"<figcaption><strong>Figure {number}.</strong> {esc(block.title)}. "
               f"{esc(block.description)}</figcaption>")
    try:
        svg = sanitise_svg(svg_path.read_text(encoding="utf-8"), prefix=f"fig{number}", title=block.title,
                           description=block.description)
    except (OSError, ValueError, ElementTree.ParseError) as error:
        reason = getattr(error, "strerror", None) or str(error)
        return (f'<figure class="missing"><p class="note">Figure {number} could not be embedded '
                f"({esc(reason)}).</p>{caption}</figure>")
    return f'<figure id="figure-{number}">{svg}{caption}</figure>'


# ------------------------------------------------------------------------------------------------- tables

def _flags_html(value: object) -> str:
    if value is None or value == "":
        return ""
    return "".join(f'<span class="flag">{esc(code.strip())}</span>' for code in str(value).split(",") if code.strip())


def table_html(table: Table, *, decimals: int, flag_column: str | None = None) -> str:
    """One table, split into several side by side in reading order when it has too many columns to fit the
    page (each part repeats the row names and the flags)."""
    parts = split_wide_table(table, keep=(flag_column,) if flag_column else (), decimals=decimals)
    return "".join(_one_table_html(part, decimals=decimals, flag_column=flag_column) for part in parts)


def _bar_html(value: object) -> str:
    try:
        share = max(0.0, min(100.0, float(value)))  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return ""
    if share != share:
        return ""
    return f'<span class="bar" style="width:{share * 0.08:.2f}rem" aria-hidden="true"></span>'


def _one_table_html(table: Table, *, decimals: int, flag_column: str | None = None) -> str:
    """One table: a caption, ``<th scope="col">`` headers, the first cell of a row as its header."""
    numeric = [table.kind_of(c) != "text" for c in table.columns]
    # long texts (wording, messages, sources) get a readable measure instead of one endless line
    wide = [not is_number and any(len(str(row[i])) > 40 for row in table.rows)
            for i, is_number in enumerate(numeric)]
    parts = ['<div class="table-wrap"><table>', f"<caption>{esc(table.title)}</caption>", "<thead><tr>"]
    for column, is_number in zip(table.columns, numeric, strict=True):
        css = ' class="num"' if is_number else (' class="flags"' if column == flag_column else "")
        parts.append(f'<th scope="col"{css}>{esc(column)}</th>')
    parts.append("</tr></thead><tbody>")
    for row in table.rows:
        parts.append("<tr>")
        for position, (column, value, is_number, is_wide) in enumerate(zip(table.columns, row, numeric, wide, strict=True)):
            kind = table.kind_of(column)
            if column == flag_column:
                content = _flags_html(value)
            elif kind == "bar":
                content = _bar_html(value) + esc(format_value(value, "pct", decimals))
            else:
                content = esc(format_value(value, kind, decimals))
            css = (' class="bar-cell"' if kind == "bar" else ' class="num"' if is_number
                   else ' class="flags"' if column == flag_column else (' class="wide"' if is_wide else ""))
            if position == 0:
                parts.append(f'<th scope="row"{css}>{content}</th>')
            else:
                parts.append(f"<td{css}>{content}</td>")
        parts.append("</tr>")
    parts.append("</tbody></table>")
    for note in table.notes:
        parts.append(f'<p class="table-note">Note. {esc(note)}</p>')
    parts.append("</div>")
    return "".join(parts)


# ----------------------------------------------------------------------------------------------- document

class _Counter:
    def __init__(self) -> None:
        self.value = 0

    def next(self) -> int:
        self.value += 1
        return self.value


def _block(block: Block, *, folder: Path, decimals: int, figures: _Counter) -> str:
    if isinstance(block, Paragraph):
        css = {"note": ' class="note"', "caution": ' class="caution"'}.get(block.tone, "")
        return f"<p{css}>{esc(block.text)}</p>"
    if isinstance(block, Bullets):
        css = ' class="note"' if block.tone == "note" else ""
        return f"<ul{css}>" + "".join(f"<li>{esc(item)}</li>" for item in block.items) + "</ul>"
    if isinstance(block, TableBlock):
        return table_html(block.table, decimals=decimals, flag_column=block.flag_column)
    if isinstance(block, FigureBlock):
        return _figure(block, folder, figures.next())
    if isinstance(block, FigureRow):
        return '<div class="figure-row">' + "".join(_figure(f, folder, figures.next()) for f in block.figures) + "</div>"
    if isinstance(block, Findings):
        items = "".join(f'<li>{esc(text)} <a href="#{esc(anchor)}">detail</a></li>' for text, anchor in block.items)
        return f'<ol class="findings">{items}</ol>'
    if isinstance(block, Details):
        inner = "".join(_block(b, folder=folder, decimals=decimals, figures=figures) for b in block.blocks)
        return f"<details><summary>{esc(block.summary)}</summary>{inner}</details>"
    raise TypeError(f"unknown report block {type(block).__name__}")


def _section(section: Section, level: int, *, folder: Path, decimals: int, figures: _Counter) -> str:
    css = ' class="scale"' if section.anchor.startswith("scale-") and level == 2 else ""
    parts = [f'<section id="{esc(section.anchor)}"{css} aria-labelledby="{esc(section.anchor)}-h">',
             f'<h{level} id="{esc(section.anchor)}-h">{esc(section.title)}</h{level}>']
    parts.extend(_block(b, folder=folder, decimals=decimals, figures=figures) for b in section.blocks)
    parts.extend(_section(s, min(level + 1, 6), folder=folder, decimals=decimals, figures=figures)
                 for s in section.subsections)
    parts.append("</section>")
    return "\n".join(parts)


def _contents(sections: tuple[Section, ...]) -> str:
    """The top sections, each scale's parts on the same line (a short list keeps the findings near the top)."""
    items = []
    for section in sections:
        parts = ""
        if section.anchor.startswith("scale-") and section.subsections:
            parts = ": " + " · ".join(f'<a href="#{esc(s.anchor)}">{esc(s.title.lower())}</a>'
                                      for s in section.subsections)
        items.append(f'<li><a href="#{esc(section.anchor)}">{esc(section.title)}</a>{parts}</li>')
    return f"<ol>{''.join(items)}</ol>" if items else ""


def render_html(document: ReportDocument, *, folder: str | Path, companion_files: bool = True) -> str:
    """The whole page. ``folder`` is the report folder holding the figures named in ``document``;
    ``companion_files`` says whether results.json and scores.csv are written beside the page."""
    folder = Path(folder)
    figures = _Counter()
    facts = "".join(f"<dt>{esc(k)}</dt><dd>{esc(v)}</dd>" for k, v in document.facts)
    rendered = [_section(s, 2, folder=folder, decimals=document.decimals, figures=figures)
                for s in document.sections]
    # the findings come first, before the table of contents
    first = rendered[0] if document.sections and document.sections[0].anchor == "findings" else ""
    body = "\n".join(rendered[1:] if first else rendered)
    lead = "".join(f"<p>{esc(p)}</p>" for p in document.lead)
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        # the page needs nothing from outside: forbid scripts and every fetch except inline styles and images
        "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; "
        "img-src data:\">\n"
        '<meta name="generator" content="scalewright">\n'
        f"<title>{esc(document.title)}</title>\n<style>\n{CSS}\n</style>\n</head>\n<body>\n"
        '<header class="masthead">\n<p class="kicker">Scale report</p>\n'
        f"<h1>{esc(document.title)}</h1>\n<p class=\"subtitle\">{esc(document.subtitle)}</p>\n"
        f'<dl class="facts">{facts}</dl>\n</header>\n'
        f'<main>\n{lead}\n{first}\n<nav class="contents" aria-labelledby="contents-h"><h2 id="contents-h">'
        f"Contents</h2>{_contents(document.sections)}</nav>\n{body}\n</main>\n"
        f"<footer><p>Made with scalewright. {FOOTERS[companion_files]}</p></footer>\n</body>\n</html>\n"
    )
