"""The report's summary table and its section per scale: items, reliability, wording, shape and subgroups."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .messages import describe
from .numbers import format_value
from .report_layout import (
    Bullets,
    Details,
    FigureBlock,
    Paragraph,
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
             f"{overall.missing_handling}", *(describe(n) for n in overall.notes), *missing_lines(overall.missing))
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
            sentences.append("Alpha could not be computed: " + ("; ".join(describe(n) for n in overall.notes) or "no usable rows") + ".")
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
            notes = tuple(describe(n) for n in group.notes) if group is not None else ()
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


def invariance_sentence(results: Any, scale: str, column: str) -> str | None:
    """The invariance verdict of one scale across one column, worded, for beside its mean comparison."""
    from .confirm import sentence

    confirm = getattr(results, "confirm", None)
    result = None if confirm is None else confirm.invariance.get(column, {}).get(scale)
    if result is None or not result.notes:
        return None
    return "Measurement invariance: " + sentence(result.notes[0]) + "."
