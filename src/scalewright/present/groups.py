"""Tables and plain-language sentences for subgroup comparisons (numbers in APA style, rounded only here)."""
from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from ..stats.effect_benchmarks import effect_magnitude
from ..stats.groups import Comparison, TestResult, suppressed_text
from .messages import untested_reason
from .numbers import format_value
from .table import Table

_SYMBOL = {"Hedges' g": "g", "rank-biserial r": "r", "omega-squared": "ω²", "epsilon-squared": "ε²"}
_BOUNDED = {"rank-biserial r", "omega-squared", "epsilon-squared"}


def effect_label(name: str, value: float | None) -> str:
    """``negligible``/``small``/``medium``/``large`` by Cohen's benchmarks (common practice, no strict source)."""
    return effect_magnitude(name, value)


def _num(value: Any, decimals: int, kind: str = "num") -> str:
    return format_value(value, kind, decimals)


def _p(value: float | None) -> str:
    text = format_value(value, "p")
    return f"p {text}" if text.startswith("<") else f"p = {text}"


def _df(value: float | None) -> str:
    if value is None:
        return ""
    return f"{value:.0f}" if float(value).is_integer() else f"{value:.1f}"


def _effect_text(c: Comparison, attribute: str, decimals: int) -> str:
    effect = getattr(c, attribute)
    if effect is None:
        return ""
    kind = "bounded" if effect.name in _BOUNDED else "num"
    text = f"{_SYMBOL.get(effect.name, effect.name)} = {_num(effect.value, decimals, kind)}"
    if effect.ci is not None:
        text += (f", {round(c.confidence_level * 100):d}% CI [{_num(effect.ci[0], decimals, kind)}, "
                 f"{_num(effect.ci[1], decimals, kind)}]")
    return text


def _test_plain(test: TestResult, decimals: int) -> str:
    """A test in one run of text with no brackets: ``Welch's F = 33.48, df = 2 and 324.2, p < .001``."""
    name = "Levene's W" if test.name.startswith("Levene") else test.name
    dfs = " and ".join(d for d in (_df(test.df), _df(test.df2)) if d)
    statistic = _num(test.statistic, decimals, "whole" if name == "Mann-Whitney U" else "num")
    text = f"{name} = {statistic}" + (f", df = {dfs}" if dfs else "") + f", {_p(test.pvalue)}"
    if test.pvalue_holm is not None:
        text += f", Holm-adjusted {_p(test.pvalue_holm)}"
    return text


def _level(level: float) -> str:
    """A significance level as written in APA style: .05, .01."""
    return f"{level:g}".removeprefix("0")


def comparison_sentence(c: Comparison, *, decimals: int = 2, lead_only: bool = False) -> str:
    """What a manager reads first: who scored higher and how big the difference is, the statistics in one
    bracket after it (never nested), then the means and the follow-up pairs (left out with ``lead_only``)."""
    subject = c.scale or "The score"
    if c.test is None:
        reason, _ = untested_reason(c.notes, tested=False)
        return f"{subject} by {c.column}: not compared ({reason or 'no test was possible'})."
    significant = c.differs
    size = effect_label(c.effect_size.name, c.effect_size.value) if c.effect_size else "unknown"
    ordered = sorted(c.groups, key=lambda g: g.mean, reverse=True)
    high, low = ordered[0], ordered[-1]
    if len(c.groups) == 2:
        if significant:
            lead = f"{subject} by {c.column}: {high.level} scored higher than {low.level}, a {size} difference"
        else:
            lead = (f"{subject} by {c.column}: {high.level} and {low.level} scored much alike; the {size} "
                    "difference could be due to chance")
    elif significant:
        lead = (f"{subject} by {c.column}: scores differ, highest for {high.level} and lowest for {low.level}, "
                f"a {size} difference overall")
    else:
        lead = (f"{subject} by {c.column}: scores do not differ clearly between the levels; the {size} "
                "differences could be due to chance")
    stats = "; ".join(t for t in (_effect_text(c, "effect_size", decimals), _test_plain(c.test, decimals)) if t)
    means = "; ".join(f"{g.level}: n = {g.n}, M = {_num(g.mean, decimals)}, SD = {_num(g.sd, decimals)}"
                      for g in c.groups)
    sentence = f"{lead} ({stats}). Means by {c.column}: {means}."
    if lead_only:
        return f"{lead} ({stats})."
    if c.nonparametric is not None:
        effect = _effect_text(c, "nonparametric_effect_size", decimals)
        sentence += (f" The rank-based check: {_test_plain(c.nonparametric, decimals)}"
                     + (f", {effect}" if effect else "") + ".")
    if c.pairs:
        differing = c.differing_pairs
        if differing:
            listed = "; ".join(f"{p.a} vs {p.b}, {_p(p.pvalue)}" for p in differing)
            sentence += f" {c.pairs_method} pairs that differ: {listed}."
        else:
            sentence += f" No {c.pairs_method} pair differed at p < {_level(c.significance_level)}."
    if c.spread_differs and c.levene is not None:  # Levene's test is there whenever the spread differs
        sentence += (f" The spread differs between levels ({_test_plain(c.levene, decimals)}), so the Welch "
                     "version of the test is the safer reading.")
    if c.suppressed:
        sentence += (f" {len(c.suppressed)} level(s) with fewer than {c.min_cell} respondents are not shown "
                     "and were left out.")
    return sentence


