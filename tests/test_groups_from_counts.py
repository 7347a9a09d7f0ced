"""compare_from_counts against compare_groups on the same scores: pingouin and scipy (ttest, mwu, anova,
welch_anova, kruskal, pairwise_gameshowell, pairwise_tukey, levene, compute_effsize/esci) on the rows."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.stats.groups import compare_groups
from scalewright.stats.groups_from_counts import compare_from_counts, counted_level
from scalewright.stats.subgroups import split_by


def _counted(scores: np.ndarray, groups: pd.Series):
    split = split_by(groups, min_size=0, column="group")
    levels = {}
    for level, positions in split.levels.items():
        x = scores[positions]
        values, counts = np.unique(x[np.isfinite(x)], return_counts=True)
        levels[level] = counted_level(values, counts)
    has = np.isfinite(scores)
    return levels, int((~has).sum()), int(has.sum()) - sum(x.n for x in levels.values())


def _close(mine, reference, path=""):
    if isinstance(reference, dict):
        assert list(mine) == list(reference), path
        for key in reference:
            _close(mine[key], reference[key], f"{path}.{key}")
    elif isinstance(reference, list):
        assert len(mine) == len(reference), path
        for i, (a, b) in enumerate(zip(mine, reference, strict=True)):
            _close(a, b, f"{path}[{i}]")
    elif isinstance(reference, float):
        # the studentized range p-values are a numerical integral (about 1e-11 of noise in scipy)
        rel = 1e-9 if path.startswith(".pairs") and path.endswith("pvalue") else 1e-12
        assert mine == pytest.approx(reference, rel=rel, abs=1e-14, nan_ok=True), path
    else:
        assert mine == reference, path


@pytest.mark.parametrize("k", [2, 3, 4])
@pytest.mark.parametrize("student", [False, True])
@pytest.mark.parametrize(("n", "ties"), [(300, True), (14, False)])
def test_same_comparison_as_pingouin_on_the_rows(k, student, n, ties):
    rng = np.random.default_rng(k * 10 + n + student)
    scores = np.round(rng.normal(3, 1, n) * 3) / 3 if ties else rng.normal(3, 1, n)  # no ties: exact MWU
    scores[rng.random(n) < 0.05] = np.nan
    groups = pd.Series(rng.choice([f"L{i}" for i in range(k)], n).astype(object))
    groups[rng.random(n) < 0.03] = None
    reference = compare_groups(scores, groups, student=student, column="group").to_dict()
    levels, no_score, no_group = _counted(scores, groups)
    mine = compare_from_counts(levels, n_no_score=no_score, n_no_group=no_group, student=student,
                               column="group").to_dict()
    _close(mine, reference)


def test_suppressed_and_constant_levels_read_alike():
    scores = np.array([1.0] * 6 + [2.0] * 6 + [3.0, 4.0, 3.0])
    groups = pd.Series(["a"] * 6 + ["b"] * 6 + ["c"] * 3, dtype=object)
    reference = compare_groups(scores, groups, column="group").to_dict()
    levels, no_score, no_group = _counted(scores, groups)
    mine = compare_from_counts(levels, n_no_score=no_score, n_no_group=no_group, column="group").to_dict()
    assert mine == reference
    assert reference["test"] is None  # both remaining levels are constant: no test
