"""The report's sections beyond the scales: findings, data quality, structure, confirmatory models, methods,
cautions and provenance."""
from __future__ import annotations

from typing import Any

from .methods import CAUTIONS, METHODS, thresholds_used
from .numbers import format_value
from .report_layout import (
    Bullets,
    Details,
    FigureRow,
    Findings,
    Paragraph,
    Section,
    TableBlock,
)
from .report_scales import FigureMap, scale_label
from .table import Table

# ---------------------------------------------------------------------------------------------- quality

def _reading_table(results: Any) -> Table:
    reading = results.reading
    listed = reading.get("missing_texts_by_column", {})
    columns = list(dict.fromkeys([*reading.get("refused_by_column", {}), *reading.get("missing_code_by_column", {}),
                                  *reading.get("blank_by_column", {}), *reading.get("texts_by_column", {}), *listed]))
    rows = tuple((column, reading.get("blank_by_column", {}).get(column, 0),
                  reading.get("missing_code_by_column", {}).get(column, 0),
                  sum(listed.get(column, {}).values()),
                  reading.get("texts_by_column", {}).get(column, 0),
                  reading.get("refused_by_column", {}).get(column, 0)) for column in columns)
    return Table(title="What reading the data changed, by column",
                 columns=("column", "blank", "'no answer' code", "'no answer' text", "answer text read as its code",
                          "refused (set to missing)"),
                 rows=rows, kinds={"column": "text", "blank": "int", "'no answer' code": "int",
                                   "'no answer' text": "int",
                                   "answer text read as its code": "int", "refused (set to missing)": "int"},
                 notes=() if rows else ("every value was a plain answer code",), key="reading")


def _scored_table(results: Any) -> Table:
    rows = tuple((scale_label(f), f.scores.k, f.scores.required, f.scores.n_scored, f.scores.n_unscored)
                 for f in results.scales.values())
    return Table(title="Respondents scored", columns=("scale", "items", "needs answered", "scored", "not scored"),
                 rows=rows, kinds={"scale": "text", "items": "int", "needs answered": "int", "scored": "int",
                                   "not scored": "int"}, key="scored")


def _screen_blocks(screen: Any, decimals: int, *, n_rows: int = 0) -> list[Any]:
    from .quality import screen_tables

    if screen is None and n_rows:  # a report of a file read in blocks leaves the screen out
        return [Paragraph("The careless-responding screen is not in this report: the data file was read in "
                          "blocks, and the screen judges every respondent's row (see the notes above).", tone="note")]
    if screen is None:
        return [Paragraph("The careless-responding screen was not run: there are no respondents.", tone="note")]
    document = screen.to_dict()
    summary = document["summary"]
    share = summary["flagged_pct"]
    blocks: list[Any] = [Paragraph(
        f"The careless-responding screen flagged {summary['n_flagged']} of {summary['n']} respondents "
        f"({format_value(share, 'pct')}%). Flagged respondents are kept in every "
        "analysis of this report: a flag marks a record to look at, not a verdict. "
        + (f"{screen.records_file} lists every respondent with every index (results.json the first "
           f"{len(document['respondents'])} flagged)." if getattr(screen, "records_file", None)
           else "results.json lists every respondent with every index."))]
    tables = tuple(TableBlock(t) for t in screen_tables(document, flagged_only=True, max_rows=MAX_RESPONDENT_ROWS))
    if tables:
        blocks.append(Details("The screen's indices and the flagged respondents", tables))
    return blocks


#: flagged respondents listed in the page (all of them are in results.json)
MAX_RESPONDENT_ROWS = 40


