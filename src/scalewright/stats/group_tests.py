"""The tests and effect sizes of one score across independent groups, from pingouin (which wraps scipy).

Two groups: Welch's (or Student's) t, Hedges' g with its interval and Mann-Whitney U with the rank-biserial r;
more groups: Welch's (or the classic) ANOVA, Kruskal-Wallis, omega- and epsilon-squared and the pairwise
comparisons; and Levene's test of equal variances. :func:`scalewright.stats.groups.compare_groups` calls them.
"""
from __future__ import annotations

import contextlib
import warnings
from typing import Any

import numpy as np
import pandas as pd

from .groups import EffectSize, PairResult, TestResult


@contextlib.contextmanager
def quiet_pingouin():
    """pingouin 0.7 calls ``DataFrame.dropna(inplace=True)``, which pandas >= 3.1 deprecates; nothing else is hidden."""
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="The inplace keyword", category=DeprecationWarning)
        yield


def levene_test(data: pd.DataFrame) -> TestResult:
    import pingouin as pg

    with quiet_pingouin():
        row = pg.homoscedasticity(data, dv="score", group="level", method="levene").iloc[0]
    k = data["level"].nunique()
    return TestResult(name="Levene (median-centred)", statistic=float(row["W"]), pvalue=float(row["pval"]),
                      df=float(k - 1), df2=float(len(data) - k))


def long_form(samples: dict[str, np.ndarray]) -> pd.DataFrame:
    return pd.DataFrame({"score": np.concatenate(list(samples.values())),
                         "level": np.repeat(list(samples), [len(x) for x in samples.values()])})


def two_group_tests(samples: dict[str, np.ndarray], *, student: bool, confidence_level: float) -> dict[str, Any]:
    import pingouin as pg

    (name_a, x), (name_b, y) = samples.items()
    with quiet_pingouin():
        t = pg.ttest(x, y, correction=not student, confidence=confidence_level).iloc[0]
        u = pg.mwu(x, y, alternative="two-sided").iloc[0]
    g = float(pg.compute_effsize(x, y, eftype="hedges"))
    # pingouin rounds this interval to `decimals`; 15 keeps it unrounded (rounding belongs to presentation)
    ci = pg.compute_esci(stat=g, nx=len(x), ny=len(y), eftype="hedges", confidence=confidence_level, decimals=15)
    return {
        "test": TestResult(name="Student's t" if student else "Welch's t", statistic=float(t["T"]),
                           df=float(t["dof"]), pvalue=float(t["p_val"])),
        "nonparametric": TestResult(name="Mann-Whitney U", statistic=float(u["U_val"]), pvalue=float(u["p_val"])),
        "effect_size": EffectSize(name="Hedges' g", value=g, ci=(float(ci[0]), float(ci[1]))),
        "nonparametric_effect_size": EffectSize(name="rank-biserial r", value=float(u["RBC"])),
        "levene": levene_test(long_form(samples)),
        "extra_notes": [f"Hedges' g and the rank-biserial r compare {name_a} with {name_b} "
                        f"(positive: {name_a} scores higher)"],
    }


def many_group_tests(samples: dict[str, np.ndarray], *, student: bool) -> dict[str, Any]:
    import pingouin as pg

    data = long_form(samples)
    n, k = len(data), len(samples)
    with quiet_pingouin():
        classic = pg.anova(data, dv="score", between="level", detailed=True)
        welch = pg.welch_anova(data, dv="score", between="level").iloc[0]
        h = pg.kruskal(data, dv="score", between="level").iloc[0]
    ss_between, ss_within = (float(v) for v in classic["SS"].iloc[:2])
    ms_within = float(classic["MS"].iloc[1])
    omega_sq = (ss_between - (k - 1) * ms_within) / (ss_between + ss_within + ms_within)
    if student:
        test = TestResult(name="one-way ANOVA F", statistic=float(classic["F"].iloc[0]),
                          df=float(classic["DF"].iloc[0]), df2=float(classic["DF"].iloc[1]),
                          pvalue=float(classic["p_unc"].iloc[0]))
        with quiet_pingouin():
            pair_table = pg.pairwise_tukey(data, dv="score", between="level", effsize="hedges")
        method = "Tukey HSD"
    else:
        test = TestResult(name="Welch's F", statistic=float(welch["F"]), df=float(welch["ddof1"]),
                          df2=float(welch["ddof2"]), pvalue=float(welch["p_unc"]))
        with np.errstate(divide="ignore", invalid="ignore"), quiet_pingouin(), warnings.catch_warnings():
            # a pair of two zero-variance levels has no standard error; its row is NaN and noted below
            warnings.simplefilter("ignore", RuntimeWarning)
            pair_table = pg.pairwise_gameshowell(data, dv="score", between="level", effsize="hedges")
        method = "Games-Howell"
    pvalue_column = "p_tukey" if student else "pval"
    order = list(samples)
    pairs = []
    for _, row in pair_table.iterrows():
        a, b = str(row["A"]), str(row["B"])
        sign = 1.0
        if order.index(a) > order.index(b):  # keep the column's level order within each pair
            a, b, sign = b, a, -1.0
        pairs.append(PairResult(a=a, b=b, difference=sign * float(row["diff"]), se=float(row["se"]),
                                statistic=sign * float(row["T"]),
                                df=float(row["df"]) if "df" in row else float(n - k),
                                pvalue=float(row[pvalue_column]), hedges_g=sign * float(row["hedges"])))
    pairs.sort(key=lambda p: (order.index(p.a), order.index(p.b)))
    extra = []
    if any(not np.isfinite(p.pvalue) for p in pairs):
        extra.append("some pairs have no spread in either level: no pair test for them")
    return {
        "test": test,
        "nonparametric": TestResult(name="Kruskal-Wallis H", statistic=float(h["H"]), df=float(h["ddof1"]),
                                    pvalue=float(h["p_unc"])),
        "effect_size": EffectSize(name="omega-squared", value=omega_sq),
        "nonparametric_effect_size": EffectSize(name="epsilon-squared", value=float(h["H"]) * (n + 1) / (n * n - 1)),
        "pairs": tuple(pairs),
        "pairs_method": method,
        "levene": levene_test(data),
        "extra_notes": ["omega-squared can fall below zero when the groups differ less than chance would make "
                        "them; read such values as zero"] if omega_sq < 0 else [],
    }
