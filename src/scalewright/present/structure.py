"""Tables of a structure analysis: sampling adequacy, parallel analysis, loadings, factor correlations,
scales against factors, and flags. Values stay raw; rendering rounds them."""
from __future__ import annotations

from typing import Any

from .messages import describe, flag_message
from .missing import missing_lines
from .numbers import format_value
from .table import Table

#: parallel analysis shows at least this many leading eigenvalues (and three beyond the suggestion)
EIGENVALUES_SHOWN = 8


def _correlation_sentences(result: Any) -> tuple[str, ...]:
    if getattr(result, "correlation_type", "pearson") == "pearson":
        from .messages import describe

        return tuple(describe(n) for n in getattr(result, "correlation_notes", ()) if n.code == "structure-weighted")
    from .ordinal import ordinal_sentences

    return ("every statistic below uses the polychoric correlations of the items (Olsson, 1979, two-step "
            "estimates): the answers taken as ordered categories cut from continuous responses",
            *ordinal_sentences(result.correlation_notes))


def _adequacy_table(result: Any) -> Table:
    bartlett = result.bartlett
    return Table(
        title="Sampling adequacy",
        columns=("respondents used", "set aside", "items", "KMO", "Bartlett chi2", "df", "p"),
        rows=((result.n_used, result.n_set_aside, len(result.items), result.kmo.overall, bartlett.chi2,
               bartlett.df, bartlett.p),),
        kinds={"respondents used": "int", "set aside": "int", "items": "int", "KMO": "bounded", "df": "int",
               "p": "p"},
        notes=(*(describe(n) for n in result.notes), *_correlation_sentences(result), *missing_lines(getattr(result, "missing", None)),
               "KMO below .50 is unacceptable for factor analysis (Kaiser, 1974); Bartlett's test asks whether "
               "the items are correlated at all (Bartlett, 1950)."),
        key="adequacy")


def _parallel_table(result: Any) -> Table | None:
    parallel = result.parallel
    if parallel is None:
        return None
    shown = min(len(parallel.observed), max(EIGENVALUES_SHOWN, parallel.suggested_factors + 3))
    rows = tuple((j + 1, parallel.observed[j], parallel.random[j], parallel.random_mean[j],
                  bool(j < parallel.suggested_factors)) for j in range(shown))
    notes = [f"suggested number of factors: {parallel.suggested_factors} (against the {parallel.percentile:g}th "
             f"percentile; {parallel.suggested_factors_mean} against the mean); {parallel.iterations} random data "
             f"sets of {parallel.n} x {len(parallel.observed)}, seed {parallel.seed}"]
    if shown < len(parallel.observed):
        notes.append(f"first {shown} of {len(parallel.observed)} eigenvalues shown; the JSON output holds all of them")
    return Table(
        title="Parallel analysis",
        columns=("eigenvalue", "observed", f"random {parallel.percentile:g}th pct", "random mean", "above random"),
        rows=rows, kinds={"eigenvalue": "int"}, notes=tuple(notes), key="parallel")


def _loadings_table(result: Any) -> Table | None:
    solution = result.solution
    if solution is None:
        return None
    names = result.factor_names
    codes: dict[str, list[str]] = {}
    for flag in result.flags:
        if flag.item is not None:
            codes.setdefault(flag.item, []).append(flag.code)
    rows = tuple((item, result.item_scale[item], *solution.loadings[i], solution.communalities[i],
                  ", ".join(dict.fromkeys(codes.get(item, [])))) for i, item in enumerate(result.items))
    kinds = {"item": "text", "scale": "text", "flags": "text", "communality": "bounded"}
    kinds.update({name: "bounded" for name in names})
    rotation = "unrotated" if solution.rotation == "none" or solution.n_factors == 1 else f"{solution.rotation} rotation"
    pattern = " (pattern coefficients)" if solution.rotation in ("oblimin", "promax") and solution.n_factors > 1 else ""
    own = ", ".join(f"{scale} = {names[j]}" for scale, j in result.factor_for_scale.items() if j is not None)
    return Table(
        title=f"Factor loadings{pattern}",
        columns=("item", "scale", *names, "communality", "flags"),
        rows=rows, kinds=kinds,
        notes=(f"{solution.n_factors} factor(s) ({result.n_factors_rule}), {solution.method} extraction, {rotation}; "
               f"factors matched to scales: {own or 'none'}",
               f"flagged: loading below {format_value(result.min_loading, 'bounded')} on the own scale's factor, largest loading on "
               f"another factor, or a cross-loading above {format_value(result.max_cross_loading, 'bounded')} (common practice)"),
        key="loadings")


def _correlation_table(result: Any) -> Table | None:
    solution = result.solution
    if solution is None or solution.n_factors < 2 or solution.rotation not in ("oblimin", "promax"):
        return None
    names = result.factor_names
    rows = tuple((names[i], *solution.factor_correlations[i]) for i in range(len(names)))
    return Table(title="Factor correlations", columns=("factor", *names), rows=rows,
                 kinds={"factor": "text", **{name: "bounded" for name in names}}, key="factor_correlations")


def _scales_table(result: Any) -> Table | None:
    if not result.unidimensionality:
        return None
    names = result.factor_names
    rows = []
    for scale, summary in result.unidimensionality.items():
        j = result.factor_for_scale.get(scale)
        rows.append((scale, summary.k, names[j] if j is not None else "–", summary.eigen_ratio,
                     summary.variance_one_factor))
    notes = [f"{scale}: {describe(note)}" for scale, summary in result.unidimensionality.items()
             for note in summary.notes]
    notes.append("eigenvalue ratio = first over second eigenvalue of the scale's item correlations; 3 or more "
                 "reads as one dominant dimension (common practice)")
    return Table(title="Scales and factors", columns=("scale", "items", "factor", "eigenvalue ratio",
                                                      "variance one factor"),
                 rows=tuple(rows), kinds={"scale": "text", "items": "int", "factor": "text",
                                          "variance one factor": "bounded"},
                 notes=tuple(notes), key="scales")


def _flags_table(result: Any) -> Table:
    rows = tuple((flag.item or "(scale)", flag.scale or "", flag.code, flag_message(flag)) for flag in result.flags)
    return Table(title="Flags", columns=("item", "scale", "code", "message"), rows=rows,
                 kinds={"item": "text", "scale": "text", "code": "text", "message": "text"},
                 notes=() if rows else ("nothing flagged",), key="flags")


def structure_tables(result: Any) -> list[Table]:
    """The tables of a :class:`scalewright.stats.structure.StructureResult`, in reading order."""
    tables = [_adequacy_table(result), _parallel_table(result), _loadings_table(result),
              _correlation_table(result), _scales_table(result), _flags_table(result)]
    return [table for table in tables if table is not None]
