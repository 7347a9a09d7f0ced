"""Tables of weighted estimates (survey weights), set beside the unweighted ones."""
from __future__ import annotations

from typing import Any

from ..stats.groups import suppressed_text
from .messages import describe
from .numbers import format_value
from .table import Table


def weights_line(block: Any) -> str:
    """``weighted by w: n = 120, effective n = 96.4, sum of weights 1,204.5, design effect 1.24``."""
    return (f"weighted by {block.weight_column}: n = {block.n}, effective n (Kish) = "
            f"{format_value(block.n_effective, 'num', 1)}, sum of weights = {format_value(block.sum_of_weights, 'num', 1)}, "
            f"design effect of the weights = {format_value(block.design_effect, 'num', 2)}"
            + (f", {block.n_zero_weight} with weight 0 left out" if block.n_zero_weight else ""))


def weighted_tally_table(shares: Any, unweighted: Any) -> Table:
    """Weighted share of every category beside its unweighted count and share."""
    hidden = suppressed_text(unweighted.min_cell)
    rows = []
    for plain, weighted in zip(unweighted.categories, shares.categories, strict=True):
        rows.append((plain.category, hidden if plain.suppressed else plain.count, plain.valid_percent,
                     weighted.sum_of_weights, weighted.share_of_answered_pct))
    return Table(title=f"Weighted answers: {shares.column}", key=f"tally_weighted.{shares.column}",
                 columns=("category", "count", "share of answered %", "sum of weights", "weighted share %"),
                 rows=tuple(rows), kinds={"category": "text", "count": "int", "share of answered %": "pct",
                                          "weighted share %": "pct"},
                 notes=(weights_line(shares),))


def weighted_fit_table(fit: Any, plain_fit: Any, decimals: int = 2) -> Table:
    """Weighted shares against the reference, with the unweighted comparison beside."""
    plain = {c.category: c for c in getattr(plain_fit, "categories", ())}
    rows = []
    for category, values in fit.categories.items():
        before = plain.get(category)
        rows.append((category, values["expected_pct"], values["weighted_share_pct"],
                     values["standardized_residual"],
                     None if before is None else 100.0 * before.observed / plain_fit.n if plain_fit.n else None,
                     None if before is None else before.standardized_residual))
    test = (f"weighted: χ²({fit.df}, n_eff = {format_value(fit.n_effective, 'num', 1)}) = "
            f"{format_value(fit.chi2, 'num', decimals)}, p = {format_value(fit.pvalue, 'p')}, "
            f"w = {format_value(fit.w, 'bounded', decimals)}")
    if plain_fit is not None and plain_fit.chi2 is not None:
        test += (f"; unweighted: χ²({plain_fit.df}, N = {plain_fit.n}) = {format_value(plain_fit.chi2, 'num', decimals)}, "
                 f"p = {format_value(plain_fit.pvalue, 'p')}, w = {format_value(plain_fit.w, 'bounded', decimals)}")
    return Table(title=f"Weighted shares against the reference proportions: {fit.column}",
                 key=f"fit_weighted.{fit.column}",
                 columns=("category", "reference %", "weighted share %", "weighted residual", "unweighted share %",
                          "unweighted residual"),
                 rows=tuple(rows), kinds={"category": "text", "reference %": "pct", "weighted share %": "pct",
                                          "unweighted share %": "pct"},
                 notes=(test, *(describe(n) for n in fit.notes)))


def weighted_shape_table(name: str, blocks: dict) -> Table:
    """Weighted mean, sd, quartiles, skewness and kurtosis of one score, overall and per subgroup level."""
    samples = [("all", blocks["all"])]
    for column, levels in blocks["by"].items():
        samples += [(f"{column} = {level}", block) for level, block in levels.items()]
    rows = tuple((label, b.summary.n, b.summary.n_effective, b.summary.mean, b.summary.sd, b.q1, b.median, b.q3,
                  b.summary.skewness, b.summary.kurtosis) for label, b in samples)
    first = blocks["all"].summary
    return Table(title=f"Weighted description: {name}", key=f"shape_weighted.{name}",
                 columns=("sample", "n", "effective n", "mean", "sd", "q1", "median", "q3", "skewness", "kurtosis"),
                 rows=rows, kinds={"sample": "text", "n": "int"},
                 notes=(weights_line(first), describe(_QUANTILE_NOTE),
                        *(describe(n) for _, b in samples for n in b.summary.notes)))


def _quantile_note():
    from ..notes import note

    return note("weighted-quantiles")


_QUANTILE_NOTE = _quantile_note()


