"""The tests of a comparison computed by pingouin (which wraps scipy) on the rows: the live reference that
``tests/test_groups_from_counts.py`` holds :mod:`scalewright.stats.groups_from_counts` (both routes) to.

Two groups: pingouin's ``ttest``, ``mwu``, ``compute_effsize``/``compute_esci`` (Hedges' g), ``homoscedasticity``
(Levene, median-centred); more groups: ``anova``, ``welch_anova``, ``kruskal``, ``pairwise_gameshowell`` or
``pairwise_tukey``; omega- and epsilon-squared from pingouin's ANOVA table and H by their published formulas
(Olejnik & Algina 2003; Tomczak & Tomczak 2014).
"""
from __future__ import annotations

import contextlib
import warnings
from typing import Any

import numpy as np
import pandas as pd

from scalewright.stats.groups import EffectSize, PairResult, TestResult


@contextlib.contextmanager
def quiet_pingouin():
    """pingouin 0.7 calls ``DataFrame.dropna(inplace=True)``, which pandas >= 3.1 deprecates; nothing else is hidden."""
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="The inplace keyword", category=DeprecationWarning)
        yield


def _long_form(samples: dict[str, np.ndarray]) -> pd.DataFrame:
    return pd.DataFrame({"score": np.concatenate(list(samples.values())),
                         "level": np.repeat(list(samples), [len(x) for x in samples.values()])})


def _levene(data: pd.DataFrame) -> TestResult:
    import pingouin as pg

    with quiet_pingouin():
        row = pg.homoscedasticity(data, dv="score", group="level", method="levene").iloc[0]
    k = data["level"].nunique()
    return TestResult(name="Levene (median-centred)", statistic=float(row["W"]), pvalue=float(row["pval"]),
                      df=float(k - 1), df2=float(len(data) - k))


def _two(samples: dict[str, np.ndarray], *, student: bool, confidence_level: float) -> dict[str, Any]:
    import pingouin as pg

    (_, x), (_, y) = samples.items()
    with quiet_pingouin():
        t = pg.ttest(x, y, correction=not student, confidence=confidence_level).iloc[0]
        u = pg.mwu(x, y, alternative="two-sided").iloc[0]
    g = float(pg.compute_effsize(x, y, eftype="hedges"))
    # pingouin rounds this interval to `decimals`; 15 keeps it as good as unrounded
    ci = pg.compute_esci(stat=g, nx=len(x), ny=len(y), eftype="hedges", confidence=confidence_level, decimals=15)
    return {
        "test": TestResult(name="Student's t" if student else "Welch's t", statistic=float(t["T"]),
                           df=float(t["dof"]), pvalue=float(t["p_val"])),
        "nonparametric": TestResult(name="Mann-Whitney U", statistic=float(u["U_val"]), pvalue=float(u["p_val"])),
        "effect_size": EffectSize(name="Hedges' g", value=g, ci=(float(ci[0]), float(ci[1]))),
        "nonparametric_effect_size": EffectSize(name="rank-biserial r", value=float(u["RBC"])),
        "levene": _levene(_long_form(samples)),
    }


def _pairs(data: pd.DataFrame, order: list[str], *, student: bool) -> tuple[PairResult, ...]:
    """pingouin's pairs (its levels sorted) in our order: pairs (i, j), i < j in ``order``, signs turned to match."""
    import pingouin as pg

    with quiet_pingouin():
        table = (pg.pairwise_tukey if student else pg.pairwise_gameshowell)(data, dv="score", between="level")
    by_pair = {(str(row["A"]), str(row["B"])): row for _, row in table.iterrows()}
    pairs = []
    for i, a in enumerate(order):
        for b in order[i + 1:]:
            row, sign = (by_pair[(a, b)], 1.0) if (a, b) in by_pair else (by_pair[(b, a)], -1.0)
            df = float(len(data) - len(order)) if student else float(row["df"])
            pairs.append(PairResult(a=a, b=b, difference=sign * float(row["diff"]), se=float(row["se"]),
                                    statistic=sign * float(row["T"]), df=df,
                                    pvalue=float(row["p_tukey" if student else "pval"]),
                                    hedges_g=sign * float(row["hedges"])))
    return tuple(pairs)


def _many(samples: dict[str, np.ndarray], *, student: bool) -> dict[str, Any]:
    import pingouin as pg

    data = _long_form(samples)
    n, k = len(data), len(samples)
    welch_defined = all(np.ptp(x) > 0 for x in samples.values())  # pingouin raises on a level without spread
    with quiet_pingouin():
        classic = pg.anova(data, dv="score", between="level", detailed=True)
        welch = pg.welch_anova(data, dv="score", between="level").iloc[0] if welch_defined else None
        h = pg.kruskal(data, dv="score", between="level").iloc[0]
    ss_between, ss_within = (float(v) for v in classic["SS"].iloc[:2])
    ms_within = float(classic["MS"].iloc[1])
    if student:
        test = TestResult(name="one-way ANOVA F", statistic=float(classic["F"].iloc[0]),
                          df=float(classic["DF"].iloc[0]), df2=float(classic["DF"].iloc[1]),
                          pvalue=float(classic["p_unc"].iloc[0]))
    else:
        test = (TestResult(name="Welch's F", statistic=float(welch["F"]), df=float(welch["ddof1"]),
                           df2=float(welch["ddof2"]), pvalue=float(welch["p_unc"])) if welch is not None else
                TestResult(name="Welch's F", statistic=np.nan, df=float(k - 1), df2=np.nan, pvalue=np.nan))
    return {
        "test": test,
        "nonparametric": TestResult(name="Kruskal-Wallis H", statistic=float(h["H"]), df=float(h["ddof1"]),
                                    pvalue=float(h["p_unc"])),
        "effect_size": EffectSize(name="omega-squared",
                                  value=(ss_between - (k - 1) * ms_within) / (ss_between + ss_within + ms_within)),
        "nonparametric_effect_size": EffectSize(name="epsilon-squared", value=float(h["H"]) * (n + 1) / (n * n - 1)),
        "pairs": _pairs(data, list(samples), student=student),
        "pairs_method": "Tukey HSD" if student else "Games-Howell",
        "levene": _levene(data),
    }


def pingouin_tests(samples: dict[str, np.ndarray], *, student: bool, confidence_level: float = 0.95) -> dict[str, Any]:
    """The tests, effect sizes, pairs and Levene's test of the levels' scores (each at least two, not all
    equal), as keyword arguments of a :class:`~scalewright.stats.groups.Comparison`."""
    if len(samples) == 2:
        return _two(samples, student=student, confidence_level=confidence_level)
    return _many(samples, student=student)
