"""EM means and covariances, Little's MCAR test and the per-pattern summaries they start from."""
from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.stats.em import em_means_and_covariance, little_mcar_test
from scalewright.stats.missing_patterns import PatternSummary
from scalewright.stats.reliability import scale_reliability

POPULATION = np.array([[1.0, 0.5, 0.4], [0.5, 1.0, 0.3], [0.4, 0.3, 1.0]])


def _ols(y: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, float]:
    """Intercept and slopes by numpy's least squares, and the ML residual variance (RSS / n)."""
    design = np.column_stack([np.ones(len(y)), x])
    coef, *_ = np.linalg.lstsq(design, y, rcond=None)
    residual = y - design @ coef
    return coef, float(residual @ residual / len(y))


def test_monotone_missingness_equals_andersons_closed_form():
    # Outside reference: Anderson (1957), JASA 52:200-203. Under monotone missingness (y1 always answered,
    # y2 on a subset, y3 on a subset of that) the likelihood factors into the marginal of y1 and the
    # regressions of y2 on y1 and of y3 on (y1, y2), each fitted by least squares on the rows that have it;
    # the ML means and covariances follow from those pieces. Written here with numpy's lstsq, not with EM.
    rng = np.random.default_rng(1957)
    n, n2, n3 = 400, 290, 170
    data = rng.multivariate_normal([3.0, 2.0, 4.0], POPULATION, size=n)
    data[n2:, 1] = np.nan
    data[n3:, 2] = np.nan
    y1, y2, y3 = data[:, 0], data[:n2, 1], data[:n3, 2]
    mu1, s11 = y1.mean(), y1.var()
    (a2, b21), s22_1 = _ols(y2, y1[:n2])
    coef3, s33_12 = _ols(y3, np.column_stack([y1[:n3], y2[:n3]]))
    mu = np.empty(3)
    sigma = np.empty((3, 3))
    mu[0], sigma[0, 0] = mu1, s11
    mu[1] = a2 + b21 * mu1
    sigma[0, 1] = sigma[1, 0] = b21 * s11
    sigma[1, 1] = s22_1 + b21**2 * s11
    b3 = coef3[1:]
    mu[2] = coef3[0] + b3 @ mu[:2]
    sigma[2, :2] = sigma[:2, 2] = b3 @ sigma[:2, :2]
    sigma[2, 2] = s33_12 + b3 @ sigma[:2, :2] @ b3

    estimate = em_means_and_covariance(PatternSummary.from_values(data), tol=1e-15, max_iter=100_000)
    assert estimate.converged
    np.testing.assert_allclose(estimate.means, mu, rtol=0, atol=1e-8)
    np.testing.assert_allclose(estimate.cov, sigma, rtol=0, atol=1e-8)


def test_nothing_missing_gives_the_complete_data_estimates_exactly():
    # Outside reference: the complete-data ML estimates computed in exact rational arithmetic (Python's
    # fractions) from the textbook formulas mean = sum x / n, cov = sum (x - mean)(x - mean)' / n.
    rng = np.random.default_rng(3)
    codes = rng.integers(0, 5, size=(57, 4)).astype(np.uint8)
    estimate = em_means_and_covariance(PatternSummary.from_codes(codes))
    rows = [[int(v) for v in row] for row in codes]
    n = len(rows)
    means = [Fraction(sum(r[j] for r in rows), n) for j in range(4)]
    for j in range(4):
        assert estimate.means[j] == float(means[j])
        for l in range(4):
            exact = sum((r[j] - means[j]) * (r[l] - means[l]) for r in rows) / n
            assert estimate.cov[j, l] == float(exact)
    assert estimate.iterations == 0