def weighted_reliability_table(name: str, blocks: dict) -> Table:
    """Weighted alpha (Feldt interval on Kish's n_eff), omega and lambdas, overall and per subgroup level."""
    from types import SimpleNamespace

    samples = [("all", blocks["all"])]
    for column, levels in blocks["by"].items():
        samples += [(f"{column} = {level}", block) for level, block in levels.items()]
    rows = tuple((label, b["n_used"], b["n_effective"], b["alpha"], b["alpha_ci"][0], b["alpha_ci"][1],
                  b["omega_total"], b["lambda2"], b["mean_inter_item_r"]) for label, b in samples)
    first = blocks["all"]
    line = weights_line(SimpleNamespace(weight_column=first["weight_column"], n=first["n_used"],
                                        n_effective=first["n_effective"], sum_of_weights=first["sum_of_weights"],
                                        design_effect=first["design_effect"], n_zero_weight=first["n_zero_weight"]))
    from ..notes import note

    return Table(title=f"Weighted reliability: {name}", key=f"reliability_weighted.{name}",
                 columns=("sample", "n", "effective n", "alpha", "CI low", "CI high", "omega", "lambda2",
                          "mean inter-item r"),
                 rows=rows, kinds={"sample": "text", "n": "int", "alpha": "bounded", "CI low": "bounded",
                                   "CI high": "bounded", "omega": "bounded", "lambda2": "bounded",
                                   "mean inter-item r": "bounded"},
                 notes=(line, describe(note("weighted-ci-kish", n_effective=first["n_effective"],
                                            n=first["n_used"], design_effect=first["design_effect"]))))


def weighted_compare_table(result: Any) -> Table:
    """Weighted mean and sd of each level, with Welch's t and Hedges' g on effective sample sizes."""
    rows = tuple((lv.level, lv.n, lv.n_effective, lv.mean, lv.sd) for lv in result.levels)
    notes = []
    if result.levels and len(result.levels) == 2:
        notes.append(f"weighted: t({format_value(result.df, 'num', 1)}) = {format_value(result.t, 'num', 2)}, "
                     f"p = {format_value(result.pvalue, 'p')}, Hedges' g = {format_value(result.hedges_g, 'num', 2)} "
                     f"[{format_value(result.hedges_g_ci[0], 'num', 2)}, {format_value(result.hedges_g_ci[1], 'num', 2)}]")
    if len(result.levels) >= 2:
        notes.append(f"weighted eta-squared = {format_value(result.eta_squared, 'bounded', 3)}")
    if result.not_described:
        notes.append("not described (too few weighted rows): " + ", ".join(result.not_described))
    return Table(title=f"Weighted comparison: {result.scale} by {result.column}",
                 key=f"compare_weighted.{result.scale}.{result.column}",
                 columns=("level", "n", "effective n", "weighted mean", "weighted sd"), rows=rows,
                 kinds={"level": "text", "n": "int"},
                 notes=(*notes, *(describe(n) for n in result.notes)))


def weighted_scores_table(found: dict) -> Table:
    """Weighted mean and sd of every scale score, with n and the effective n."""
    rows = tuple((name, s.n, s.n_effective, s.mean, s.sd) for name, s in found.items())
    first = next(iter(found.values()), None)
    return Table(title="Weighted scores", key="scores_weighted",
                 columns=("scale", "scored", "effective n", "weighted mean", "weighted sd"), rows=rows,
                 kinds={"scale": "text", "scored": "int"},
                 notes=(weights_line(first),) if first is not None else ())


def weighted_screen_table(block: dict, counts: dict, n: int) -> Table:
    """Share of the respondents and of the sum of weights carrying each flag (flags themselves are unweighted)."""
    rows = [("flagged (any)", block["n_flagged"], block["flagged_unweighted_pct"], block["flagged_pct"])]
    for code, count in counts.items():
        if count is None or not count:
            continue
        rows.append((code, count, 100.0 * count / n if n else None, block["flag_pct"][code]))
    line = (f"weighted by {block['weight_column']}: n = {block['n']}, effective n (Kish) = "
            f"{format_value(block['n_effective'], 'num', 1)}, sum of weights = "
            f"{format_value(block['sum_of_weights'], 'num', 1)}"
            + (f", {block['n_zero_weight']} with weight 0 (screened, weigh nothing)" if block["n_zero_weight"] else ""))
    from ..notes import note

    return Table(title="Flagged respondents, weighted", key="screen_weighted",
                 columns=("flag", "respondents", "share of respondents %", "weighted share %"),
                 rows=tuple(rows), kinds={"flag": "text", "respondents": "int", "share of respondents %": "pct",
                                          "weighted share %": "pct"},
                 notes=(line, describe(note("screen-weighted", weight_column=block["weight_column"]))))
