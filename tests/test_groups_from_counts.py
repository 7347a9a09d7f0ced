"""Both routes of a comparison (compare_groups on the rows, compare_from_counts on value counts; one
implementation of the tests) against pingouin and scipy computed live on the rows (ttest, mwu, anova,
welch_anova, kruskal, pairwise_gameshowell, pairwise_tukey, levene, compute_effsize/esci: tests/pingouin_groups.py)."""
from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import pytest

from scalewright.stats.groups import compare_groups
from scalewright.stats.groups_from_counts import compare_from_counts, counted_level
from scalewright.stats.subgroups import split_by

from .pingouin_groups import pingouin_tests


def _counted(scores: np.ndarray, groups: pd.Series):
    split = split_by(groups, min_size=0, column="group")
    levels = {}
    for level, positions in split.levels.items():
        x = scores[positions]
        values, counts = np.unique(x[np.isfinite(x)], return_counts=True)
        levels[level] = counted_level(values, counts)
    has = np.isfinite(scores)
    return levels, int((~has).sum()), int(has.sum()) - sum(x.n for x in levels.values())


def _pingouin_reference(comparison, scores: np.ndarray, groups: pd.Series, *, student: bool) -> dict:
    """The comparison with its tests recomputed by pingouin on the rows of the levels it tested."""
    tested = [g.level for g in comparison.groups if g.n >= 2]
    if comparison.test is None:  # too few levels to test: nothing for pingouin to compute
        return comparison.to_dict()
    samples = {}
    for level in tested:
        x = scores[(groups == level).to_numpy(dtype=bool)]
        samples[level] = x[np.isfinite(x)]
    tests = pingouin_tests(samples, student=student, confidence_level=comparison.confidence_level)
    return dataclasses.replace(comparison, **tests).to_dict()


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
@pytest.mark.parametrize(("n", "ties"), [(300, True), (120, False), (14, False)])
def test_same_comparison_as_pingouin_on_the_rows(k, student, n, ties):
    rng = np.random.default_rng(k * 10 + n + student)
    scores = np.round(rng.normal(3, 1, n) * 3) / 3 if ties else rng.normal(3, 1, n)  # no ties: exact MWU
    scores[rng.random(n) < 0.05] = np.nan
    groups = pd.Series(rng.choice([f"L{i}" for i in range(k)], n).astype(object))
    groups[rng.random(n) < 0.03] = None
    whole_file = compare_groups(scores, groups, student=student, column="group")
    # reference: pingouin and scipy on the rows (the pairs' p-values are numerical integrals: 1e-9)
    _close(whole_file.to_dict(), _pingouin_reference(whole_file, scores, groups, student=student))
    reference = whole_file.to_dict()
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
