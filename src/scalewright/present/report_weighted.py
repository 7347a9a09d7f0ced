"""The report's pages with survey weights: a section saying the results are weighted and what that can claim,
and the weighted tables beside the unweighted ones in every section (the commands' own tables)."""
from __future__ import annotations

from dataclasses import replace
from typing import Any

from .numbers import format_value
from .report_layout import Details, Paragraph, ReportDocument, Section, TableBlock
from .table import Table

WEIGHTS_ANCHOR = "weights"


def weights_lead(design: dict[str, Any]) -> str:
    """One paragraph: the weight column, n, n_eff, the sum of weights and the design effect."""
    zero = design["n_zero_weight"]
    refused = sum(design["n_weight_refused"].values())
    text = (f"The results of this report are weighted by the column {design['weight_column']}: "
            f"{design['n']} respondents, an effective sample size (Kish, 1965) of "
            f"{format_value(design['n_effective'], 'num', 1)}, a sum of weights of "
            f"{format_value(design['sum_of_weights'], 'num', 1)} and a design effect of the weights (1 + CV²) of "
            f"{format_value(design['design_effect'], 'num', 2)}.")
    if zero:
        text += f" {zero} respondent(s) with weight 0 stay in the scores and the screen but enter no estimate."
    if refused:
        text += f" {refused} respondent(s) whose weight could not be used were read leniently and left out likewise."
    return text


def weights_section(design: dict[str, Any], notes: tuple[Any, ...] = ()) -> Section:
    from .messages import describe

    return Section(anchor=WEIGHTS_ANCHOR, title="Survey weights", blocks=(
        Paragraph(weights_lead(design)),
        *(Paragraph(describe(n)) for n in notes),
        Paragraph("Reliability, score descriptions, subgroup comparisons and the shares of answers are shown "
                  "weighted beside the unweighted numbers (tables marked weighted). The structure and the "
                  "confirmatory models are fitted to the weighted covariance matrix; the careless-responding flags "
                  "stay each respondent's own, with the Mahalanobis distance measured from the weighted means and "
                  "covariance."),
        Paragraph("Intervals and tests use Kish's effective sample size in place of n. This accounts only for the "
                  "unequal weights: it is an approximation, and when the sample was drawn with strata or clusters "
                  "the intervals and tests need the design itself (strata, cluster ids, finite-population "
                  "corrections) and design-based survey software.", tone="caution")))


def weighted_summary_table(weighted: Any) -> Table:
    """Weighted alpha, omega, mean and sd of every scale: the summary table's numbers with the weights."""
    rows = []
    for name, summary in weighted.scores.items():
        block = weighted.reliability.get(name, {}).get("all", {})
        rows.append((name, block.get("alpha"), block.get("omega_total"), summary.n_effective, summary.mean,
                     summary.sd))
    return Table(title="Weighted summary", columns=("scale", "alpha", "omega", "effective n", "weighted mean",
                                                    "weighted sd"),
                 rows=tuple(rows), kinds={"scale": "text", "alpha": "bounded", "omega": "bounded"},
                 notes=("alpha and omega from the weighted covariance matrix; mean and sd weighted (sd with the "
                        "divisor sum(w) - sum(w²)/sum(w)); effective n after Kish (1965)",),
                 key="summary_weighted")


def _with_blocks(section: Section, extra: list[Any]) -> Section:
    return replace(section, blocks=(*section.blocks, *extra)) if extra else section


def _scale_blocks(name: str, weighted: Any) -> list[Any]:
    from .weighted import weighted_compare_table, weighted_reliability_table, weighted_shape_table

    tables = []
    if name in weighted.reliability:
        tables.append(weighted_reliability_table(name, weighted.reliability[name]))
    if name in weighted.shapes:
        tables.append(weighted_shape_table(name, weighted.shapes[name]))
    tables += [weighted_compare_table(c) for c in weighted.comparisons.get(name, {}).values()]
    if not tables:
        return []
    return [Details(f"Weighted reliability, description and comparisons of {name}",
                    tuple(TableBlock(t) for t in tables))]


def _quality_blocks(results: Any, weighted: Any) -> list[Any]:
    from .weighted import weighted_scores_table, weighted_screen_table, weighted_tally_table

    tables = [weighted_scores_table(weighted.scores)]
    if weighted.screen is not None and results.screen is not None:
        tables.append(weighted_screen_table(weighted.screen, results.screen.flag_counts(), results.screen.n))
    plain = {t.column: t for t in results.group_tallies}
    tables += [weighted_tally_table(shares, plain[column]) for column, shares in weighted.tallies.items()]
    return [Details("Weighted scores, flagged shares and respondents by grouping column",
                    tuple(TableBlock(t) for t in tables))]


def weighted_document(document: ReportDocument, results: Any) -> ReportDocument:
    """``document`` with the weights section after the findings and the weighted tables in each section."""
    weighted = getattr(results, "weighted", None)
    if weighted is None:
        return document
    sections: list[Section] = []
    for section in document.sections:
        if section.anchor.startswith("scale-"):
            name = next((n for n in results.scales if section.anchor == f"scale-{n}"), None)
            section = _with_blocks(section, _scale_blocks(name, weighted) if name else [])
        elif section.anchor == "quality":
            section = _with_blocks(section, _quality_blocks(results, weighted))
        elif section.anchor == "summary":
            section = _with_blocks(section, [TableBlock(weighted_summary_table(weighted))])
        sections.append(section)
        if section.anchor == "findings":
            sections.append(weights_section(weighted.design, weighted.notes))
    if not any(s.anchor == WEIGHTS_ANCHOR for s in sections):
        sections.insert(0, weights_section(weighted.design, weighted.notes))
    design = weighted.design
    facts = (*document.facts, ("Weighted by", f"{design['weight_column']} (effective n "
                                              f"{format_value(design['n_effective'], 'num', 1)})"))
    return replace(document, sections=tuple(sections), facts=facts)
