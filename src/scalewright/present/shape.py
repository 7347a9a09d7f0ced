"""Tables of the shape results: descriptives, percentiles, shape label with evidence, histogram counts.

In CSV, rows keyed ``shape`` give one row per score (and subgroup), ``shape_percentiles`` the percentiles,
``shape_histogram`` the counts per interval. Nothing is computed here; numbers are rounded by the renderers.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping

from ..stats.shape import ShapeReport, ShapeSummary
from .messages import describe
from .table import Table

SUMMARY_COLUMNS = ("score", "sample", "n", "missing", "mean", "sd", "median", "q1", "q3", "IQR", "min", "max",
                   "skewness", "SE skew", "kurtosis", "SE kurt", "BC", "dip p", "uniform w", "uniform p",
                   "floor %", "ceiling %", "effect", "shape", "values")
SUMMARY_KINDS = {"score": "text", "values": "text", "sample": "text", "n": "int", "missing": "int", "BC": "bounded", "dip p": "p",
                 "uniform p": "p", "uniform w": "num", "floor %": "pct", "ceiling %": "pct", "effect": "text",
                 "shape": "text"}


def _samples(report: ShapeReport) -> Iterable[tuple[str, ShapeSummary]]:
    yield "all", report.overall
    for group in report.groups:
        for level, summary in group.levels.items():
            yield f"{group.column} = {level}", summary


#: the same words as the reliability item table's headings: scale scores are of keyed items, an item's
#: answers are described as given (before reverse keying)
VALUES_KEYED, VALUES_AS_GIVEN = "keyed", "as given"


def _summary_row(name: str, sample: str, s: ShapeSummary, kind: str = "scale") -> tuple:
    return (name, sample, s.n, s.n_missing, s.mean, s.sd, s.median, s.q1, s.q3, s.iqr, s.min, s.max, s.skewness,
            s.skewness_se, s.kurtosis, s.kurtosis_se, s.bimodality_coefficient, s.dip_p, s.uniform_gof.w,
            s.uniform_gof.p, s.floor_pct, s.ceiling_pct, _effect(s), s.shape or "–",
            VALUES_AS_GIVEN if kind == "item" else VALUES_KEYED)


def _effect(s: ShapeSummary) -> str:
    named = [name for name, flag in (("floor", s.floor_effect), ("ceiling", s.ceiling_effect)) if flag]
    return " + ".join(named)


def _table_notes(s: ShapeSummary) -> list[str]:
    """The summary's notes, less the floor/ceiling ones that the 'effect' column already shows."""
    return [describe(note) for note in s.notes
            if getattr(note, "code", None) not in ("floor-effect", "ceiling-effect")]


def _modes_text(s: ShapeSummary) -> str:
    # modes of mean scores are fractions such as 3.8333...: two decimals, trailing zeros dropped
    return ", ".join(f"{m:.2f}".rstrip("0").rstrip(".") for m in s.modes) if s.modes else "none"


def shape_tables(reports: Mapping[str, ShapeReport] | Iterable[ShapeReport], *, histograms: bool = True) -> list[Table]:
    """Tables for text, Markdown and CSV rendering of :class:`~scalewright.stats.shape.ShapeReport` objects."""
    values = list(reports.values()) if isinstance(reports, Mapping) else list(reports)
    tables: list[Table] = []
    if not values:
        return tables
    method = values[0].overall.quantile_method
    summary_rows, evidence_rows, percentile_rows = [], [], []
    notes: list[str] = []
    percentile_keys: list[str] = list(values[0].overall.percentiles)
    for report in values:
        for sample, s in _samples(report):
            summary_rows.append(_summary_row(report.name, sample, s, report.kind))
            evidence_rows.append((report.name, sample, s.shape or "–", _modes_text(s),
                                  describe(s.evidence) if s.evidence is not None else "–"))
            percentile_rows.append((report.name, sample, *(s.percentiles.get(k) for k in percentile_keys)))
            notes.extend(f"{report.name}, {sample}: {note}" for note in _table_notes(s))
        for group in report.groups:
            notes.extend(f"{report.name}: {describe(note)}" for note in group.notes)
    tables.append(Table(
        title="Distribution of each score", columns=SUMMARY_COLUMNS, rows=tuple(summary_rows), kinds=SUMMARY_KINDS,
        notes=("values: keyed = a scale score, made from the items after reverse keying; as given = an item's "
               "answer codes before reverse keying (its mean differs from the keyed mean in the reliability item "
               "table when the item is reversed)",
               f"quartiles and percentiles: {method} method (Hyndman & Fan 1996); skewness and kurtosis are the "
               "adjusted G1 and excess G2 (Joanes & Gill 1998); BC: bimodality coefficient (5/9 for a flat "
               "distribution); dip p from scores jittered within their resolution; uniform w: chi-square "
               "effect size against equal counts at every attainable score; floor/ceiling: share at the lowest/"
               "highest attainable score; effect: more than 15% there (Terwee et al. 2007)", *notes),
        key="shape"))
    tables.append(Table(
        title="Shape of each score and the evidence for it", columns=("score", "sample", "shape", "modes", "evidence"),
        rows=tuple(evidence_rows), kinds={c: "text" for c in ("score", "sample", "shape", "modes", "evidence")},
        notes=("how the label is chosen for tied rating scores is set out in scalewright's documentation "
               "(docs/shape.md); scores describe groups, not any one respondent",),
        key="shape_evidence"))
    tables.append(Table(
        title=f"Percentiles ({method} method)", columns=("score", "sample", *(f"P{k}" for k in percentile_keys)),
        rows=tuple(percentile_rows), kinds={"score": "text", "sample": "text"}, key="shape_percentiles"))
    if histograms:
        for report in values:
            cells = report.overall.histogram
            if cells is None:
                continue
            labels = cells.labels()
            total = sum(cells.counts) or 1
            interval_notes = ["each interval is half-open [a, b); a single value v stands for [v - h/2, v + h/2) "
                              f"with h = {cells.resolution:g}; scores between grid values (fewer items answered) count in the "
                              "nearest cell" if cells.per_value else
                              "each interval is half-open [a, b)", *(describe(n) for n in cells.notes)]
            tables.append(Table(
                title=f"{report.title} ({report.name}): counts per score interval",
                columns=("score", "interval", "from", "to", "count", "%"),
                rows=tuple((report.name, label, a, b, c, 100.0 * c / total)
                           for label, a, b, c in zip(labels, cells.edges[:-1], cells.edges[1:], cells.counts, strict=True)),
                kinds={"score": "text", "interval": "text", "count": "int", "%": "pct"},
                notes=tuple(interval_notes), key="shape_histogram"))
    return tables
