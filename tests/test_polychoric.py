"""Polychoric and tetrachoric correlations (Olsson 1979 two-step) against outside references."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import minimize_scalar
from scipy.special import ndtri
from scipy.stats import multivariate_normal, norm

from scalewright.answer_codes import MISSING
from scalewright.stats.pair_tables import pair_tables
from scalewright.stats.polychoric import RHO_BOUND, polychoric_pairs
from scalewright.stats.polychoric_matrix import nearest_correlation, polychoric_matrix, polychoric_of_codes


def cell_probabilities(rho: float, row_cuts: np.ndarray, column_cuts: np.ndarray) -> np.ndarray:
    """Cell probabilities of a bivariate normal cut at the given thresholds, from scipy (computed live)."""
    x = np.r_[-np.inf, row_cuts, np.inf]
    y = np.r_[-np.inf, column_cuts, np.inf]
    law = multivariate_normal(mean=[0, 0], cov=[[1, rho], [rho, 1]], abseps=1e-12, releps=1e-12)
    grid = np.zeros((x.size, y.size))
    for i, h in enumerate(x):
        for j, k in enumerate(y):
            if h == -np.inf or k == -np.inf:
                continue
            grid[i, j] = (1.0 if h == k == np.inf else norm.cdf(k) if h == np.inf else norm.cdf(h) if k == np.inf
                          else law.cdf([h, k]))
    return grid[1:, 1:] - grid[:-1, 1:] - grid[1:, :-1] + grid[:-1, :-1]


def brute_force_two_step(table: np.ndarray) -> float:
    """Olsson's two-step estimate by scipy's bounded scalar search over scipy's bivariate normal."""
    total = table.sum()
    row_cuts = ndtri(np.cumsum(table.sum(axis=1))[:-1] / total)
    column_cuts = ndtri(np.cumsum(table.sum(axis=0))[:-1] / total)

    def minus_log_likelihood(rho: float) -> float:
        p = cell_probabilities(rho, row_cuts, column_cuts)
        return -float(np.sum(table[table > 0] * np.log(p[table > 0])))

    return minimize_scalar(minus_log_likelihood, bounds=(-0.995, 0.995), method="bounded",
                           options={"xatol": 1e-10}).x


# --------------------------------------------------------------------------- closed forms and references

def test_tetrachoric_with_median_splits_is_sheppards_closed_form() -> None:
    # Sheppard (1899): with both thresholds at 0, P(both above) = 1/4 + arcsin(rho) / (2 pi), so
    # rho = sin(2 pi (p11 - 1/4)); tables with 500/500 margins put the estimated thresholds exactly at 0
    diagonal = np.array([20, 130, 250, 333, 400, 470, 490])
    tables = np.array([[[a, 500 - a], [500 - a, a]] for a in diagonal], dtype=float)
    estimates = polychoric_pairs(tables)
    np.testing.assert_allclose(estimates.rho, np.sin(2 * np.pi * (diagonal / 1000 - 0.25)), rtol=0, atol=1e-9)
    assert (estimates.status == 0).all()


@pytest.mark.parametrize(("seed", "rho", "rows", "columns"), [
    (1, 0.55, [-1.0, -0.2, 0.5, 1.4], [-0.5, 0.3, 1.0, 1.8]),
    (2, -0.3, [-0.4, 0.9], [0.2]),
    (3, 0.85, [-1.5, -0.8, 0.0, 0.6, 1.1, 1.7], [-1.0, 0.0, 1.0]),
])
def test_general_tables_match_a_brute_force_maximum(seed: int, rho: float, rows: list, columns: list) -> None:
    rng = np.random.default_rng(seed)
    probabilities = cell_probabilities(rho, np.array(rows), np.array(columns))
    table = rng.multinomial(800, probabilities.ravel()).reshape(probabilities.shape).astype(float)
    if table.shape[0] != table.shape[1]:  # the estimator takes square tables: pad with empty levels
        size = max(table.shape)
        padded = np.zeros((size, size))
        padded[: table.shape[0], : table.shape[1]] = table
        table = padded
    ours = polychoric_pairs(table[None]).rho[0]
    used = table[table.sum(axis=1) > 0][:, table.sum(axis=0) > 0]
    assert ours == pytest.approx(brute_force_two_step(used), abs=1e-6)  # scipy's search, xatol 1e-10


def test_empty_cells_that_push_to_one_are_corrected_by_half() -> None:
    # a 2 x 2 table with an empty off-diagonal cell has its maximum at rho = 1; Haldane (1956): add 0.5
    table = np.array([[30.0, 0.0], [20.0, 50.0]])
    result = polychoric_pairs(table[None])
    assert result.status[0] == 1
    corrected = table + np.array([[0.0, 0.5], [0.0, 0.0]])
    assert result.rho[0] == pytest.approx(brute_force_two_step(corrected), abs=1e-6)
    assert np.isfinite(result.se[0])