def comparison_record(c: Comparison, *, decimals: int = 2) -> dict[str, Any]:
    """The JSON record of a comparison: its ``to_dict()`` plus the ``sentence``."""
    record = c.to_dict()
    record["sentence"] = comparison_sentence(c, decimals=decimals)
    return record


def compare_tables(comparisons: Sequence[Comparison], *, decimals: int = 2) -> list[Table]:
    """Per comparison: a table of the groups (suppressed ones as "< min_cell") and one of the tests; pairs if any."""
    tables: list[Table] = []
    for c in comparisons:
        label = f"{c.scale} by {c.column}" if c.scale else f"by {c.column}"
        key = f"{c.scale}.{c.column}" if c.scale else c.column
        rows: list[tuple] = [(g.level, g.n, g.mean, g.sd, g.median, g.q1, g.q3, g.iqr) for g in c.groups]
        rows += [(level, suppressed_text(c.min_cell), None, None, None, None, None, None) for level in c.suppressed]
        tables.append(Table(title=f"Groups: {label}", key=f"groups.{key}",
                            columns=("level", "n", "mean", "sd", "median", "q1", "q3", "IQR"),
                            rows=tuple(rows), kinds={"level": "text", "n": "int"}))
        test_rows = []
        for test, effect in ((c.test, c.effect_size), (c.nonparametric, c.nonparametric_effect_size),
                             (c.levene, None)):
            if test is None:
                continue
            ci = effect.ci if effect is not None and effect.ci is not None else (None, None)
            test_rows.append((test.name, test.statistic, test.df, test.df2, test.pvalue, test.pvalue_holm,
                              effect.name if effect else "", effect.value if effect else None, ci[0], ci[1]))
        tables.append(Table(title=f"Tests: {label}", key=f"tests.{key}",
                            columns=("test", "statistic", "df", "df2", "p", "p Holm", "effect size", "value",
                                     "CI low", "CI high"),
                            rows=tuple(test_rows),
                            kinds={"test": "text", "p": "p", "p Holm": "p", "effect size": "text",
                                   "statistic": "whole", "df": "whole", "df2": "whole"},
                            notes=(comparison_sentence(c, decimals=decimals),
                                   *untested_reason(c.notes, tested=c.test is not None)[1])))
        if c.pairs:
            tables.append(Table(title=f"{c.pairs_method} pairs: {label}", key=f"pairs.{key}",
                                columns=("a", "b", "difference", "se", "statistic", "df", "p", "Hedges' g"),
                                rows=tuple((p.a, p.b, p.difference, p.se, p.statistic, p.df, p.pvalue, p.hedges_g)
                                           for p in c.pairs),
                                kinds={"a": "text", "b": "text", "p": "p", "df": "whole"},
                                notes=("p-values are adjusted for all pairs of this comparison; difference is "
                                       "mean(a) - mean(b)",)))
    return tables


__all__ = ["compare_tables", "comparison_record", "comparison_sentence", "effect_label"]
