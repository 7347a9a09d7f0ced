"""Statistics from one-byte codes equal numpy's on the keyed floats, and the float route of scale_reliability."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.answer_codes import MISSING, ItemAnswers
from scalewright.errors import DataError
from scalewright.results import to_jsonable
from scalewright.stats.coded import answer_tally, listwise_covariance, pairwise_covariance
from scalewright.stats.reliability import scale_reliability
from scalewright.stats.reliability_groups import reliability_by_group
from scalewright.stats.subgroups import split_by


def coded_scale(rng: np.random.Generator, n: int, k: int, span: int, missing: float) -> np.ndarray:
    """Correlated codes 0..span (a shared factor, cut into levels) with a share of MISSING."""
    factor = rng.standard_normal(n)
    continuous = 0.7 * factor[:, None] + 0.7 * rng.standard_normal((n, k))
    cuts = np.linspace(-1.6, 1.6, span)
    codes = (continuous[:, :, None] > cuts).sum(axis=2).astype(np.uint8)
    codes[rng.random((n, k)) < missing] = MISSING
    return np.asfortranarray(codes)


def keyed_floats(codes: np.ndarray, low: int, high: int, reversed_mask: np.ndarray) -> np.ndarray:
    values = codes.astype(np.float64)
    values[codes == MISSING] = np.nan
    return np.where(reversed_mask, high - values, low + values)


def nearly_equal(a, b, rel: float = 1e-9, key: str = "") -> bool:
    """Equal up to rounding; the iterative one-factor fit (omega, loadings) stops at 1e-6 agreement.

    Flag messages are left out: they print the compared values to two decimals, where a value on a
    rounding tie (alpha = -.125) may print either way.
    """
    if isinstance(a, dict):
        return a.keys() == b.keys() and all(nearly_equal(a[name], b[name], rel, name) for name in a
                                            if name != "message")
    if isinstance(a, (list, tuple)):
        return len(a) == len(b) and all(nearly_equal(x, y, rel, key) for x, y in zip(a, b, strict=True))
    if isinstance(a, float) and isinstance(b, float):
        tolerance = 1e-6 if ("omega" in key or "loading" in key) else rel
        return math.isclose(a, b, rel_tol=tolerance, abs_tol=tolerance)
    return a == b


@pytest.mark.parametrize(("span", "missing"), [(4, 0.0), (4, 0.03), (6, 0.1), (10, 0.02), (100, 0.01)])
def test_listwise_covariance_equals_numpy_on_the_complete_keyed_rows(span, missing):
    rng = np.random.default_rng(span)
    codes = coded_scale(rng, 3000, 5, span, missing)
    low = -2
    reversed_mask = np.array([False, True, False, False, True])
    result = listwise_covariance(ItemAnswers.from_codes(codes, low, low + span), low=low, high=low + span, reversed_mask=reversed_mask)
    values = keyed_floats(codes, low, low + span, reversed_mask)
    complete = values[~np.isnan(values).any(axis=1)]
    # reference: numpy.cov (ddof 1) and mean on the rows that answered every item
    np.testing.assert_allclose(result.cov, np.cov(complete, rowvar=False), rtol=1e-12, atol=1e-13)
    np.testing.assert_allclose(result.means, complete.mean(axis=0), rtol=1e-13, atol=1e-13)
    assert result.n_used == complete.shape[0]
    assert result.n_rows == 3000


@pytest.mark.parametrize("span", [32, 33, 250])  # widest range in float32 blocks, the next one, the widest
def test_cross_products_stay_exact_over_several_full_blocks(span):
    rng = np.random.default_rng(span)
    codes = np.asfortranarray(rng.integers(span - 2, span + 1, (40_000, 3)).astype(np.uint8))  # near the top
    codes[::97, 1] = MISSING
    result = listwise_covariance(ItemAnswers.from_codes(codes, 0, span), low=0, high=span, reversed_mask=np.zeros(3, dtype=bool))
    complete = codes[codes[:, 1] != MISSING].astype(np.float64)
    # reference: numpy.cov and mean on the complete rows, in float64
    np.testing.assert_allclose(result.cov, np.cov(complete, rowvar=False), rtol=1e-11)
    np.testing.assert_allclose(result.means, complete.mean(axis=0), rtol=1e-14)


def test_float_and_code_routes_of_pairwise_covariance_agree_with_pandas():
    # the one pairwise covariance in two arithmetics: float products on a NaN matrix
    # (item_covariance(pairwise=True), used by the screen's Mahalanobis distance) and exact integer sums on
    # one-byte codes (pairwise_covariance, used by reliability and confirm); both against pandas live
    import pandas as pd

    from scalewright.stats.item_covariance import item_covariance

    rng = np.random.default_rng(31)
    codes = coded_scale(rng, 400, 5, 4, 0.2)
    codes[:, 4] = MISSING
    codes[:1, 4] = 2  # the last item answered once: no pair with it has 2 rows, so its covariances are NaN
    reversed_mask = np.array([False, True, False, False, False])
    values = keyed_floats(codes, 1, 5, reversed_mask)
    from_codes = pairwise_covariance(ItemAnswers.from_codes(codes, 1, 5), low=1, high=5, reversed_mask=reversed_mask)
    from_floats = item_covariance(values, pairwise=True)
    # reference: pandas DataFrame.cov(min_periods=2), pairwise complete observations, NaN below 2 rows
    expected = pd.DataFrame(values).cov(min_periods=2).to_numpy()
    np.testing.assert_allclose(from_codes.cov, expected, rtol=1e-12, atol=1e-13, equal_nan=True)
    np.testing.assert_allclose(from_floats.cov, expected, rtol=1e-12, atol=1e-13, equal_nan=True)
    assert np.isnan(from_codes.cov[4]).all()
    np.testing.assert_array_equal(from_codes.pair_counts, from_floats.pair_counts)
    assert from_codes.n_used == from_floats.n_used


@pytest.mark.parametrize(("span", "missing"), [(4, 0.0), (4, 0.15), (10, 0.3)])
def test_pairwise_covariance_equals_pandas(span, missing):
    import pandas as pd

    rng = np.random.default_rng(20 + span)
    codes = coded_scale(rng, 2500, 4, span, missing)
    reversed_mask = np.array([True, False, False, True])
    result = pairwise_covariance(ItemAnswers.from_codes(codes, 0, span), low=0, high=span, reversed_mask=reversed_mask)
    values = pd.DataFrame(keyed_floats(codes, 0, span, reversed_mask))
    # reference: pandas DataFrame.cov, which uses the rows where both items are answered
    np.testing.assert_allclose(result.cov, values.cov().to_numpy(), rtol=1e-12, atol=1e-13)
    answered = values.notna().astype(int)
    np.testing.assert_array_equal(result.pair_counts, answered.T @ answered)
    assert result.n_used == int((answered.T @ answered).to_numpy().min())
    assert result.n_complete == int(answered.all(axis=1).sum())


def test_answer_tally_equals_numpy_bincount_on_both_counting_paths():
    rng = np.random.default_rng(3)
    for span in (4, 20):  # few levels: one comparison per level; many: a histogram
        codes = coded_scale(rng, 2000, 3, span, 0.05)
        tally = answer_tally(ItemAnswers.from_codes(codes, 0, span), span + 1)
        for j in range(3):
            answered = codes[:, j][codes[:, j] != MISSING]
            np.testing.assert_array_equal(tally[j], np.bincount(answered, minlength=span + 1))


def test_codes_beyond_the_answer_levels_are_refused():
    codes = np.array([[0, 1], [7, 2], [1, MISSING]], dtype=np.uint8)
    with pytest.raises(DataError, match="beyond the 5 answer levels"):
        answer_tally(ItemAnswers.from_codes(codes, 0, 4), 5)
    with pytest.raises(DataError, match="uint8"):
        ItemAnswers.from_codes(codes.astype(np.int64), 0, 4)
    with pytest.raises(DataError, match="whole-number answer range"):
        scale_reliability(ItemAnswers.from_codes(codes, 0, 4), item_names=["a", "b"], low=0.5, high=4.5)


def without_the_factor_fit(result: dict) -> dict:
    """The result without what rests on the one-factor fit (omega, loadings, and the flags and notes they give)."""
    out = {key: value for key, value in result.items()
           if key not in ("omega_total", "heywood_items", "notes", "flags")}
    out["items"] = {name: {key: value for key, value in item.items() if key not in ("loading", "omega_if_deleted")}
                    for name, item in result["items"].items()}
    return out


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(0, 300), k=st.integers(1, 7), span=st.sampled_from([1, 4, 6, 10]),
       missing=st.sampled_from([0.0, 0.05, 0.3]))
def test_scale_reliability_from_codes_equals_the_float_route(seed, n, k, span, missing):
    rng = np.random.default_rng(seed)
    codes = coded_scale(rng, n, k, span, missing)
    names = [f"i{j}" for j in range(k)]
    reversed_items = [name for name in names if rng.random() < 0.4]
    mask = np.array([name in reversed_items for name in names])
    options = dict(item_names=names, low=1, high=1 + span, reversed_items=reversed_items)
    from_codes = to_jsonable(scale_reliability(ItemAnswers.from_codes(codes, 1, 1 + span), **options).to_dict())
    from_floats = to_jsonable(scale_reliability(keyed_floats(codes, 1, 1 + span, mask), **options).to_dict())
    if from_codes["heywood_items"] or from_floats["heywood_items"]:
        # an improper (Heywood) solution need not be unique: with items alike, any one of them may take the
        # bound, and rounding decides which; everything that does not rest on the fit must still agree
        assert nearly_equal(without_the_factor_fit(from_codes), without_the_factor_fit(from_floats))
    else:
        assert nearly_equal(from_codes, from_floats)


@pytest.mark.parametrize("options", [dict(pairwise=True), dict(n_resamples=200, seed=11)])
def test_pairwise_and_bootstrap_from_codes_equal_the_float_route(options):
    codes = coded_scale(np.random.default_rng(9), 400, 4, 4, 0.08)
    mask = np.array([False, False, True, False])
    common = dict(item_names=list("abcd"), low=1, high=5, reversed_items=["c"], **options)
    from_codes = scale_reliability(ItemAnswers.from_codes(codes, 1, 5), **common).to_dict()
    from_floats = scale_reliability(keyed_floats(codes, 1, 5, mask), **common).to_dict()
    assert nearly_equal(to_jsonable(from_codes), to_jsonable(from_floats))


def test_subgroups_from_codes_equal_the_float_route():
    import pandas as pd

    rng = np.random.default_rng(12)
    codes = coded_scale(rng, 900, 5, 4, 0.02)
    split = split_by(pd.Series(rng.choice(["a", "b", "c"], 900)), min_size=10, column="site")
    options = dict(item_names=list("vwxyz"), low=1, high=5, reversed_items=["x"])
    mask = np.array([False, False, True, False, False])
    from_codes = reliability_by_group(ItemAnswers.from_codes(codes, 1, 5), split, **options).to_dict()
    from_floats = reliability_by_group(keyed_floats(codes, 1, 5, mask), split, **options).to_dict()
    assert nearly_equal(to_jsonable(from_codes), to_jsonable(from_floats))


def test_code_counts_of_every_column_in_one_pass_equal_numpy_bincount():
    # reference: numpy.bincount of each column on its own, computed live
    from scalewright.stats.coded import _BLOCK_ROWS, code_counts

    rng = np.random.default_rng(4)
    codes = rng.integers(0, 7, size=(2 * _BLOCK_ROWS + 17, 5)).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.05] = MISSING
    counts = code_counts(np.asfortranarray(codes))
    for j in range(codes.shape[1]):
        np.testing.assert_array_equal(counts[j], np.bincount(codes[:, j], minlength=256))
    assert code_counts(np.zeros((0, 3), dtype=np.uint8)).sum() == 0
    with pytest.raises(DataError):
        code_counts(codes.astype(np.int16))
