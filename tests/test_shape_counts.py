"""The description of a score from its value counts equals the description of the scores themselves.

References: numpy's quantile, scipy.stats' skewness and kurtosis (bias=False), and the diptest package on
the jittered sample drawn as the whole-file route draws it; and ``describe_scores`` on the expanded
sample (the whole-file route) for every other field.
"""
from __future__ import annotations

import numpy as np
import pytest

from scalewright.stats.shape import describe_scores
from scalewright.stats.shape_counts import JITTER_STEP, describe_counted_scores, dip_test_from_counts
from scalewright.stats.shape_rule import dip_test_jittered


def _close(a, b, path=""):
    if isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for key in a:
            _close(a[key], b[key], f"{path}.{key}")
    elif isinstance(a, list | tuple):
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            _close(x, y, f"{path}[{i}]")
    elif isinstance(a, float) and isinstance(b, float):
        assert a == pytest.approx(b, rel=1e-12, abs=1e-12, nan_ok=True), path
    else:
        assert a == b, path


def _sample(kind: str, rng) -> tuple[np.ndarray, dict]:
    if kind == "mean-of-6":  # a 6-item mean on answers 1..5: grid of 1/6
        x = np.round(rng.normal(3.4, 0.7, 3000) * 6) / 6
        return np.clip(x, 1, 5), dict(attainable=np.arange(6, 31) / 6, answer_levels=5)
    if kind == "bimodal-sum":
        x = np.concatenate([rng.binomial(20, 0.2, 800), rng.binomial(20, 0.85, 700)]).astype(float)
        return x, dict(attainable=np.arange(0, 21, dtype=float), answer_levels=5)
    if kind == "no-grid":  # resolution inferred from the scores
        return np.round(rng.uniform(0, 10, 500) * 2) / 2, {}
    if kind == "continuous":
        return rng.normal(size=400), dict(resolution=0.0)
    if kind == "tiny":
        return np.array([2.0, 2.0, 3.0]), dict(low=1.0, high=5.0)
    if kind == "constant":
        return np.full(50, 4.0), dict(low=1.0, high=5.0)
    if kind == "outliers":
        x = np.concatenate([np.full(400, 3.0), np.full(300, 3.5), [1.0] * 3, [5.0] * 2])
        return x, dict(attainable=np.arange(2, 11) / 2)
    raise AssertionError(kind)


@pytest.mark.parametrize("kind", ["mean-of-6", "bimodal-sum", "no-grid", "continuous", "tiny", "constant", "outliers"])
@pytest.mark.parametrize("method", ["linear", "hazen", "inverted_cdf"])
def test_counts_describe_as_the_scores_do(kind, method):
    x, grid = _sample(kind, np.random.default_rng(len(kind)))
    values, counts = np.unique(x, return_counts=True)
    options = dict(percentiles=(5, 25, 50, 90), quantile_method=method, seed=7, **grid)
    whole = describe_scores(np.concatenate([x, [np.nan] * 4]), **options)
    counted = describe_counted_scores(values, counts, n_missing=4, **options)
    _close(counted.to_dict(), whole.to_dict())
    if whole.n >= 4:
        # outside references: numpy's quantile and scipy's bias-corrected moments
        from scipy import stats

        assert counted.percentiles["90"] == pytest.approx(float(np.quantile(x, 0.9, method=method)), abs=1e-12)
        if np.ptp(x) > 0:
            assert counted.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-9)
            assert counted.kurtosis == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-9)


def test_dip_in_place_in_steps_equals_one_draw(monkeypatch):
    import diptest

    import scalewright.stats.shape_counts as shape_counts

    rng = np.random.default_rng(3)
    x = np.round(rng.normal(3, 1, 5000) * 4) / 4
    values, counts = np.unique(x, return_counts=True)
    monkeypatch.setattr(shape_counts, "JITTER_STEP", 333)  # many steps of the in-place jitter
    stepped = dip_test_from_counts(values, counts, resolution=0.25, seed=11)
    whole = dip_test_jittered(x, resolution=0.25, seed=11)
    assert stepped == whole
    # outside reference: diptest on the sorted sample plus one seeded draw of the jitter
    jittered = np.sort(x) + np.random.default_rng(11).uniform(-0.125, 0.125, size=x.size)
    dip, p = diptest.diptest(jittered)
    assert stepped.dip == dip
    assert stepped.p == p
    assert JITTER_STEP >= 1 << 16


def test_values_must_be_distinct_and_ascending():
    from scalewright.errors import UsageError

    with pytest.raises(UsageError, match="distinct and ascending"):
        describe_counted_scores(np.array([2.0, 1.0]), np.array([3, 4]))