def test_tables_without_a_second_level_are_undefined() -> None:
    result = polychoric_pairs(np.array([[[40.0, 10.0], [0.0, 0.0]], [[0.0, 0.0], [0.0, 5.0]]]))
    assert np.isnan(result.rho).all()
    assert (result.status == 3).all()


def test_a_perfectly_ordered_table_is_corrected_in_every_empty_cell() -> None:
    # every answer pair on the diagonal of a 3 x 3 table: 0.5 goes into each of the six empty cells
    table = np.diag([40.0, 30.0, 30.0])
    result = polychoric_pairs(table[None])
    assert result.status[0] == 1
    assert result.rho[0] == pytest.approx(brute_force_two_step(table + 0.5 * (table == 0)), abs=1e-6)


def test_an_estimate_past_the_bound_is_the_bound_without_a_standard_error() -> None:
    # Sheppard's closed form puts this median-split table at rho = sin(2 pi (0.4999 - 1/4)) > RHO_BOUND
    table = np.array([[[4999.0, 1.0], [1.0, 4999.0]]])
    result = polychoric_pairs(table)
    assert np.sin(2 * np.pi * (0.4999 - 0.25)) > RHO_BOUND
    assert result.status[0] == 2
    assert result.rho[0] == pytest.approx(RHO_BOUND, abs=1e-7)
    assert np.isnan(result.se[0])


# --------------------------------------------------------------------------- population recovery

def discretised_draws(rng: np.random.Generator, n: int, rho: float, row_cuts: np.ndarray,
                      column_cuts: np.ndarray) -> np.ndarray:
    x = rng.standard_normal(n)
    y = rho * x + np.sqrt(1 - rho**2) * rng.standard_normal(n)
    return np.column_stack([np.searchsorted(row_cuts, x), np.searchsorted(column_cuts, y)]).astype(np.uint8)


CASES = {
    3: (0.6, np.array([-0.3, 0.9]), np.array([-1.1, 0.4])),
    5: (-0.35, np.array([-1.6, -0.7, 0.1, 1.0]), np.array([-0.2, 0.5, 1.1, 1.9])),
    7: (0.8, np.array([-2.0, -1.2, -0.5, 0.0, 0.6, 1.3]), np.array([-1.7, -1.0, -0.6, 0.2, 0.9, 2.1])),
}


@pytest.mark.parametrize("levels", [3, 5, 7])
def test_population_correlation_is_recovered(levels: int) -> None:
    # closed-form population value: the rho of the bivariate normal the answers were cut from
    rho, row_cuts, column_cuts = CASES[levels]
    codes = discretised_draws(np.random.default_rng(levels), 200_000, rho, row_cuts, column_cuts)
    matrix = polychoric_of_codes(codes, levels, item_names=["x", "y"])
    assert matrix.correlation[0, 1] == pytest.approx(rho, abs=0.01)
    np.testing.assert_allclose(matrix.thresholds[0], row_cuts, atol=0.02)


@pytest.mark.parametrize("levels", [3, 5, 7])
def test_standard_error_matches_the_monte_carlo_spread(levels: int) -> None:
    # 1,000 samples of 200,000 rows each, drawn as multinomial tables with scipy's cell probabilities
    # (the same law as cutting bivariate normal draws): the estimates' SD is the outside reference
    rho, row_cuts, column_cuts = CASES[levels]
    probabilities = cell_probabilities(rho, row_cuts, column_cuts)
    rng = np.random.default_rng(100 + levels)
    tables = rng.multinomial(200_000, probabilities.ravel(), size=1000).reshape(1000, levels, levels)
    estimates = polychoric_pairs(tables)
    spread = estimates.rho.std(ddof=1)
    assert np.median(estimates.se) == pytest.approx(spread, rel=0.10)
    assert estimates.rho.mean() == pytest.approx(rho, abs=0.002)


# --------------------------------------------------------------------------- the matrix

def factor_codes(rng: np.random.Generator, n: int, loadings: np.ndarray, cuts: np.ndarray) -> np.ndarray:
    factor = rng.standard_normal(n)
    latent = factor[:, None] * loadings + rng.standard_normal((n, loadings.size)) * np.sqrt(1 - loadings**2)
    return np.searchsorted(cuts, latent).astype(np.uint8) if cuts.ndim == 1 else \
        np.column_stack([np.searchsorted(c, latent[:, j]) for j, c in enumerate(cuts)]).astype(np.uint8)


