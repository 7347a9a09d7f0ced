"""What the report says: a :class:`ReportDocument` built from a ``ReportResults`` and its figure files.

This module words sentences and picks tables; numbers are formatted with :func:`format_value` and never
computed here. Tables come from each analysis' own ``present`` module wherever one exists.
"""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .. import __version__
from .methods import CAUTIONS, METHODS, thresholds_used
from .numbers import format_value
from .report_layout import (
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

#: figure key -> figure; keys: ("answers", scale), ("histogram", scale), ("boxplot", scale, column),
#: ("scree",), ("loadings",)
FigureMap = Mapping[tuple[str, ...], FigureBlock]


def _n(value: Any, kind: str = "num", decimals: int = 2) -> str:
    return format_value(value, kind, decimals)


def scale_label(findings: Any) -> str:
    title = findings.scale.title or findings.name
    return title if title == findings.name else f"{title} ({findings.name})"


def _alpha_with_ci(result: Any, decimals: int) -> str:
    if result is None:
        return "–"
    low, high = result.alpha_ci
    text = _n(result.alpha, "bounded", decimals)
    if text != "–" and _n(low) != "–":
        text += f" [{_n(low, 'bounded', decimals)}, {_n(high, 'bounded', decimals)}]"
    return text


def _without(table: Table, column: str) -> Table:
    """The same table without one column (the per-scale sections need no ``scale`` column)."""
    if column not in table.columns:
        return table
    position = table.columns.index(column)
    return Table(title=table.title, columns=table.columns[:position] + table.columns[position + 1:],
                 rows=tuple(row[:position] + row[position + 1:] for row in table.rows),
                 kinds={k: v for k, v in table.kinds.items() if k != column}, notes=table.notes, key=table.key)


def _retitled(table: Table, title: str) -> Table:
    return Table(title=title, columns=table.columns, rows=table.rows, kinds=table.kinds, notes=table.notes,
                 key=table.key)


# ---------------------------------------------------------------------------------------------- summary

def summary_table(results: Any, decimals: int) -> Table:
    """One row per scale: items, n, alpha [CI], omega, mean, sd, shape."""
    level = f"{100 * results.options.confidence_level:g}%"
    alpha_column = f"alpha [{level} CI]"
    rows = []
    for findings in results.scales.values():
        overall = findings.reliability.overall if findings.reliability is not None else None
        shape = findings.shape.overall if findings.shape is not None else None
        rows.append((scale_label(findings), findings.scale.k, findings.scores.n_scored,
                     _alpha_with_ci(overall, decimals), None if overall is None else overall.omega_total,
                     None if shape is None else shape.mean, None if shape is None else shape.sd,
                     (shape.shape if shape is not None and shape.shape else "–")))
    return Table(title="Every scale at a glance",
                 columns=("scale", "items", "n", alpha_column, "omega", "mean", "sd", "shape"),
                 rows=tuple(rows),
                 kinds={"scale": "text", "items": "int", "n": "int", alpha_column: "text", "omega": "bounded",
                        "shape": "text"},
                 notes=(f"n: respondents with a score. CI: Feldt {level} interval of alpha. omega: omega total "
                        "of a one-factor model. mean and sd: of the scores, on each scale's own score range.",),
                 key="summary")


# ----------------------------------------------------------------------------------------------- scales

def _item_flags(findings: Any, structure: Any) -> dict[str, list[str]]:
    flags: dict[str, list[str]] = {item: [] for item in findings.scale.items}
    if findings.reliability is not None:
        for flag in findings.reliability.overall.flags:
            for item in (flag.items or ((flag.item,) if flag.item else ())):
                if item in flags and flag.code not in flags[item]:
                    flags[item].append(flag.code)
    if structure is not None:
        for flag in structure.flags:
            if flag.item in flags and flag.code not in flags[flag.item] and flag.scale in (None, findings.name):
                flags[flag.item].append(flag.code)
    return flags


def item_table(findings: Any, structure: Any, decimals: int) -> Table | None:
    """The reliability module's item table for one scale, every flag of each item right after its name."""
    from .reliability import reliability_tables

    if findings.reliability is None:
        return None
    tables = {t.key: t for t in reliability_tables([findings.reliability])}
    items = _without(tables["reliability_items"], "scale")
    flags = _item_flags(findings, structure)
    position = items.columns.index("item") + 1
    rows = tuple(row[:position] + (", ".join(flags.get(row[0], [])),) + row[position:] for row in items.rows)
    columns = items.columns[:position] + ("flags",) + items.columns[position:]
    return Table(title=f"Items of {scale_label(findings)}", columns=columns, rows=rows,
                 kinds={**items.kinds, "flags": "text"}, notes=items.notes, key="items")


def wording_table(findings: Any) -> Table | None:
    """Each item's wording and keying, so the statistics table stays narrow enough for the page."""
    scale = findings.scale
    if not scale.wording:
        return None
    rows = tuple((item, scale.wording.get(item, ""), "yes" if item in scale.reverse else "")
                 for item in scale.items)
    return Table(title=f"Wording of the items of {scale_label(findings)}", columns=("item", "wording", "reverse-worded"),
                 rows=rows, kinds={"item": "text", "wording": "text", "reverse-worded": "text"}, key="wording")


def reliability_table(findings: Any) -> Table | None:
    """The whole-sample row of the reliability module's summary table, with its notes."""
    from .reliability import reliability_tables

    if findings.reliability is None:
        return None
    summary = next(t for t in reliability_tables([findings.reliability]) if t.key == "reliability")
    overall = findings.reliability.overall
    from .missing import missing_lines

    notes = (f"CI: Feldt {100 * overall.confidence_level:g}% interval; missing answers handled "
             f"{overall.missing_handling}", *overall.notes, *missing_lines(overall.missing))
    table = _without(Table(title=f"Reliability of {scale_label(findings)}", columns=summary.columns,
                           rows=tuple(row for row in summary.rows if row[1] == "all"), kinds=summary.kinds,
                           notes=tuple(notes), key=summary.key), "scale")
    return _without(table, "sample")


def _flag_sentences(findings: Any) -> list[str]:
    if findings.reliability is None:
        return []
    flags = findings.reliability.overall.flags
    if not flags:
        return ["No item or scale statistic was flagged in the whole sample."]
    from .messages import flag_message

    return [f"{flag.item + ': ' if flag.item else ''}{flag_message(flag)} ({flag.code})" for flag in flags]


def narrative(findings: Any, results: Any, decimals: int) -> list[str]:
    """Plain sentences that say what the tables show for one scale."""
    scale = findings.scale
    scores = findings.scores
    sentences = []
    reverse = (f" ({len(scale.reverse)} reverse-worded: {', '.join(scale.reverse)})" if scale.reverse
               else " (none reverse-worded)")
    sentences.append(f"{scale_label(findings)} has {scale.k} items{reverse}. Score: {scale.describe_rule()}.")
    sentences.append(f"{scores.n_scored} of {results.n_rows} respondents have a score"
                     + (f"; {scores.n_unscored} answered too few items to be scored." if scores.n_unscored else "."))
    if findings.reliability is not None:
        overall = findings.reliability.overall
        level = f"{100 * overall.confidence_level:g}%"
        if _n(overall.alpha) == "–":
            sentences.append("Alpha could not be computed: " + ("; ".join(overall.notes) or "no usable rows") + ".")
        else:
            text = (f"Internal consistency: alpha = {_n(overall.alpha, 'bounded', decimals)}, {level} CI "
                    f"[{_n(overall.alpha_ci[0], 'bounded', decimals)}, {_n(overall.alpha_ci[1], 'bounded', decimals)}]"
                    + {"em": f", from the {overall.n_used} respondents who answered at least one item (EM)",
                       "pairwise": f", from at least {overall.n_used} respondents for each pair of items "
                                   "(pairwise)"}.get(overall.missing_handling,
                                                     f", from the {overall.n_used} respondents who answered "
                                                     "every item"))
            if _n(overall.omega_total) != "–":
                text += f"; omega total = {_n(overall.omega_total, 'bounded', decimals)}"
            sentences.append(text + ".")
    shape = findings.shape.overall if findings.shape is not None else None
    if shape is not None and _n(shape.mean) != "–":
        text = (f"Scores: M = {_n(shape.mean, 'num', decimals)}, SD = {_n(shape.sd, 'num', decimals)}, median "
                f"{_n(shape.median, 'num', decimals)}, from {_n(shape.min, 'num', decimals)} to "
                f"{_n(shape.max, 'num', decimals)}")
        if shape.shape:
            # the evidence behind the label is statistics jargon: it sits in the folded detail table
            text += f"; the distribution reads as {shape.shape}"
        sentences.append(text + ".")
        for side, effect, share in (("floor", shape.floor_effect, shape.floor_pct),
                                    ("ceiling", shape.ceiling_effect, shape.ceiling_pct)):
            if effect:
                sentences.append(f"A {side} effect: {_n(share, 'pct')}% of the scores sit at the "
                                 f"{'lowest' if side == 'floor' else 'highest'} possible value.")
    return sentences


def _shape_tables(findings: Any) -> list[Table]:
    """The shape module's tables of one score (all respondents and every subgroup), without the score column."""
    from .shape import shape_tables

    if findings.shape is None:
        return []
    wanted = {"shape": f"Distribution of the {scale_label(findings)} scores",
              "shape_evidence": "Shape and the evidence for it", "shape_percentiles": "Percentiles"}
    out = []
    for table in shape_tables([findings.shape], histograms=False):
        if table.key in wanted:
            out.append(_retitled(_without(table, "score"), wanted[table.key]))
    return out


def _subgroup_sections(findings: Any, results: Any, figures: FigureMap, decimals: int) -> list[Section]:
    """One section per grouping column: the comparison in a sentence, its figure and tables folded below."""
    from .groups import compare_tables, comparison_sentence

    sections = []
    reliability_tables_by_key: dict[str, Table] = {}
    if findings.reliability is not None and findings.reliability.groups:
        from .reliability import reliability_tables

        reliability_tables_by_key = {t.key: t for t in reliability_tables([findings.reliability])}
    for position, column in enumerate(results.options.by):
        blocks: list[Any] = []
        detail: list[Any] = []
        comparison = next((c for c in findings.comparisons if c.column == column), None)
        if comparison is not None:
            sentence = comparison_sentence(comparison, decimals=decimals)
            blocks.append(Paragraph(comparison_sentence(comparison, decimals=decimals, lead_only=True)))
            detail.append(Paragraph(sentence))
        invariance = invariance_sentence(results, findings.name, column)
        if invariance is not None:
            blocks.append(Paragraph(invariance, tone="note"))
        figure = figures.get(("boxplot", findings.name, column))
        if figure is not None:
            detail.append(figure)
        if comparison is not None:
            for table in compare_tables([comparison], decimals=decimals):
                # the sentence already stands above the tables
                notes = tuple(note for note in table.notes if note != sentence)
                detail.append(TableBlock(Table(title=table.title, columns=table.columns, rows=table.rows,
                                               kinds=table.kinds, notes=notes, key=table.key)))
        summary = reliability_tables_by_key.get("reliability")
        if summary is not None:
            rows = tuple(row for row in summary.rows if row[1] == "all" or str(row[1]).startswith(f"{column} = "))
            table = _without(Table(title=f"Reliability by {column}", columns=summary.columns, rows=rows,
                                   kinds=summary.kinds, key=summary.key), "scale")
            group = next((g for g in findings.reliability.groups if g.column == column), None)
            notes = tuple(group.notes) if group is not None else ()
            detail.append(TableBlock(Table(title=table.title, columns=table.columns, rows=table.rows,
                                           kinds=table.kinds, notes=notes, key=table.key)))
        tests = reliability_tables_by_key.get("reliability_comparisons")
        if tests is not None:
            rows = tuple(row for row in tests.rows if row[1] == column)
            if rows:
                detail.append(TableBlock(_without(_without(
                    Table(title=f"Alphas compared between levels of {column} (Feldt 1969, Holm-adjusted)",
                          columns=tests.columns, rows=rows, kinds=tests.kinds, key=tests.key), "scale"), "column")))
        if detail:
            blocks.append(Details(f"Scores, tests and reliability by {column}", tuple(detail)))
        sections.append(Section(anchor=f"scale-{findings.name}-by-{position + 1}", title=f"By {column}",
                                blocks=tuple(blocks)))
    return sections


def scale_section(findings: Any, results: Any, figures: FigureMap, decimals: int) -> Section:
    blocks: list[Any] = [Paragraph(" ".join(narrative(findings, results, decimals)))]
    flags = _flag_sentences(findings)
    if flags:
        blocks.append(Bullets(tuple(flags)))
    items_blocks: list[Any] = []
    item_detail: list[Any] = []
    reliability = reliability_table(findings)
    if reliability is not None:
        item_detail.append(TableBlock(reliability))
    table = item_table(findings, results.structure, decimals)
    if table is not None:
        item_detail.append(TableBlock(table, flag_column="flags"))
    wording = wording_table(findings)
    if wording is not None:
        item_detail.append(TableBlock(wording))
    answers = figures.get(("answers", findings.name))
    if answers is not None:
        item_detail.append(answers)
    if item_detail:
        items_blocks.append(Details(f"Reliability statistics, items, wording and answers of {scale_label(findings)}",
                                    tuple(item_detail)))
    distribution_blocks: list[Any] = []
    histogram = figures.get(("histogram", findings.name))
    if histogram is not None:
        distribution_blocks.append(histogram)
    shape_tables = [TableBlock(t) for t in _shape_tables(findings)]
    if shape_tables:
        distribution_blocks.append(Details("Descriptive statistics, shape evidence and percentiles",
                                           tuple(shape_tables)))
    anchor = f"scale-{findings.name}"
    subsections = [Section(anchor=f"{anchor}-items", title="Reliability and items", blocks=tuple(items_blocks)),
                   Section(anchor=f"{anchor}-distribution", title="Score distribution",
                           blocks=tuple(distribution_blocks))]
    subgroups = _subgroup_sections(findings, results, figures, decimals)
    if subgroups:
        subsections.append(Section(anchor=f"{anchor}-subgroups", title="Subgroups",
                                   blocks=(Paragraph("Reliability, scores and comparisons for each level of the "
                                                     "grouping columns. Levels too small to analyse are named, "
                                                     "not described.", tone="note"),),
                                   subsections=tuple(subgroups)))
    return Section(anchor=anchor, title=scale_label(findings), blocks=tuple(blocks), subsections=tuple(subsections))


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


def _screen_blocks(screen: Any, decimals: int) -> list[Any]:
    from .quality import screen_tables

    if screen is None:
        return [Paragraph("The careless-responding screen was not run: there are no respondents.", tone="note")]
    document = screen.to_dict()
    summary = document["summary"]
    share = summary["flagged_share"]
    blocks: list[Any] = [Paragraph(
        f"The careless-responding screen flagged {summary['n_flagged']} of {summary['n']} respondents "
        f"({_n(None if share is None else 100 * share, 'pct')}%). Flagged respondents are kept in every "
        "analysis of this report: a flag marks a record to look at, not a verdict. results.json lists every "
        "respondent with every index.")]
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
                           blocks=tuple(_screen_blocks(results.screen, decimals)))]
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
    from .missing import missing_lines

    notes = (*structure.notes, *missing_lines(structure.missing))
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


def invariance_sentence(results: Any, scale: str, column: str) -> str | None:
    """The invariance verdict of one scale across one column, worded, for beside its mean comparison."""
    from .confirm import sentence

    confirm = getattr(results, "confirm", None)
    result = None if confirm is None else confirm.invariance.get(column, {}).get(scale)
    if result is None or not result.notes:
        return None
    return "Measurement invariance: " + sentence(result.notes[0]) + "."


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
    return ReportDocument(title=results.title, subtitle="Reliability, structure and score distributions of "
                          "multi-item rating scales", lead=(), sections=tuple(sections), decimals=decimals,
                          facts=facts)
