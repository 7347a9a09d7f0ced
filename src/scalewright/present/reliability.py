"""Tables of the reliability results: one block per scale (summary, items, answer counts, flags, tests).

The same tables serve every rendering: in CSV, rows of the tables keyed ``reliability`` give one row per
scale (and subgroup), rows keyed ``reliability_items`` one row per item. Nothing is computed here.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping

from ..stats.reliability import ScaleReliability
from ..stats.reliability_groups import ScaleReliabilityReport
from .messages import describe, flag_message
from .missing import missing_lines
from .ordinal import ordinal_reliability_table, ordinal_sentences
from .table import Table

SUMMARY_COLUMNS = ("scale", "sample", "rows", "n used", "k", "alpha", "CI low", "CI high", "std alpha",
                   "omega", "lambda2", "lambda6", "mean r", "min r", "max r")
SUMMARY_KINDS = {"scale": "text", "sample": "text", "rows": "int", "n used": "int", "k": "int",
                 **{c: "bounded" for c in ("alpha", "CI low", "CI high", "std alpha", "omega", "lambda2", "lambda6",
                                           "mean r", "min r", "max r")}}
BOOTSTRAP_COLUMNS = ("boot pct low", "boot pct high", "boot BCa low", "boot BCa high")
#: which values are after reverse keying ("keyed") and which are of the answers "as given" is said in the
#: heading itself, the same way in every command and in the report
KEYED_MEAN, KEYED_SD = "mean (keyed)", "sd (keyed)"
FLOOR_AS_GIVEN, CEILING_AS_GIVEN = "floor % (as given)", "ceiling % (as given)"
ITEM_COLUMNS = ("scale", "item", "reversed", "n", KEYED_MEAN, KEYED_SD, "missing %", FLOOR_AS_GIVEN, CEILING_AS_GIVEN,
                "item-rest r", "alpha if deleted", "omega if deleted", "loading")
ITEM_KINDS = {"scale": "text", "item": "text", "reversed": "text", "n": "int", KEYED_MEAN: "num", KEYED_SD: "num",
              "missing %": "pct", FLOOR_AS_GIVEN: "pct", CEILING_AS_GIVEN: "pct", "item-rest r": "bounded",
              "alpha if deleted": "bounded", "omega if deleted": "bounded", "loading": "bounded"}


def _summary_row(name: str, sample: str, result: ScaleReliability, with_bootstrap: bool) -> tuple:
    row: tuple = (name, sample, result.n_rows, result.n_used, result.k, result.alpha, result.alpha_ci[0],
           result.alpha_ci[1], result.alpha_standardized, result.omega_total, result.lambda2, result.lambda6,
           result.mean_inter_item_r, result.min_inter_item_r, result.max_inter_item_r)
    if with_bootstrap:
        boot = result.bootstrap
        row += ((boot.percentile_ci[0], boot.percentile_ci[1], boot.bca_ci[0], boot.bca_ci[1]) if boot
                else (None,) * 4)
    return row


def _samples(report: ScaleReliabilityReport) -> Iterable[tuple[str, ScaleReliability]]:
    yield "all", report.overall
    for group in report.groups:
        for level, result in group.levels.items():
            yield f"{group.column} = {level}", result


def reliability_tables(reports: Mapping[str, ScaleReliabilityReport] | Iterable[ScaleReliabilityReport]) \
        -> list[Table]:
    """Tables for text, Markdown and CSV rendering of :class:`ScaleReliabilityReport` objects."""
    values = list(reports.values()) if isinstance(reports, Mapping) else list(reports)
    tables: list[Table] = []
    for report in values:
        name = report.name
        overall = report.overall
        with_bootstrap = any(result.bootstrap is not None for _, result in _samples(report))
        columns = SUMMARY_COLUMNS + (BOOTSTRAP_COLUMNS if with_bootstrap else ())
        kinds = {**SUMMARY_KINDS, **{c: "bounded" for c in BOOTSTRAP_COLUMNS}}
        notes = [f"CI: Feldt {100 * overall.confidence_level:g}% interval; missing answers handled "
                 f"{overall.missing_handling}"]
        notes += [describe(n) for n in overall.notes]
        notes += missing_lines(overall.missing)
        for group in report.groups:
            notes += [describe(n) for n in group.notes]
        notes += ordinal_sentences(report.ordinal_advice)
        tables.append(Table(
            title=f"{report.title} ({name}): reliability", columns=columns,
            rows=tuple(_summary_row(name, sample, result, with_bootstrap) for sample, result in _samples(report)),
            kinds=kinds, notes=tuple(notes), key="reliability"))
        tables.append(Table(
            title=f"{report.title} ({name}): items", columns=ITEM_COLUMNS,
            rows=tuple((name, item_name, "yes" if item.reversed else "", item.n, item.mean, item.sd,
                        item.missing_pct, item.floor_pct, item.ceiling_pct, item.item_rest_r,
                        item.alpha_if_deleted, item.omega_if_deleted, item.loading)
                       for item_name, item in overall.items.items()),
            kinds=ITEM_KINDS,
            notes=("keyed: after reverse keying (a reversed item's mean is of min + max - answer); as given: the "
                   "answer codes before reverse keying (floor % and ceiling % are the shares at the lowest and highest "
                   "code). n, mean, sd and missing % use every answer to the item; the other columns use the rows "
                   "in 'n used'",),
            key="reliability_items"))
        if report.ordinal is not None:
            tables.append(ordinal_reliability_table(name, report.title, report.ordinal))
        levels = list(dict.fromkeys(level for item in overall.items.values() for level in item.counts))
        if levels:
            tables.append(Table(
                title=f"{report.title} ({name}): answers at each code (as given, before reverse keying)",
                columns=("scale", "item", *levels),
                rows=tuple((name, item_name, *(item.counts.get(level, 0) for level in levels))
                           for item_name, item in overall.items.items()),
                kinds={"scale": "text", "item": "text", **{level: "int" for level in levels}},
                key="reliability_answer_counts"))
        flag_rows = tuple((name, sample, flag.item or "(scale)", flag.code, flag_message(flag))
                          for sample, result in _samples(report) for flag in result.flags)
        if flag_rows:
            tables.append(Table(
                title=f"{report.title} ({name}): flags", columns=("scale", "sample", "item", "flag", "message"),
                rows=flag_rows, kinds={c: "text" for c in ("scale", "sample", "item", "flag", "message")},
                key="reliability_flags"))
        comparison_rows = tuple((name, group.column, c.level_a, c.level_b, c.n_a, c.n_b, c.alpha_a, c.alpha_b,
                                 c.w, c.df1, c.df2, c.p, c.p_holm)
                                for group in report.groups for c in group.comparisons)
        if comparison_rows:
            tables.append(Table(
                title=f"{report.title} ({name}): alphas compared between subgroups (Feldt 1969, Holm-adjusted)",
                columns=("scale", "column", "level a", "level b", "n a", "n b", "alpha a", "alpha b", "W",
                         "df1", "df2", "p", "p Holm"),
                rows=comparison_rows,
                kinds={"scale": "text", "column": "text", "level a": "text", "level b": "text", "n a": "int",
                       "n b": "int", "alpha a": "bounded", "alpha b": "bounded", "W": "num", "df1": "int",
                       "df2": "int", "p": "p", "p Holm": "p"},
                key="reliability_comparisons"))
    return tables
