"""What the report says: a :class:`ReportDocument` built from a ``ReportResults`` and its figure files.

This module words sentences and picks tables; numbers are formatted with :func:`format_value` and never
computed here. Tables come from each analysis' own ``present`` module wherever one exists.
"""
from __future__ import annotations

from typing import Any

from .. import __version__
from .report_layout import (
    Paragraph,
    ReportDocument,
    Section,
    TableBlock,
)
from .report_scales import FigureMap, scale_section, summary_table
from .report_sections import (
    cautions_section,
    confirm_section,
    findings_section,
    methods_section,
    provenance_section,
    quality_section,
    respondent_counts,
    structure_section,
)


def build_document(results: Any, *, figures: FigureMap, decimals: int = 2) -> ReportDocument:
    """The whole report, in reading order: findings first, then the summary table and the detail."""
    sections = [findings_section(results, decimals), Section(anchor="summary", title="Summary", blocks=(
        Paragraph(f"{len(results.scales)} scale(s), {results.n_rows} respondents analysed"
                  + (f", subgroups by {', '.join(results.options.by)}" if results.options.by else "") + "."),
        TableBlock(summary_table(results, decimals))))]
    sections += [scale_section(f, results, figures, decimals) for f in results.scales.values()]
    sections += [quality_section(results, decimals), structure_section(results, figures, decimals)]
    confirm = confirm_section(results, figures)
    if confirm is not None:
        sections.append(confirm)
    sections += [methods_section(results), cautions_section(), provenance_section(results)]
    info = results.info
    facts = (("Data", info.data or "–"), ("Scale file", info.scales or "–"), *respondent_counts(results),
             ("Date", results.created), ("Made with", f"scalewright {__version__}"))
    from .report_weighted import weighted_document

    return weighted_document(ReportDocument(title=results.title, subtitle="Reliability, structure and score "
                                            "distributions of multi-item rating scales", lead=(),
                                            sections=tuple(sections), decimals=decimals, facts=facts), results)