def quality_section(results: Any, decimals: int) -> Section:
    from .tally import tally_tables

    kept = results.n_rows
    lead = f"{kept + results.n_excluded} respondent rows were read"
    lead += (f"; {results.n_excluded} were set aside as listed in {results.options.exclude}, leaving {kept}."
             if results.n_excluded else f" and all {kept} are analysed.")
    refused = results.reading.get("refused_total", 0)
    if refused:
        lead += f" {refused} value(s) were neither an answer nor a 'no answer' code and were treated as missing."
    blocks: list[Any] = [Paragraph(lead), Details("What reading the data changed, column by column",
                                                  (TableBlock(_reading_table(results)),))]
    if results.input_notes:
        blocks.append(Bullets(tuple(results.input_notes), tone="note"))
    blocks.append(TableBlock(_scored_table(results)))
    subsections = [Section(anchor="quality-screen", title="Careless responding",
                           blocks=tuple(_screen_blocks(results.screen, decimals, n_rows=results.n_rows)))]
    if results.group_tallies:
        subsections.append(Section(anchor="quality-groups", title="Who answered", blocks=(
            Details("Respondents by each grouping column", tuple(
                TableBlock(t) for t in tally_tables(list(results.group_tallies), decimals=decimals))),)))
    return Section(anchor="quality", title="Data quality", blocks=tuple(blocks), subsections=tuple(subsections))


# -------------------------------------------------------------------------------------------- structure

def structure_section(results: Any, figures: FigureMap, decimals: int) -> Section:
    from .structure import structure_tables

    structure = results.structure
    if structure is None:
        return Section(anchor="structure", title="Structure",
                       blocks=(Paragraph("The structure was not analysed: it needs at least two items.", tone="note"),))
    blocks: list[Any] = []
    suggested = structure.parallel.suggested_factors if structure.parallel is not None else None
    em = structure.missing is not None and structure.missing.method == "em"
    text = (f"The structure uses the {structure.n_used} respondents who answered "
            + ("at least one item (EM over every item of the file)" if em else "every item")
            + (f" ({structure.n_set_aside} set aside)" if structure.n_set_aside else "") + ".")
    if suggested is not None:
        text += (f" Parallel analysis suggests {suggested} factor(s) for {len(results.scales)} scale(s); "
                 f"{0 if structure.solution is None else structure.solution.n_factors} were fitted "
                 f"({structure.n_factors_rule}).")
    blocks.append(Paragraph(text))
    row = tuple(f for f in (figures.get(("scree",)), figures.get(("loadings",))) if f is not None)
    if row:
        blocks.append(FigureRow(row))
    blocks.append(Details("Adequacy, parallel analysis and loadings",
                          tuple(TableBlock(t) for t in structure_tables(structure))))
    from .messages import describe
    from .missing import missing_lines

    notes = (*(describe(n) for n in structure.notes), *missing_lines(structure.missing))
    if notes:
        blocks.append(Bullets(tuple(notes), tone="note"))
    return Section(anchor="structure", title="Structure", blocks=tuple(blocks))


def confirm_section(results: Any, figures: FigureMap) -> Section | None:
    """The confirmatory models: fit with verdicts, the loadings figure, omegas, latent correlations, hints."""
    from .confirm import confirm_tables, model_notes

    confirm = getattr(results, "confirm", None)
    if confirm is None:
        return None
    blocks: list[Any] = [Paragraph(
        "Does the structure of the scale file hold? Each scale is fitted as one factor, and the whole file as "
        "one model with a factor per scale, by maximum likelihood on the item covariances of the respondents "
        "who answered every item of the model.")]
    whole = confirm.models.get("all")
    if whole is not None:
        blocks.append(Bullets(tuple(model_notes(whole)), tone="note"))
    figure = figures.get(("confirm-loadings",))
    if figure is not None:
        blocks.append(FigureRow((figure,)))
    blocks.append(Details("Fit, loadings, omegas, correlations, residuals and hints",
                          tuple(TableBlock(t) for t in confirm_tables(confirm))))
    return Section(anchor="confirm", title="Confirmatory models", blocks=tuple(blocks))


# -------------------------------------------------------------------------------------- methods and rest