def test_matrix_is_symmetric_with_unit_diagonal_and_keyed_by_sign() -> None:
    rng = np.random.default_rng(11)
    codes = factor_codes(rng, 3000, np.array([0.7, 0.6, -0.5, 0.8]), np.array([-1.0, 0.0, 0.8]))
    codes[rng.random(codes.shape) < 0.05] = MISSING
    matrix = polychoric_of_codes(codes, 4, item_names=list("abcd"), pairwise=True)
    np.testing.assert_array_equal(matrix.correlation, matrix.correlation.T)
    np.testing.assert_array_equal(np.diag(matrix.correlation), 1.0)
    assert matrix.n_used == int(((codes != MISSING)[:, :, None] & (codes != MISSING)[:, None, :]).sum(axis=0).min())
    # reversing item c's answers (3 - x) flips the sign of its correlations; keyed() does the same
    turned = codes.copy()
    turned[:, 2] = np.where(codes[:, 2] == MISSING, MISSING, 3 - codes[:, 2])
    direct = polychoric_of_codes(turned, 4, item_names=list("abcd"), pairwise=True)
    keyed = matrix.keyed([False, False, True, False])
    np.testing.assert_allclose(direct.correlation, keyed.correlation, atol=1e-9)
    np.testing.assert_allclose(direct.thresholds[2], keyed.thresholds[2], atol=1e-12)


def test_relabelling_levels_in_the_same_order_changes_nothing() -> None:
    rng = np.random.default_rng(12)
    codes = factor_codes(rng, 2000, np.array([0.7, 0.6, 0.5]), np.array([-1.0, 0.0, 0.8]))
    relabelled = np.array([0, 2, 3, 6], dtype=np.uint8)[codes]  # gaps between the levels, same order
    first = polychoric_of_codes(codes, 4, item_names=list("abc"))
    second = polychoric_of_codes(relabelled, 7, item_names=list("abc"))
    np.testing.assert_allclose(first.correlation, second.correlation, atol=1e-10)
    np.testing.assert_allclose(first.se, second.se, atol=1e-10)


def test_weights_for_dwls_are_inverse_squared_standard_errors() -> None:
    rng = np.random.default_rng(13)
    codes = factor_codes(rng, 2000, np.array([0.7, 0.6, 0.5]), np.array([-1.0, 0.0, 0.8]))
    matrix = polychoric_of_codes(codes, 4, item_names=list("abc"))
    weights = matrix.dwls_weights()
    assert weights[0, 1] == pytest.approx(1 / matrix.se[0, 1] ** 2)
    assert (np.diag(weights) == 0).all()


def test_nearest_correlation_reproduces_highams_example() -> None:
    # Higham (2002), IMA J. Numer. Anal. 22:329-343, section 4: the nearest correlation matrix to
    # [[1,1,0],[1,1,1],[0,1,1]] has off-diagonals .7607 and .1573 (recalled from memory, to 4 decimals)
    nearest = nearest_correlation(np.array([[1.0, 1.0, 0.0], [1.0, 1.0, 1.0], [0.0, 1.0, 1.0]]), floor=0.0)
    np.testing.assert_allclose(nearest[[0, 1, 0], [1, 2, 2]], [0.7607, 0.7607, 0.1573], atol=5e-5)


def test_nearest_correlation_agrees_with_statsmodels_and_is_positive_definite() -> None:
    import warnings

    from statsmodels.stats.correlation_tools import corr_nearest
    from statsmodels.tools.sm_exceptions import IterationLimitWarning

    matrix = np.array([[1.0, 0.9, 0.9, -0.5, 0.2], [0.9, 1.0, 0.9, 0.6, 0.3], [0.9, 0.9, 1.0, 0.7, -0.4],
                       [-0.5, 0.6, 0.7, 1.0, 0.5], [0.2, 0.3, -0.4, 0.5, 1.0]])
    assert np.linalg.eigvalsh(matrix)[0] < 0
    ours = nearest_correlation(matrix)
    with warnings.catch_warnings():
        # statsmodels stops at its iteration limit with this warning; its result is still the reference
        warnings.simplefilter("ignore", IterationLimitWarning)
        reference = corr_nearest(matrix, threshold=1e-6, n_fact=200)
    np.testing.assert_allclose(ours, reference, atol=2e-3)
    assert np.linalg.eigvalsh(ours)[0] >= 5e-7
    np.testing.assert_allclose(np.diag(ours), 1.0)


def test_a_matrix_that_is_not_positive_definite_is_smoothed_with_a_note() -> None:
    rng = np.random.default_rng(15)
    # pairwise deletion on small, patchy data gives a matrix that is not positive definite
    base = factor_codes(rng, 60, np.array([0.9, 0.9, 0.9, 0.9, 0.9]), np.array([-0.5, 0.5]))
    codes = base.copy()
    codes[:20, 0] = MISSING
    codes[20:40, 1] = MISSING
    codes[40:, 2] = MISSING
    tables = pair_tables(codes, 3)
    raw = polychoric_matrix(tables, item_names=list("abcde"), pairwise=True, smooth=False)
    smoothed = polychoric_matrix(tables, item_names=list("abcde"), pairwise=True)
    if np.linalg.eigvalsh(raw.correlation)[0] >= 1e-6:
        pytest.skip("this draw happened to be positive definite")
    assert smoothed.smoothed
    assert np.linalg.eigvalsh(smoothed.correlation)[0] > 0
    codes_of_notes = [n.code for n in smoothed.notes]
    assert "polychoric-smoothed" in codes_of_notes
