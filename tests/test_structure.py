"""Tests of stats/structure.py and stats/factoring.py: KMO, Bartlett, parallel analysis, EFA, scale matching."""
from __future__ import annotations

import json
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from scalewright.errors import DataError, UsageError
from scalewright.stats.adequacy import bartlett_sphericity, complete_cases, correlation_of, kmo
from scalewright.stats.factor_matching import assign_factors_to_scales
from scalewright.stats.factoring import factor_correlations_from_transform, fit_factors
from scalewright.stats.parallel import parallel_analysis, random_eigenvalues
from scalewright.stats.structure import analyse_structure
from scalewright.stats.unidimensionality import unidimensionality, unidimensionality_of_correlation


def simple_structure(n_factors: int, per_factor: int, loading: float = 0.7) -> np.ndarray:
    pattern = np.zeros((n_factors * per_factor, n_factors))
    for j in range(n_factors):
        pattern[j * per_factor:(j + 1) * per_factor, j] = loading
    return pattern


def generate(pattern: np.ndarray, phi: np.ndarray, n: int, seed: int) -> np.ndarray:
    """n respondents of the common factor model x = pattern f + e with corr(f) = phi, unit item variances."""
    rng = np.random.default_rng(seed)
    factors = rng.multivariate_normal(np.zeros(len(phi)), phi, size=n)
    unique = 1.0 - np.einsum("ij,jk,ik->i", pattern, phi, pattern)
    return factors @ pattern.T + rng.standard_normal((n, pattern.shape[0])) * np.sqrt(unique)