def test_nothing_missing_em_reliability_equals_listwise_exactly():
    # Outside reference: the listwise (complete-data) route of the same function; with nothing missing the
    # EM fixed point is the complete-data estimate, so every statistic must be identical, not just close.
    rng = np.random.default_rng(4)
    latent = rng.standard_normal((300, 1))
    codes = np.clip(np.round(2 + latent + rng.standard_normal((300, 5))), 0, 4).astype(np.uint8)
    from scalewright.answer_codes import ItemAnswers

    options = dict(item_names=[f"i{j}" for j in range(5)], low=1, high=5, reversed_items=["i2"])
    listwise = scale_reliability(ItemAnswers.from_codes(codes, 1, 5), **options).to_dict()
    em = scale_reliability(ItemAnswers.from_codes(codes, 1, 5), missing="em", **options).to_dict()
    for key in ("alpha", "alpha_ci", "omega_total", "lambda2", "lambda6", "alpha_standardized", "n_used", "items"):
        assert em[key] == listwise[key], key
    assert em["missing_method"] == "em"
    assert em["mcar_test"] is None


def _mar_sample(n: int, rng: np.random.Generator) -> np.ndarray:
    data = rng.multivariate_normal(np.zeros(3), POPULATION, size=n)
    # item 2 goes missing far more often when item 1 is high: missing at random, not completely at random
    gone = rng.random(n) < 1.0 / (1.0 + np.exp(-(2.5 * data[:, 0] - 1.0)))
    data[gone, 1] = np.nan
    return data


def test_em_recovers_the_population_under_mar_where_listwise_is_biased():
    # Outside reference: the population means (0) and covariance matrix (POPULATION) the data are drawn
    # from; 200,000 rows put the sampling error near .003, so EM must be within .01 and listwise, whose
    # complete rows over-represent low values of item 1, must be visibly off.
    data = _mar_sample(200_000, np.random.default_rng(2002))
    estimate = em_means_and_covariance(PatternSummary.from_values(data))
    complete = data[~np.isnan(data).any(axis=1)]
    listwise_means, listwise_cov = complete.mean(axis=0), np.cov(complete, rowvar=False)
    em_error = max(np.abs(estimate.means).max(), np.abs(estimate.cov - POPULATION).max())
    listwise_error = max(np.abs(listwise_means).max(), np.abs(listwise_cov - POPULATION).max())
    print(f"largest error: EM {em_error:.4f}, listwise {listwise_error:.4f}")
    assert em_error < 0.01, f"EM {em_error:.4f} (listwise {listwise_error:.4f})"
    assert listwise_error > 0.2, f"listwise {listwise_error:.4f} (EM {em_error:.4f})"


def test_little_test_rejects_mar_missingness():
    # Outside reference: Little (1988), JASA 83:1198-1202 -- under MAR the respondents with a gap in item
    # 2 differ on item 1, which the test must detect in 1,000 rows (power, not a size check).
    data = _mar_sample(1000, np.random.default_rng(88))
    summary = PatternSummary.from_values(data)
    test = little_mcar_test(summary, em_means_and_covariance(summary))
    assert test is not None
    assert test.df == 2
    assert test.pvalue < 1e-6


def test_little_test_reduces_to_a_one_way_anova_with_one_variable_incomplete():
    # Outside reference: scipy.stats.f_oneway, computed live. With y1 always answered and y2 partly
    # missing, the ML estimates are Anderson's, the pattern means deviate from them along (1, b), and
    # Little's d2 reduces to n SSB / SST of y1 between the two patterns: d2 = n F / (F + n - 2).
    from scipy.stats import f_oneway

    rng = np.random.default_rng(19)
    data = rng.multivariate_normal([0, 0], POPULATION[:2, :2], size=250)
    data[rng.random(250) < 0.3, 1] = np.nan
    summary = PatternSummary.from_values(data)
    test = little_mcar_test(summary, em_means_and_covariance(summary, tol=1e-14, max_iter=100_000))
    gap = np.isnan(data[:, 1])
    f = f_oneway(data[gap, 0], data[~gap, 0]).statistic
    assert test.df == 1
    assert test.chi2 == pytest.approx(250 * f / (f + 248), rel=1e-7)


