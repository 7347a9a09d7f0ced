"""The tests and effect sizes of one score across independent groups, from pingouin (which wraps scipy).

Two groups: Welch's (or Student's) t, Hedges' g with its interval and Mann-Whitney U with the rank-biserial r;
more groups: Welch's (or the classic) ANOVA, Kruskal-Wallis, omega- and epsilon-squared and the pairwise
comparisons (pingouin's formulas in :mod:`.range_pairs`, with a faster studentized-range integral); and
Levene's test of equal variances. :func:`scalewright.stats.groups.compare_groups` calls them.
"""
from __future__ import annotations

import contextlib
import warnings
from typing import Any

import numpy as np
import pandas as pd

from ..notes import note
from .groups import EffectSize, PairResult, TestResult
from .range_pairs import games_howell_pairs, tukey_pairs


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
        "extra_notes": [note("effect-direction", first=str(name_a), second=str(name_b))],
    }


def many_group_tests(samples: dict[str, np.ndarray], *, student: bool) -> dict[str, Any]:
    import pingouin as pg

    data = long_form(samples)
    n, k = len(data), len(samples)
    # a level without spread gets an infinite Welch weight n/s^2: F is undefined (pingouin raises), so NaN
    welch_defined = all(np.ptp(x) > 0 for x in samples.values())
    with quiet_pingouin():
        classic = pg.anova(data, dv="score", between="level", detailed=True)
        welch = pg.welch_anova(data, dv="score", between="level").iloc[0] if welch_defined else None
        h = pg.kruskal(data, dv="score", between="level").iloc[0]
    ss_between, ss_within = (float(v) for v in classic["SS"].iloc[:2])
    ms_within = float(classic["MS"].iloc[1])
    omega_sq = (ss_between - (k - 1) * ms_within) / (ss_between + ss_within + ms_within)
    if student:
        test = TestResult(name="one-way ANOVA F", statistic=float(classic["F"].iloc[0]),
                          df=float(classic["DF"].iloc[0]), df2=float(classic["DF"].iloc[1]),
                          pvalue=float(classic["p_unc"].iloc[0]))
        method = "Tukey HSD"
    else:
        test = (TestResult(name="Welch's F", statistic=float(welch["F"]), df=float(welch["ddof1"]),
                           df2=float(welch["ddof2"]), pvalue=float(welch["p_unc"])) if welch is not None else
                TestResult(name="Welch's F", statistic=np.nan, df=float(k - 1), df2=np.nan, pvalue=np.nan))
        method = "Games-Howell"
    # the same pairs as pingouin's pairwise_tukey / pairwise_gameshowell, whose studentized-range p-values
    # integrate one value at a time (seconds per report); a pair of two zero-variance levels is NaN, noted below
    pair_stats = (tukey_pairs if student else games_howell_pairs)(list(samples.values()))
    order = list(samples)
    pairs = [PairResult(a=order[i], b=order[j], difference=float(d), se=float(se), statistic=float(t), df=float(df),
                        pvalue=float(p), hedges_g=float(g))
             for i, j, d, se, t, df, p, g in zip(pair_stats.first, pair_stats.second, pair_stats.difference,
                                                 pair_stats.se, pair_stats.statistic, pair_stats.df,
                                                 pair_stats.pvalue, pair_stats.hedges_g, strict=True)]
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
        "extra_notes": [note("omega-squared-negative")] if omega_sq < 0 else [],
    }