def match_columns(target: np.ndarray, loadings: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Column order and signs that best line ``loadings`` up with ``target`` (for comparisons only)."""
    from scipy.optimize import linear_sum_assignment

    congruence = target.T @ loadings
    rows, cols = linear_sum_assignment(np.abs(congruence), maximize=True)
    order = cols[np.argsort(rows)]
    signs = np.sign(congruence[np.arange(len(order)), order])
    return order, signs


@pytest.fixture(scope="module")
def two_factor_data() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    pattern = np.array([[.8, 0], [.7, 0], [.6, 0], [.7, .0], [.75, 0],
                        [0, .8], [0, .6], [0, .7], [0, .65], [.0, .75]])
    phi = np.array([[1, .35], [.35, 1]])
    return generate(pattern, phi, 4000, seed=11), pattern, phi


# --------------------------------------------------------------------------- KMO and Bartlett

def test_kmo_matches_factor_analyzer_on_complete_data(two_factor_data):
    from factor_analyzer import calculate_kmo

    x = two_factor_data[0][:500]
    ours = kmo(correlation_of(x))
    per_item, overall = calculate_kmo(x)  # reference: factor_analyzer 0.5.1, computed live
    np.testing.assert_allclose(ours.per_item, per_item, rtol=0, atol=1e-6)
    assert ours.overall == pytest.approx(overall, abs=1e-6)


def test_bartlett_matches_factor_analyzer_and_the_closed_form(two_factor_data):
    from factor_analyzer import calculate_bartlett_sphericity
    from scipy import stats

    x = two_factor_data[0][:300]
    n, p = x.shape
    ours = bartlett_sphericity(correlation_of(x), n)
    chi2, p_value = calculate_bartlett_sphericity(x)  # reference: factor_analyzer 0.5.1, computed live
    assert ours.chi2 == pytest.approx(chi2, rel=1e-6)
    assert ours.p == pytest.approx(p_value, abs=1e-6)
    # closed form, Bartlett (1950): chi2 = -(n - 1 - (2p + 5)/6) ln|R|, df = p(p - 1)/2, with numpy's det
    closed = -(n - 1 - (2 * p + 5) / 6) * np.log(np.linalg.det(np.corrcoef(x, rowvar=False)))
    assert ours.chi2 == pytest.approx(closed, rel=1e-9)
    assert ours.df == p * (p - 1) // 2
    assert ours.p == pytest.approx(stats.chi2.sf(closed, p * (p - 1) / 2), rel=1e-9)


def test_three_hundred_items_do_not_underflow():
    rng = np.random.default_rng(3)
    n, p = 1500, 300
    x = rng.standard_normal((n, 1)) * 4.0 + rng.standard_normal((n, p))  # items correlate about .94
    r = correlation_of(x)
    assert np.linalg.det(r) == 0.0  # the naive determinant underflows here (why slogdet is used)
    result = bartlett_sphericity(r, n)
    # independent route to ln|R|: the sum of the log eigenvalues (numpy eigvalsh)
    log_det = np.log(np.linalg.eigvalsh(r)).sum()
    assert np.isfinite(result.chi2)
    assert result.chi2 == pytest.approx(-(n - 1 - (2 * p + 5) / 6) * log_det, rel=1e-8)
    adequacy = kmo(r)
    assert adequacy.overall is not None
    assert 0 < adequacy.overall < 1
    assert np.all(np.isfinite(adequacy.per_item))


def test_kmo_and_bartlett_on_a_singular_matrix_give_none_with_a_reason():
    rng = np.random.default_rng(4)
    x = rng.standard_normal((50, 3))
    x = np.column_stack([x, x[:, 0] + x[:, 1]])
    r = correlation_of(x)
    assert kmo(r).overall is None
    assert [n.code for n in kmo(r).notes] == ["kmo-singular"]
    result = bartlett_sphericity(r, 50)
    assert result.chi2 is None
    assert result.p is None
    assert [n.code for n in result.notes] == ["bartlett-singular"]
    assert [n.code for n in kmo(np.eye(1)).notes] == ["kmo-too-few-items"]
    assert [n.code for n in kmo(np.eye(3)).notes] == ["kmo-zero-correlations"]


def test_bartlett_with_too_few_respondents_gives_none():
    result = bartlett_sphericity(np.eye(20), 5)
    assert result.chi2 is None
    assert result.notes


@settings(max_examples=25, deadline=None)
@given(st.integers(min_value=0, max_value=10_000), st.permutations(list(range(6))))
def test_kmo_lies_in_the_unit_interval_and_does_not_depend_on_item_order(seed, order):
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((40, 6)) + rng.standard_normal((40, 1))
    r = correlation_of(x)
    base = kmo(r)
    permuted = kmo(r[np.ix_(order, order)])
    assert 0 <= base.overall <= 1
    assert permuted.overall == pytest.approx(base.overall, rel=1e-10)
    np.testing.assert_allclose(permuted.per_item, base.per_item[list(order)], rtol=1e-10)
    assert bartlett_sphericity(r[np.ix_(order, order)], 40).chi2 == pytest.approx(bartlett_sphericity(r, 40).chi2,
                                                                                    rel=1e-10)
    # reversing an item flips the signs of its correlations and partial correlations, not their squares
    flip = np.where(np.arange(6) == order[0], -1.0, 1.0)
    flipped = kmo(r * np.outer(flip, flip))
    assert flipped.overall == pytest.approx(base.overall, rel=1e-10)
    np.testing.assert_allclose(flipped.per_item, base.per_item, rtol=1e-10)


# --------------------------------------------------------------------------- parallel analysis

@pytest.mark.parametrize("n_factors", [2, 3, 4])
def test_parallel_analysis_recovers_the_number_of_factors(n_factors):
    pattern = simple_structure(n_factors, 5, loading=0.65)
    phi = np.full((n_factors, n_factors), 0.2) + 0.8 * np.eye(n_factors)
    x = generate(pattern, phi, 800, seed=20 + n_factors)
    result = parallel_analysis(correlation_of(x), len(x), iterations=60, seed=7)
    assert result.suggested_factors == n_factors
    assert result.suggested_factors_mean >= n_factors


@pytest.mark.parametrize("sampler", ["wishart", "data"])
def test_random_eigenvalues_follow_the_marchenko_pastur_edge(sampler):
    # closed form, Marchenko & Pastur (1967), Math. USSR-Sbornik 1:457-483: for pure noise the largest
    # eigenvalue of the correlation matrix tends to (1 + sqrt(p/n))^2 and the smallest to (1 - sqrt(p/n))^2
    n, p = 4000, 100
    values = random_eigenvalues(n, p, iterations=10, seed=1, sampler=sampler)
    ratio = np.sqrt(p / n)
    assert values[:, 0].mean() == pytest.approx((1 + ratio) ** 2, rel=0.02)
    assert values[:, -1].mean() == pytest.approx((1 - ratio) ** 2, rel=0.03)
    np.testing.assert_allclose(values.sum(axis=1), p, rtol=1e-10)  # trace of a correlation matrix is p


def test_random_data_eigenvalues_agree_with_scipy_wishart_draws():
    from scipy import stats

    # reference: the centred cross-products of n x p standard normal data are Wishart(n - 1, I) (scipy.stats)
    n, p, b = 60, 8, 2000
    ours = random_eigenvalues(n, p, iterations=b, seed=5, sampler="data")
    draws = stats.wishart(df=n - 1, scale=np.eye(p)).rvs(size=b, random_state=np.random.default_rng(6))
    scale = np.sqrt(np.einsum("bii->bi", draws))
    reference = np.linalg.eigvalsh(draws / (scale[:, :, None] * scale[:, None, :]))[:, ::-1]
    standard_error = np.sqrt(ours.var(axis=0) / b + reference.var(axis=0) / b)
    assert np.all(np.abs(ours.mean(axis=0) - reference.mean(axis=0)) < 4 * standard_error)


def test_parallel_analysis_is_reproducible_and_batched_consistently(monkeypatch):
    import scalewright.stats.parallel as parallel_module

    r = np.eye(5)
    first = parallel_analysis(r, 100, iterations=30, seed=99)
    again = parallel_analysis(r, 100, iterations=30, seed=99)
    np.testing.assert_array_equal(first.random, again.random)
    other = parallel_analysis(r, 100, iterations=30, seed=100)
    assert not np.array_equal(first.random, other.random)
    # the 95th percentile lies above the mean for every position
    assert np.all(first.random >= first.random_mean)
    # data sets come from one stream in order, so the batch size changes nothing
    whole = random_eigenvalues(100, 5, iterations=30, seed=99, sampler="data")
    monkeypatch.setattr(parallel_module, "BATCH_VALUES", 1200)  # two iterations per batch
    np.testing.assert_allclose(random_eigenvalues(100, 5, iterations=30, seed=99, sampler="data"), whole,
                               rtol=1e-12)
    # fewer respondents than items: no Wishart draws, the data route is used
    assert parallel_analysis(np.eye(5), 4, iterations=5).sampler == "data"
    assert first.sampler == "wishart"
    with pytest.raises(UsageError):
        random_eigenvalues(4, 5, iterations=2, sampler="wishart")


def test_parallel_analysis_rejects_bad_options():
    with pytest.raises(UsageError):
        parallel_analysis(np.eye(3), 50, iterations=0)
    with pytest.raises(UsageError):
        parallel_analysis(np.eye(3), 50, percentile=100)
    with pytest.raises(UsageError):
        parallel_analysis(np.eye(3), 50, sampler="bootstrap")


# --------------------------------------------------------------------------- factor analysis

def test_efa_recovers_a_generated_two_factor_structure(two_factor_data):
    x, pattern, phi = two_factor_data
    solution = fit_factors(correlation_of(x), 2, method="minres", rotation="oblimin")
    order, signs = match_columns(pattern, solution.loadings)
    np.testing.assert_array_equal(signs, 1)  # signs aligned: every factor's loadings sum positive
    # population values of the generating model (closed form), sampling error at n = 4000 is about .02
    np.testing.assert_allclose(solution.loadings[:, order], pattern, atol=0.06)
    assert solution.factor_correlations[order[0], order[1]] == pytest.approx(phi[0, 1], abs=0.06)
    assert solution.converged
    assert not solution.heywood_items


@pytest.mark.parametrize("rotation", ["oblimin", "promax", "varimax"])
def test_loadings_match_factor_analyzer_run_directly(two_factor_data, rotation):
    from factor_analyzer import FactorAnalyzer

    x = two_factor_data[0][:1000]
    ours = fit_factors(correlation_of(x), 2, method="minres", rotation=rotation)
    # reference: factor_analyzer 0.5.1 live on the raw answers, with its documented defaults for everything
    # but the method and rotation asked for (its own rotation step, ordering and options; complete data)
    reference = FactorAnalyzer(n_factors=2, rotation=rotation, method="minres").fit(x)
    order, signs = match_columns(ours.loadings, reference.loadings_)
    np.testing.assert_allclose(reference.loadings_[:, order] * signs, ours.loadings, atol=1e-4)
    if rotation != "varimax":
        # with two factors factor_analyzer's phi_ cannot be out of order, so it is a valid reference
        np.testing.assert_allclose(reference.phi_[np.ix_(order, order)] * np.outer(signs, signs),
                                   ours.factor_correlations, atol=1e-4)
    else:
        np.testing.assert_array_equal(ours.factor_correlations, np.eye(2))


@pytest.mark.parametrize("rotation", ["oblimin", "varimax"])
def test_minres_common_part_matches_a_fit_written_here(two_factor_data, rotation):
    # reference independent of factor_analyzer: minimum residuals (Harman & Jones 1966) written here, numpy's
    # eigen-decomposition of R with 1 - psi on the diagonal and scipy.optimize.minimize over the uniquenesses
    # psi. A rotation leaves the common part Lambda Phi Lambda' unchanged, so that is compared.
    from scipy.optimize import minimize

    x = two_factor_data[0][:1000]
    r = np.corrcoef(x, rowvar=False)

    def loadings_at(psi):
        values, vectors = np.linalg.eigh(r - np.diag(psi))
        return vectors[:, -2:] * np.sqrt(np.clip(values[-2:], 0, None))

    def off_diagonal_residuals(psi):
        residual = r - loadings_at(psi) @ loadings_at(psi).T
        np.fill_diagonal(residual, 0)
        return float((residual**2).sum())

    start = 1 / np.diag(np.linalg.inv(r))  # 1 - squared multiple correlation
    best = minimize(off_diagonal_residuals, start, method="L-BFGS-B", bounds=[(0.005, 1)] * len(r),
                    options={"ftol": 1e-15, "gtol": 1e-10})
    common = loadings_at(best.x) @ loadings_at(best.x).T
    ours = fit_factors(correlation_of(x), 2, method="minres", rotation=rotation)
    np.testing.assert_allclose(ours.loadings @ ours.factor_correlations @ ours.loadings.T, common, atol=1e-5)
    np.testing.assert_allclose(ours.communalities, np.diag(common), atol=1e-5)


def test_ml_common_part_matches_scikit_learn(two_factor_data):
    # reference: scikit-learn's FactorAnalysis (maximum likelihood, its own SVD-based algorithm) live on the
    # standardized answers; ML is scale-free, so its common part is that of the correlation matrix
    from sklearn.decomposition import FactorAnalysis

    x = two_factor_data[0][:1000]
    z = (x - x.mean(axis=0)) / x.std(axis=0)
    reference = FactorAnalysis(n_components=2, tol=1e-10, max_iter=20_000).fit(z)
    ours = fit_factors(correlation_of(x), 2, method="ml", rotation="oblimin")
    np.testing.assert_allclose(ours.loadings @ ours.factor_correlations @ ours.loadings.T,
                               reference.components_.T @ reference.components_, atol=1e-5)
    np.testing.assert_allclose(ours.uniquenesses, reference.noise_variance_, atol=1e-5)


@pytest.mark.parametrize("rotation", ["oblimin", "promax"])
def test_factor_correlations_follow_the_loadings_with_three_or_more_factors(rotation):
    # three factors with distinct correlations and distinct strengths, so any misordering shows
    pattern = np.zeros((12, 3))
    pattern[0:4, 0] = 0.5
    pattern[4:8, 1] = 0.8
    pattern[8:12, 2] = 0.65
    phi = np.array([[1, .5, .1], [.5, 1, .3], [.1, .3, 1]])
    x = generate(pattern, phi, 20_000, seed=8)
    from factor_analyzer import FactorAnalyzer

    ours = fit_factors(correlation_of(x), 3, method="minres", rotation=rotation)
    order, signs = match_columns(pattern, ours.loadings)
    # known case: the population factor correlations of the generating model
    recovered = ours.factor_correlations[np.ix_(order, order)] * np.outer(signs, signs)
    if rotation == "oblimin":
        np.testing.assert_allclose(recovered, phi, atol=0.04)
    # factor_analyzer's structure matrix (loadings @ phi) IS reordered with its loadings, so it checks ours;
    # factor_analyzer 0.5.1 live with its documented defaults but for the method and rotation
    reference = FactorAnalyzer(n_factors=3, rotation=rotation, method="minres").fit(x)
    ref_order, ref_signs = match_columns(ours.loadings, reference.loadings_)
    np.testing.assert_allclose(reference.structure_[:, ref_order] * ref_signs,
                               ours.loadings @ ours.factor_correlations, atol=1e-4)


def test_factor_correlations_from_the_transform_match_the_rotator():
    from factor_analyzer.rotator import Rotator

    rng = np.random.default_rng(2)
    unrotated = rng.uniform(-0.2, 0.8, size=(9, 3))
    rotator = Rotator(method="oblimin", normalize=True, power=4, kappa=0, gamma=0, delta=0.01,
                      max_iter=500, tol=1e-5)
    rotated = rotator.fit_transform(unrotated)
    transform = np.linalg.lstsq(unrotated, rotated, rcond=None)[0]
    # reference: factor_analyzer's Rotator phi_ (T'T), before FactorAnalyzer reorders anything
    np.testing.assert_allclose(factor_correlations_from_transform(transform), rotator.phi_, atol=1e-8)


def test_heywood_case_is_detected_and_noted():
    # one-factor model of three items: lambda_1^2 = r12 r13 / r23 = .81/.5 > 1, an improper solution
    r = np.array([[1, .9, .9], [.9, 1, .5], [.9, .5, 1]])
    solution = fit_factors(r, 1, method="minres", rotation="none")
    assert 0 in solution.heywood_items
    assert {"code": "factor-heywood", "count": len(solution.heywood_items), "floor": 0.005} in [
        n.to_dict() for n in solution.notes]


def test_non_convergence_becomes_a_note(monkeypatch, two_factor_data):
    import factor_analyzer.factor_analyzer as fa_module

    original = fa_module.minimize

    def failing(*args, **kwargs):  # simulate an optimiser that gives up
        result = original(*args, **kwargs)
        result.success = False
        result.message = "simulated stop"
        return result

    monkeypatch.setattr(fa_module, "minimize", failing)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        solution = fit_factors(correlation_of(two_factor_data[0][:300]), 2)
    assert not solution.converged
    extraction = [n for n in solution.notes if n.code == "extraction-not-converged"]
    assert len(extraction) == 1
    assert "simulated stop" in extraction[0].values["detail"]


def test_a_rotation_stopped_at_its_iteration_limit_becomes_a_note(monkeypatch, two_factor_data):
    import scalewright.stats.factoring as factoring

    r = correlation_of(two_factor_data[0][:500])
    assert fit_factors(r, 2).converged
    monkeypatch.setattr(factoring, "ROTATION_MAX_ITER", 1)  # far too few steps to converge
    solution = fit_factors(r, 2)
    assert not solution.converged
    expected = {"code": "rotation-not-settled", "rotation": solution.rotation, "iterations": 1}
    assert expected in [n.to_dict() for n in solution.notes]


def test_fit_factors_rejects_bad_options():
    r = np.eye(4)
    for kwargs in ({"method": "principal"}, {"rotation": "quartimax"}):
        with pytest.raises(UsageError):
            fit_factors(r, 1, **kwargs)
    with pytest.raises(UsageError):
        fit_factors(r, 4)
    with pytest.raises(UsageError):
        fit_factors(r, 0)


# --------------------------------------------------------------------------- scales and flags

def make_three_scales(n: int = 1500, seed: int = 30):
    pattern = simple_structure(3, 5, loading=0.7)
    phi = np.array([[1, .3, .2], [.3, 1, .25], [.2, .25, 1]])
    x = generate(pattern, phi, n, seed=seed)
    names = [f"{scale}{k + 1}" for scale in ("wl", "tw", "sp") for k in range(5)]
    item_scale = {name: name[:2] for name in names}
    return x, names, item_scale


def test_the_whole_analysis_puts_every_item_with_its_scale():
    x, names, item_scale = make_three_scales()
    result = analyse_structure(x, item_names=names, item_scale=item_scale, iterations=40, seed=1)
    assert result.parallel.suggested_factors == 3
    assert result.solution.n_factors == 3
    assert sorted(result.factor_for_scale.values()) == [0, 1, 2]
    loadings = result.solution.loadings
    for i, name in enumerate(names):
        assert int(np.argmax(np.abs(loadings[i]))) == result.factor_for_scale[item_scale[name]]
    assert not [f for f in result.flags if f.item is not None]


def test_an_item_written_into_the_wrong_scale_is_flagged():
    x, names, item_scale = make_three_scales(seed=31)
    item_scale = {**item_scale, "wl1": "tw"}  # wl1 measures workload but the scale file puts it in tw
    result = analyse_structure(x, item_names=names, item_scale=item_scale, n_factors="scales", iterations=20)
    codes = {(f.item, f.code) for f in result.flags}
    assert ("wl1", "off-scale-factor") in codes
    assert ("wl1", "weak-loading") in codes
    assert not [f for f in result.flags if f.item not in (None, "wl1")]


def test_a_cross_loading_item_is_flagged():
    pattern = simple_structure(2, 5, loading=0.7)
    pattern[0] = [0.55, 0.45]
    x = generate(pattern, np.eye(2), 3000, seed=12)
    names = [f"a{k}" for k in range(5)] + [f"b{k}" for k in range(5)]
    result = analyse_structure(x, item_names=names, item_scale={n: n[0] for n in names}, n_factors=2,
                               iterations=10)
    assert ("a0", "cross-loading") in {(f.item, f.code) for f in result.flags}
    # the threshold is an option
    lenient = analyse_structure(x, item_names=names, item_scale={n: n[0] for n in names}, n_factors=2,
                                iterations=10, max_cross_loading=0.6)
    assert ("a0", "cross-loading") not in {(f.item, f.code) for f in lenient.flags}


def test_an_item_keyed_the_wrong_way_is_flagged():
    x, names, item_scale = make_three_scales(seed=32)
    x = x.copy()
    x[:, 2] = -x[:, 2]  # wl3 left unreversed although its wording runs the other way
    result = analyse_structure(x, item_names=names, item_scale=item_scale, n_factors=3, iterations=10)
    assert ("wl3", "negative-loading") in {(f.item, f.code) for f in result.flags}


@settings(max_examples=20, deadline=None)
@given(st.permutations([0, 1, 2]))
def test_assignment_follows_a_permutation_of_factors(order):
    loadings = simple_structure(3, 3, loading=0.7) + 0.05
    scales = ["a", "b", "c"]
    item_scale = [s for s in scales for _ in range(3)]
    base = assign_factors_to_scales(loadings, item_scale, scales)
    moved = assign_factors_to_scales(loadings[:, list(order)], item_scale, scales)
    assert base == {"a": 0, "b": 1, "c": 2}
    assert all(order[moved[s]] == base[s] for s in scales)


def test_fewer_factors_than_scales_leaves_a_scale_without_factor():
    x, names, item_scale = make_three_scales(seed=33)
    result = analyse_structure(x, item_names=names, item_scale=item_scale, n_factors=2, iterations=10)
    assert list(result.factor_for_scale.values()).count(None) == 1
    missing_factor = [n for n in result.notes if getattr(n, "code", None) == "scales-without-factor"]
    assert len(missing_factor) == 1
    assert missing_factor[0].values["n_factors"] == 2
    assert missing_factor[0].values["n_scales"] == 3


def test_unidimensionality_closed_forms():
    # compound symmetry: eigenvalues 1 + (k - 1) r and 1 - r (closed form), so the ratio is known
    k, r = 6, 0.4
    corr = np.full((k, k), r) + (1 - r) * np.eye(k)
    summary = unidimensionality_of_correlation(corr, 500)
    assert summary.eigen_ratio == pytest.approx((1 + (k - 1) * r) / (1 - r), rel=1e-10)
    # one-factor loadings of equicorrelated items are sqrt(r): variance explained r (closed form)
    assert summary.variance_one_factor == pytest.approx(r, abs=1e-4)
    # three items: the model is just identified, lambda_1 = sqrt(r12 r13 / r23) (docs/references.md, McDonald 1999)
    r12, r13, r23 = 0.5, 0.4, 0.3
    corr3 = np.array([[1, r12, r13], [r12, 1, r23], [r13, r23, 1]])
    expected = np.array([r12 * r13 / r23, r12 * r23 / r13, r13 * r23 / r12])
    assert unidimensionality_of_correlation(corr3, 500).variance_one_factor == pytest.approx(expected.mean(), abs=1e-4)


def test_unidimensionality_alone_handles_missing_and_small_scales():
    rng = np.random.default_rng(5)
    x = rng.standard_normal((200, 1)) + rng.standard_normal((200, 4))
    x[:7, 1] = np.nan
    summary = unidimensionality(x)
    assert summary.n_used == 193
    assert summary.n_set_aside == 7
    assert [n.values["set_aside"] for n in summary.notes if n.code == "scale-listwise-set-aside"] == [7]
    two = unidimensionality(x[:, :2])
    assert two.eigen_ratio is not None
    assert two.variance_one_factor is None
    assert two.notes
    assert unidimensionality(x[:2]).eigen_ratio is None


def test_items_shared_by_a_total_and_its_subscales():
    x, names, item_scale = make_three_scales(seed=34)
    scale_items = {"wl": names[:5], "tw": names[5:10], "sp": names[10:], "total": names}
    result = analyse_structure(x, item_names=names, item_scale=item_scale, scale_items=scale_items, iterations=10)
    assert set(result.unidimensionality) == {"wl", "tw", "sp", "total"}
    assert result.unidimensionality["total"].k == 15
    with pytest.raises(DataError, match="more than once"):
        analyse_structure(np.column_stack([x, x[:, 0]]), item_names=[*names, "wl1"], item_scale=item_scale)


def test_missing_answers_are_set_aside_listwise_and_counted():
    x, names, item_scale = make_three_scales(n=600, seed=35)
    holed = x.copy()
    holed[[3, 10, 50], [0, 4, 7]] = np.nan
    result = analyse_structure(holed, item_names=names, item_scale=item_scale, n_factors=3, iterations=10)
    reference = analyse_structure(complete_cases(holed)[0], item_names=names, item_scale=item_scale,
                                  n_factors=3, iterations=10)
    assert result.n_used == 597
    assert result.n_set_aside == 3
    set_aside = [n.values for n in result.notes if getattr(n, "code", None) == "listwise-set-aside"]
    assert set_aside == [{"set_aside": 3, "n_rows": 600}]
    assert result.kmo.overall == pytest.approx(reference.kmo.overall, rel=1e-12)
    np.testing.assert_allclose(result.solution.loadings, reference.solution.loadings, atol=1e-10)


def test_degenerate_inputs_do_not_crash_and_json_has_no_nan():
    rng = np.random.default_rng(6)
    names = ["a1", "a2", "a3", "b1"]
    scales = {"a1": "a", "a2": "a", "a3": "a", "b1": "b"}
    cases = [
        rng.standard_normal((2, 4)),                                   # too few respondents
        np.column_stack([rng.standard_normal((30, 3)), np.ones(30)]),  # an item without variance
        np.column_stack([np.ones((30, 3)), rng.standard_normal(30)]),  # only one item varies
        np.full((10, 4), np.nan),                                      # nothing complete
    ]
    x = rng.standard_normal((30, 3))
    cases.append(np.column_stack([x, x[:, 0]]))                        # duplicated item: singular matrix
    cases.append(rng.standard_normal((4, 4)))                          # no more respondents than items
    without_variance = [set(), {"b1"}, {"a1", "a2", "a3"}, {"a1", "a2", "a3", "b1"}, set(), set()]
    for data, silent in zip(cases, without_variance, strict=True):
        result = analyse_structure(data, item_names=names, item_scale=scales, iterations=5)
        text = json.dumps(result.to_dict(), allow_nan=False)
        assert result.notes, text  # every degenerate case says what it could not do
        assert {f.item for f in result.flags if f.code == "no-variance"} == silent, text
    no_variance = analyse_structure(cases[1], item_names=names, item_scale=scales, iterations=5)
    assert ("b1", "no-variance") in {(f.item, f.code) for f in no_variance.flags}
    assert no_variance.items == ("a1", "a2", "a3")


def test_bad_arguments_raise_project_errors():
    x = np.random.default_rng(7).standard_normal((50, 4))
    names = ["a", "b", "c", "d"]
    scales = dict.fromkeys(names, "s")
    with pytest.raises(DataError):
        analyse_structure(x, item_names=names[:3], item_scale=scales)
    with pytest.raises(DataError):
        analyse_structure(x, item_names=names, item_scale={"a": "s"})
    with pytest.raises(UsageError):
        analyse_structure(x, item_names=names, item_scale=scales, n_factors="many")
    with pytest.raises(UsageError):
        analyse_structure(x, item_names=names, item_scale=scales, n_factors=4)
    with pytest.raises(UsageError):
        analyse_structure(x, item_names=names, item_scale=scales, rotation="spin")


def test_to_dict_carries_the_contract_keys():
    x, names, item_scale = make_three_scales(n=400, seed=36)
    document = analyse_structure(x, item_names=names, item_scale=item_scale, iterations=10).to_dict()
    for key in ("kmo", "kmo_items", "bartlett", "parallel", "loadings", "factor_correlations",
                "factor_for_scale", "unidimensionality", "flags", "notes"):
        assert key in document
    assert set(document["bartlett"]) == {"chi2", "df", "pvalue"}
    assert {"suggested_factors", "observed", "random", "random_mean", "criterion"} <= set(document["parallel"])
    assert set(document["loadings"]) == set(names)
    assert len(document["loadings"]["wl1"]) == document["n_factors"]
    assert {"eigen_ratio", "variance_one_factor_pct"} <= set(document["unidimensionality"]["wl"])
    json.dumps(document, allow_nan=False)