@pytest.mark.slow
def test_little_test_size_under_mcar():
    # Outside reference: under MCAR the test's rejection rate at .05 must be near .05 (Little 1988, section
    # 3: d2 is asymptotically chi-square). 400 replications: binomial sd .011, so .05 +- .03 is a 2.7 sd band.
    rng = np.random.default_rng(1988)
    cov = np.full((4, 4), 0.4) + 0.6 * np.eye(4)
    rejections = 0
    for _ in range(400):
        data = rng.multivariate_normal(np.zeros(4), cov, size=300)
        data[rng.random(data.shape) < 0.1] = np.nan
        summary = PatternSummary.from_values(data)
        test = little_mcar_test(summary, em_means_and_covariance(summary))
        rejections += test.pvalue < 0.05
    assert 0.02 <= rejections / 400 <= 0.08, rejections / 400


# ------------------------------------------------------------------------------------------ the summaries

def _same(a: PatternSummary, b: PatternSummary) -> None:
    assert a.k == b.k
    assert a.n_none == b.n_none
    assert a.exact == b.exact
    np.testing.assert_array_equal(a.observed, b.observed)
    np.testing.assert_array_equal(a.counts, b.counts)
    np.testing.assert_array_equal(a.sums, b.sums)
    assert sorted(a.matrices) == sorted(b.matrices)  # held as a matrix or as rows by count alone
    for p in range(len(a.counts)):
        np.testing.assert_array_equal(a.cross_products(p), b.cross_products(p))


@st.composite
def coded_blocks(draw):
    k = draw(st.integers(1, 6))
    n = draw(st.integers(0, 160))
    seed = draw(st.integers(0, 2**16))
    share = draw(st.sampled_from([0.0, 0.05, 0.3, 0.9]))
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, 5, size=(n, k)).astype(np.uint8)
    codes[rng.random((n, k)) < share] = 255
    cuts = sorted(draw(st.lists(st.integers(0, n), min_size=2, max_size=2)))
    return codes, cuts


@settings(max_examples=60, deadline=None)
@given(coded_blocks())
def test_merging_is_associative_and_order_independent(block):
    # Outside reference: the summary of the whole matrix, built in one go; exact integers make every
    # grouping and order of the merges equal to it, not just close (the property a chunked or
    # distributed reader relies on).
    codes, (i, j) = block
    a, b, c = (PatternSummary.from_codes(part) for part in (codes[:i], codes[i:j], codes[j:]))
    whole = PatternSummary.from_codes(codes)
    _same(a.merge(b).merge(c), whole)
    _same(a.merge(b.merge(c)), whole)
    _same(c.merge(a).merge(b), whole)
    _same(b.merge(c.merge(a)), whole)
    assert whole.missing_counts() == {m: int(v) for m, v in
                                      enumerate(np.bincount((codes == 255).sum(axis=1), minlength=codes.shape[1] + 1))
                                      if v}


def test_codes_and_values_give_the_same_exact_summary():
    # Outside reference: the same answers read as float64 with NaN (the general route).
    rng = np.random.default_rng(8)
    codes = rng.integers(0, 7, size=(500, 5)).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.2] = 255
    values = np.where(codes == 255, np.nan, codes.astype(float))
    _same(PatternSummary.from_codes(codes), PatternSummary.from_values(values))


def _same_rows(a: PatternSummary, b: PatternSummary) -> None:
    """The rows held (not as a matrix) are the same rows of the same patterns, in any order."""
    def held(summary: PatternSummary) -> np.ndarray:
        table = np.column_stack([summary.row_pattern, summary.rows])
        return table[np.lexsort(table.T[::-1])] if table.size else table

    np.testing.assert_array_equal(held(a), held(b))