def methods_section(results: Any) -> Section:
    methods = Table(title="Statistics and their sources", columns=("topic", "statistic", "how", "source"),
                    rows=tuple((m.topic, m.statistic, m.formula, m.citation) for m in METHODS),
                    kinds={c: "text" for c in ("topic", "statistic", "how", "source")}, key="methods")
    thresholds = Table(title="Thresholds used in this report", columns=("topic", "rule", "value", "source"),
                       rows=tuple((t.topic, t.rule, t.value, t.source) for t in thresholds_used(results)),
                       kinds={c: "text" for c in ("topic", "rule", "value", "source")}, key="thresholds")
    return Section(anchor="methods", title="Methods", blocks=(
        Paragraph("Every number in this report comes from one of the methods below; every flag and label from "
                  "one of the thresholds. Statistics that cannot exceed 1 in size are printed without a leading "
                  "zero; p-values below .001 as < .001. A dash marks a statistic that could not be computed; the "
                  "note beside its table says why."),
        Details("Statistics and their sources", (TableBlock(methods),)),
        Details("Thresholds used in this report", (TableBlock(thresholds),))))


def cautions_section() -> Section:
    return Section(anchor="cautions", title="Cautions", blocks=tuple(Paragraph(c, tone="caution") for c in CAUTIONS))


def provenance_rows(results: Any) -> tuple[tuple[str, str], ...]:
    info = results.info
    options = results.options
    return (
        ("tool", f"scalewright {results.version}"),
        ("report date", results.created),
        ("data file", info.data or "–"),
        ("data SHA-256", info.data_sha256 or "–"),
        ("scale file", info.scales or "–"),
        ("scale file SHA-256", info.scales_sha256 or "–"),
        ("subgroup columns", ", ".join(options.by) or "none"),
        ("seed", str(options.seed)),
        ("parallel analysis iterations", str(options.iterations)),
        ("confidence level", f"{100 * options.confidence_level:g}%"),
        ("smallest subgroup / cell", f"{options.min_group} / {options.min_cell}"),
        ("lenient reading", "yes" if options.lenient else "no"),
        ("respondents set aside from", options.exclude or "none"),
        ("decimals", str(options.decimals)),
        ("duration column", options.duration_column or "none"),
    )


def provenance_section(results: Any) -> Section:
    table = Table(title="How this report was made", columns=("what", "value"), rows=provenance_rows(results),
                  kinds={"what": "text", "value": "text"}, key="provenance")
    return Section(anchor="provenance", title="Provenance", blocks=(
        TableBlock(table),
        Paragraph("The same inputs and options give the same numbers. results.json holds every result at full "
                  "precision; scores.csv one row per respondent, in the data file's order.", tone="note")))


def findings_section(results: Any, decimals: int) -> Section:
    """The first section: what was found, one plain sentence per finding, each linked to its detail."""
    from ..analyses.findings import select_findings
    from .findings import finding_items

    items = finding_items(select_findings(results), decimals=decimals)
    blocks: list[Any] = []
    if items:
        blocks.append(Findings(items))
    else:
        blocks.append(Paragraph("No finding met the rules for this list; the sections below hold every result.",
                                tone="note"))
    blocks.append(Paragraph("Findings are chosen by fixed rules (see Methods): scale reliability, subgroup "
                            "differences that are clear beyond chance and at least small, items that hurt a "
                            "scale, floor, ceiling and two-peaked scores, and the data-quality screen.", tone="note"))
    blocks.append(Paragraph(CAUTIONS[0], tone="caution"))
    return Section(anchor="findings", title="Findings", blocks=tuple(blocks))


def respondent_counts(results: Any) -> tuple[tuple[str, str], ...]:
    """Read, set aside (and why) and analysed: the header's counts, which always add up."""
    read = results.n_rows + results.n_excluded
    aside = "none"
    if results.n_excluded:
        aside = f"{results.n_excluded} (listed in {results.options.exclude})" if results.options.exclude \
            else str(results.n_excluded)
    return (("Respondents read", str(read)), ("Set aside", aside), ("Analysed", str(results.n_rows)))