@settings(max_examples=60, deadline=None)
@given(coded_blocks())
def test_pattern_keys_from_codes_give_the_general_summary(block):
    # Outside reference: the same answers as float64 with NaN through the general route (packed bits,
    # lexsort, every statistic computed from the rows); the codes take the quick route, with and without
    # the listwise cross-products the streaming route hands over for the complete rows.
    from scalewright.stats.coded import listwise_gram

    codes, _ = block
    general = PatternSummary.from_values(np.where(codes == 255, np.nan, codes.astype(float)))
    for quick in (PatternSummary.from_codes(codes),
                  PatternSummary.from_codes(codes, complete_gram=listwise_gram(codes, span=4))):
        _same(quick, general)
        _same_rows(quick, general)
        assert quick.sums.dtype == np.int64


@pytest.mark.parametrize("k", [9, 17, 40, 64, 65])
def test_pattern_keys_of_wide_scales_give_the_general_summary(k):
    # Outside reference as above; widths that take 16-, 32- and 64-bit keys, and the packed words beyond 64
    rng = np.random.default_rng(k)
    codes = rng.integers(0, 4, size=(600, k)).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.5 / k] = 255
    codes[:40, : k // 2] = 255  # one pattern with many rows, held as a matrix
    general = PatternSummary.from_values(np.where(codes == 255, np.nan, codes.astype(float)))
    quick = PatternSummary.from_codes(codes)
    _same(quick, general)
    _same_rows(quick, general)


def test_a_listwise_gram_of_other_codes_is_refused():
    from scalewright.errors import DataError
    from scalewright.stats.coded import listwise_gram

    codes = np.array([[0, 1], [2, 3], [1, 255]], dtype=np.uint8)
    with pytest.raises(DataError, match="listwise cross-products"):
        PatternSummary.from_codes(codes, complete_gram=listwise_gram(codes[:1], span=3))


def test_em_from_merged_blocks_equals_em_from_the_whole():
    # Outside reference: EM of the whole matrix in one summary; merged blocks only reorder sums.
    rng = np.random.default_rng(9)
    latent = rng.standard_normal((3000, 1))
    codes = np.clip(np.round(2 + latent + rng.standard_normal((3000, 6))), 0, 4).astype(np.uint8)
    codes[rng.random(codes.shape) < 0.08] = 255
    merged = PatternSummary.from_codes(codes[:1000]).merge(PatternSummary.from_codes(codes[1000:]))
    whole = em_means_and_covariance(PatternSummary.from_codes(codes))
    parts = em_means_and_covariance(merged)
    np.testing.assert_allclose(parts.means, whole.means, rtol=0, atol=1e-10)
    np.testing.assert_allclose(parts.cov, whole.cov, rtol=0, atol=1e-10)


def test_em_matches_a_row_by_row_em_on_rare_patterns():
    # Outside reference: the textbook E step written row by row with numpy (regression of the missing
    # answers on the answered ones through Sigma_OO^-1, Little & Rubin 2002, section 11.2), on data whose
    # patterns are all rare, so the summary holds rows and the batched E step is the one under test.
    rng = np.random.default_rng(10)
    data = rng.multivariate_normal(np.zeros(5), np.full((5, 5), 0.3) + 0.7 * np.eye(5), size=60)
    data[rng.random(data.shape) < 0.25] = np.nan
    data = data[~np.isnan(data).all(axis=1)]
    mu, sigma = np.nanmean(data, axis=0), np.diag(np.nanvar(data, axis=0))
    for _ in range(3000):
        sums, cross = np.zeros(5), np.zeros((5, 5))
        for row in data:
            m, o = np.isnan(row), ~np.isnan(row)
            x, extra = row.copy(), np.zeros((5, 5))
            if m.any():
                slope = sigma[np.ix_(m, o)] @ np.linalg.inv(sigma[np.ix_(o, o)])
                x[m] = mu[m] + slope @ (row[o] - mu[o])
                extra[np.ix_(m, m)] = sigma[np.ix_(m, m)] - slope @ sigma[np.ix_(o, m)]
            sums += x
            cross += np.outer(x, x) + extra
        new_mu = sums / len(data)
        new_sigma = cross / len(data) - np.outer(new_mu, new_mu)
        done = max(np.abs(new_mu - mu).max(), np.abs(new_sigma - sigma).max()) < 1e-13
        mu, sigma = new_mu, new_sigma
        if done:
            break
    estimate = em_means_and_covariance(PatternSummary.from_values(data), tol=1e-14, max_iter=100_000)
    np.testing.assert_allclose(estimate.means, mu, atol=1e-9)
    np.testing.assert_allclose(estimate.cov, sigma, atol=1e-9)


def test_an_item_without_variance_keeps_its_mean_and_no_covariance():
    # Outside reference: numpy on the answers of the constant item (its mean), and the definition of a
    # constant's variance and covariances (zero).
    rng = np.random.default_rng(11)
    data = rng.multivariate_normal(np.zeros(3), POPULATION, size=200)
    data[:, 2] = 4.0
    data[rng.random(data.shape) < 0.1] = np.nan
    estimate = em_means_and_covariance(PatternSummary.from_values(data))
    assert estimate.means[2] == 4.0
    assert (estimate.cov[2] == 0).all()
    assert (estimate.cov[:, 2] == 0).all()
    assert [n.code for n in estimate.notes] == ["em-constant-items"]
    assert np.isfinite(estimate.cov).all()


@settings(max_examples=40, deadline=None)
@given(coded_blocks())
def test_listwise_from_the_summary_equals_the_complete_rows(block):
    # Outside reference: numpy's mean and cov (ddof 1) of the rows with every item answered, keyed by hand
    # (reversed item: high - code; others: low + code); and, to the last bit, the project's own listwise
    # route from the codes, since reliability now takes the listwise matrix from the summary.
    from scalewright.answer_codes import ItemAnswers
    from scalewright.stats.coded import listwise_covariance
    from scalewright.stats.missing import listwise_from_summary

    codes, _ = block
    k = codes.shape[1]
    reversed_mask = np.arange(k) % 2 == 1
    ours = listwise_from_summary(PatternSummary.from_codes(codes), low=1, high=5, reversed_mask=reversed_mask)
    theirs = listwise_covariance(ItemAnswers.from_codes(codes, 1, 5), low=1, high=5, reversed_mask=reversed_mask)
    np.testing.assert_array_equal(ours.cov, theirs.cov)
    np.testing.assert_array_equal(ours.means, theirs.means)
    assert (ours.n_used, ours.n_rows) == (theirs.n_used, theirs.n_rows)
    complete = codes[(codes != 255).all(axis=1)].astype(float)
    keyed = np.where(reversed_mask, 5 - complete, 1 + complete)
    if len(keyed) >= 2:
        np.testing.assert_allclose(ours.cov, np.cov(keyed, rowvar=False).reshape(k, k), rtol=1e-12, atol=1e-12)
        np.testing.assert_allclose(ours.means, keyed.mean(axis=0), rtol=1e-12)


def test_degenerate_samples_give_nan_with_a_reason():
    # Outside reference: the ML covariance matrix of n <= k respondents is singular (rank at most n - 1,
    # a property of any sample covariance matrix), and an item that is an exact copy of another makes it
    # singular whatever n is; both must end in NaN and a note, never in an exception.
    few = np.array([[2, 255, 2], [255, 3, 1], [255, 2, 255]], dtype=np.uint8)
    estimate = em_means_and_covariance(PatternSummary.from_codes(few))
    assert np.isnan(estimate.cov).all()
    assert [n.code for n in estimate.notes] == ["em-too-few"]
    rng = np.random.default_rng(12)
    data = rng.multivariate_normal(np.zeros(2), POPULATION[:2, :2], size=100)
    data = np.column_stack([data, data[:, 0]])
    data[rng.random(data.shape) < 0.1] = np.nan
    summary = PatternSummary.from_values(data)
    estimate = em_means_and_covariance(summary)
    assert np.isnan(estimate.cov).all()
    assert [n.code for n in estimate.notes] == ["em-singular"]
    assert little_mcar_test(summary, estimate) is None
