"""The confirmatory factor engine (stats/cfa_model, cfa_fit, cfa_fit_indices, cfa_solution) against outside references."""
from __future__ import annotations

import logging

import numpy as np
import pandas as pd
import pytest
from scipy import optimize, stats

from scalewright.stats.cfa_fit import fit
from scalewright.stats.cfa_fit_indices import fit_indices, residual_correlations
from scalewright.stats.cfa_model import FIXED, CfaModel, GroupPattern, Parameter, factor_model
from scalewright.stats.cfa_solution import modification_hints, standardized_solution

from .cfa_data import population_cov, simulate, standardized_structure

HS_ITEMS = [f"x{i}" for i in range(1, 10)]
HS_FACTORS = {"visual": HS_ITEMS[:3], "textual": HS_ITEMS[3:6], "speed": HS_ITEMS[6:]}
TIGHT = {"ftol": 1e-14, "maxiter": 20000}


def semopy_fit(data: pd.DataFrame, description: str):
    """semopy (a general SEM library, test reference only) fitted with a tightened optimizer tolerance."""
    semopy = pytest.importorskip("semopy")
    logging.getLogger().setLevel(logging.ERROR)
    model = semopy.Model(description)
    model.fit(data, options=TIGHT)
    return semopy, model


def description(factors: dict[str, list[str]]) -> str:
    return "\n".join(f"{name} =~ {' + '.join(items)}" for name, items in factors.items())


def compare_with_semopy(data: pd.DataFrame, factors: dict[str, list[str]]) -> None:
    items = [item for members in factors.values() for item in members]
    x = data[items].to_numpy(float)
    result = fit(np.cov(x, rowvar=False), len(x), factor_model(factors))
    ours = fit_indices(result)
    semopy, reference = semopy_fit(data, description(factors))
    theirs = semopy.calc_stats(reference).T["Value"]
    n = len(x)
    # semopy: chi2 = n F_ML on covariances of divisor n, as ours; its RMSEA divides by n - 1, ours by n
    assert ours.chi2 == pytest.approx(theirs["chi2"], abs=1e-3)
    assert ours.df == theirs["DoF"]
    assert ours.cfi == pytest.approx(theirs["CFI"], abs=1e-3)
    assert ours.tli == pytest.approx(theirs["TLI"], abs=1e-3)
    assert ours.rmsea == pytest.approx(theirs["RMSEA"] * np.sqrt((n - 1) / n), abs=1e-3)
    # SRMR from semopy's implied covariance (semopy has no SRMR): residual correlations, diagonal included
    sigma = reference.calc_sigma()[0]
    s_ml = np.cov(x, rowvar=False, bias=True)
    residual = residual_correlations(s_ml, sigma)[np.triu_indices(len(items))]
    assert ours.srmr == pytest.approx(np.sqrt(np.mean(residual**2)), abs=1e-3)
    standardized = reference.inspect(std_est=True)
    solution = standardized_solution(result)
    for j, (factor, members) in enumerate(factors.items()):
        for item in members:
            row = standardized[(standardized.lval == item) & (standardized.rval == factor)]
            i = items.index(item)
            assert solution.loadings[i, j] == pytest.approx(float(row["Est. Std"].iloc[0]), abs=1e-3)


def test_holzinger_swineford_three_factors_agree_with_semopy():
    # reference: semopy computed live on its bundled Holzinger-Swineford (1939) data, the classic x1-x9 model
    holzinger = pytest.importorskip("semopy.examples.holzinger39")
    compare_with_semopy(holzinger.get_data(), HS_FACTORS)


def test_generated_two_factors_agree_with_semopy():
    # reference: semopy computed live on data generated here
    rng = np.random.default_rng(11)
    loadings, phi, residuals = standardized_structure([4, 4], [.7, .6, .5, .65, .8, .7, .4, .6],
                                                      np.array([[1, .35], [.35, 1]]))
    data = pd.DataFrame(simulate(population_cov(loadings, phi, residuals), 400, rng),
                        columns=[f"a{i}" for i in range(4)] + [f"b{i}" for i in range(4)])
    compare_with_semopy(data, {"fa": [f"a{i}" for i in range(4)], "fb": [f"b{i}" for i in range(4)]})


def test_standard_errors_agree_with_semopy_in_its_marker_parametrization():
    # reference: semopy's standard errors (expected information) in its own parametrization (first loading 1,
    # factor variances free), fitted live on Holzinger-Swineford; our engine takes the same pattern
    holzinger = pytest.importorskip("semopy.examples.holzinger39")
    data = holzinger.get_data()
    x = data[HS_ITEMS].to_numpy(float)
    p, m = 9, 3
    parameters, loading_index = [], np.full((p, m), FIXED)
    loading_value = np.zeros((p, m))
    for j in range(m):
        loading_value[3 * j, j] = 1.0
        for i in range(3 * j + 1, 3 * j + 3):
            parameters.append(Parameter("loading", i, j, (0,)))
            loading_index[i, j] = len(parameters) - 1
    phi_index = np.full((m, m), FIXED)
    for j in range(m):
        for k in range(j, m):
            parameters.append(Parameter("factor_cov", j, k, (0,)))
            phi_index[j, k] = phi_index[k, j] = len(parameters) - 1
    residual_index = np.arange(len(parameters), len(parameters) + p)
    parameters += [Parameter("residual", i, -1, (0,)) for i in range(p)]
    model = CfaModel(items=tuple(HS_ITEMS), factors=tuple(HS_FACTORS), parameters=tuple(parameters), groups=(
        GroupPattern(loading_index=loading_index, loading_value=loading_value, factor_cov_index=phi_index,
                     factor_cov_value=np.zeros((m, m)), residual_index=residual_index, residual_value=np.zeros(p)),))
    result = fit(np.cov(x, rowvar=False), len(x), model)
    _, reference = semopy_fit(data, description(HS_FACTORS))
    table = reference.inspect()
    for k, parameter in enumerate(model.parameters):
        if parameter.kind == "loading":
            row = table[(table.op == "~") & (table.lval == HS_ITEMS[parameter.row])]
        elif parameter.kind == "residual":
            row = table[(table.op == "~~") & (table.lval == HS_ITEMS[parameter.row])]
        else:
            a, b = list(HS_FACTORS)[parameter.row], list(HS_FACTORS)[parameter.column]
            row = table[(table.op == "~~") & (((table.lval == a) & (table.rval == b))
                                             | ((table.lval == b) & (table.rval == a)))]
        assert result.theta[k] == pytest.approx(float(row["Estimate"].iloc[0]), abs=1e-3)
        assert result.standard_errors[k] == pytest.approx(float(row["Std. Err"].iloc[0]), abs=1e-3)


def test_modification_indices_of_holzinger_swineford():
    # reference: the lavaan tutorial's modification indices of this model (visual =~ x9: 36.411, sepc.all
    # 0.515; visual =~ x7: 18.631; textual =~ x3: 9.151), recalled from memory
    holzinger = pytest.importorskip("semopy.examples.holzinger39")
    x = holzinger.get_data()[HS_ITEMS].to_numpy(float)
    result = fit(np.cov(x, rowvar=False), len(x), factor_model(HS_FACTORS))
    hints = {(h.item, h.factor): h for h in modification_hints(result)}
    assert hints[("x9", "visual")].index == pytest.approx(36.411, abs=2e-3)
    assert hints[("x9", "visual")].change == pytest.approx(0.515, abs=2e-3)
    assert hints[("x7", "visual")].index == pytest.approx(18.631, abs=2e-3)
    assert hints[("x3", "textual")].index == pytest.approx(9.151, abs=2e-3)


def test_modification_index_is_close_to_the_chi2_drop_of_freeing_the_loading():
    # reference: the score test approximates the likelihood-ratio test of the freed parameter (Sorbom 1989)
    rng = np.random.default_rng(3)
    loadings, phi, residuals = standardized_structure([4, 4], .7, np.array([[1, .3], [.3, 1]]))
    loadings[0, 1] = .12
    cov = np.cov(simulate(population_cov(loadings, phi, residuals), 3000, rng), rowvar=False)
    items = [f"i{k}" for k in range(8)]
    base = fit(cov, 3000, factor_model({"f": items[:4], "g": items[4:]}))
    freed = fit(cov, 3000, factor_model({"f": items[:4], "g": [items[0], *items[4:]]}))
    hint = {(h.item, h.factor): h for h in modification_hints(base)}[("i0", "g")]
    drop = fit_indices(base).chi2 - fit_indices(freed).chi2
    assert hint.index == pytest.approx(drop, rel=0.1)


def test_saturated_three_items_match_the_closed_form():
    # reference: closed form of the one-factor model of 3 items, lambda_1 = sqrt(s12 s13 / s23), cyclic
    rng = np.random.default_rng(5)
    cov = np.cov(simulate(population_cov(np.array([[.8], [.6], [.7]]), np.eye(1), np.array([.5, .8, .6])), 500,
                          rng), rowvar=False)
    result = fit(cov, 500, factor_model({"f": ["a", "b", "c"]}))
    indices = fit_indices(result)
    assert indices.df == 0
    assert indices.chi2 == pytest.approx(0, abs=1e-9)
    s = cov * 499 / 500  # the ML fit works in divisor-n metric
    closed = np.sqrt([s[0, 1] * s[0, 2] / s[1, 2], s[0, 1] * s[1, 2] / s[0, 2], s[0, 2] * s[1, 2] / s[0, 1]])
    np.testing.assert_allclose(result.matrices()[0][:, 0], closed, atol=1e-8)
    from scalewright.stats.cfa_reliability import model_omega

    assert model_omega(result, [0, 1, 2]).omega_total == pytest.approx(closed.sum() ** 2 / s.sum(), abs=1e-9)


def test_population_recovery_of_correlated_factors_on_many_levels():
    # reference: the generating model (loadings within .01, RMSEA near 0) on 200,000 rows answered on a
    # fine scale (values rounded to tenths of a standard deviation: many answer levels)
    rng = np.random.default_rng(2026)
    true_loadings = [.8, .7, .6, .5, .75, .65, .55, .7, .6, .5, .4, .8]
    phi = np.array([[1, .4, .2], [.4, 1, -.3], [.2, -.3, 1]])
    loadings, phi, residuals = standardized_structure([4, 4, 4], true_loadings, phi)
    answers = np.round(simulate(population_cov(loadings, phi, residuals), 200_000, rng), 1)
    items = [f"i{k}" for k in range(12)]
    result = fit(np.cov(answers, rowvar=False), len(answers),
                 factor_model({"f1": items[:4], "f2": items[4:8], "f3": items[8:]}))
    solution = standardized_solution(result)
    np.testing.assert_allclose(solution.loadings.sum(axis=1), true_loadings, atol=0.01)
    np.testing.assert_allclose(solution.factor_correlations, phi, atol=0.01)
    assert fit_indices(result).rmsea < 0.01


def test_misspecified_model_rmsea_near_its_population_value():
    # reference: population RMSEA = sqrt(F0 / df), F0 the ML discrepancy of the model at the population
    # covariance matrix (Browne & Cudeck 1993), minimised here with scipy on a plain parametrization
    rng = np.random.default_rng(7)
    loadings, phi, residuals = standardized_structure([4, 4], .7, np.array([[1, .4], [.4, 1]]))
    loadings[1, 1] = 0.35  # a cross-loading the fitted model leaves out
    sigma = population_cov(loadings, phi, residuals)
    p = len(sigma)

    def discrepancy(x: np.ndarray) -> float:
        lam = np.zeros((p, 2))
        lam[:4, 0], lam[4:, 1] = x[:4], x[4:8]
        implied = lam @ np.array([[1, x[8]], [x[8], 1]]) @ lam.T + np.diag(x[9:])
        sign, logdet = np.linalg.slogdet(implied)
        if sign <= 0:
            return 1e10
        return logdet + np.trace(sigma @ np.linalg.inv(implied)) - np.linalg.slogdet(sigma)[1] - p

    start = np.concatenate([np.full(8, .7), [.3], np.full(8, .5)])
    best = optimize.minimize(discrepancy, start, method="BFGS", options={"gtol": 1e-10})
    df = p * (p + 1) // 2 - 17
    population_rmsea = np.sqrt(best.fun / df)
    items = [f"i{k}" for k in range(8)]
    sample = simulate(sigma, 200_000, rng)
    result = fit(np.cov(sample, rowvar=False), len(sample), factor_model({"f": items[:4], "g": items[4:]}))
    assert population_rmsea > 0.03
    assert fit_indices(result).rmsea == pytest.approx(population_rmsea, abs=0.003)


def test_log_likelihood_aic_bic_against_scipy():
    # reference: scipy.stats.multivariate_normal.logpdf summed over the rows, at the implied covariance
    rng = np.random.default_rng(8)
    loadings, phi, residuals = standardized_structure([5], .6, np.eye(1))
    x = simulate(population_cov(loadings, phi, residuals), 300, rng)
    result = fit(np.cov(x, rowvar=False), 300, factor_model({"f": list("abcde")}))
    indices = fit_indices(result)
    loglik = stats.multivariate_normal(x.mean(axis=0), result.implied()[0]).logpdf(x).sum()
    assert indices.loglik == pytest.approx(loglik, rel=1e-10)
    assert indices.aic == pytest.approx(-2 * loglik + 2 * 10, rel=1e-10)
    assert indices.bic == pytest.approx(-2 * loglik + 10 * np.log(300), rel=1e-10)


def test_rmsea_interval_inverts_the_noncentral_chi_square():
    # reference: scipy.stats.ncx2 at the bounds gives the tail probabilities back
    from scalewright.stats.cfa_fit_indices import rmsea_interval, rmsea_pclose

    chi2, df, n = 85.306, 24, 301
    low, high = rmsea_interval(chi2, df, n)
    assert stats.ncx2.cdf(chi2, df, low**2 * df * n) == pytest.approx(0.95, abs=1e-8)
    assert stats.ncx2.cdf(chi2, df, high**2 * df * n) == pytest.approx(0.05, abs=1e-8)
    assert rmsea_pclose(chi2, df, n) == pytest.approx(stats.ncx2.sf(chi2, df, .05**2 * df * n))
    assert rmsea_interval(10.0, 24, 301)[0] == 0.0


def test_least_squares_estimators_agree_with_a_generic_optimizer():
    # reference: scipy.optimize.least_squares on the weighted residuals s_ij - sigma_ij, i <= j
    rng = np.random.default_rng(9)
    loadings, phi, residuals = standardized_structure([5], [.8, .7, .6, .5, .4], np.eye(1))
    corr = np.corrcoef(simulate(population_cov(loadings, phi, residuals), 400, rng), rowvar=False)
    weights = rng.uniform(50, 400, size=(5, 5))
    weights = (weights + weights.T) / 2
    rows, columns = np.triu_indices(5)

    def residual_vector(x: np.ndarray, w: np.ndarray) -> np.ndarray:
        implied = np.outer(x[:5], x[:5]) + np.diag(x[5:])
        return np.sqrt(w[rows, columns]) * (corr - implied)[rows, columns]

    model = factor_model({"f": list("abcde")})
    for estimator, w in (("uls", np.ones((5, 5))), ("dwls", weights)):
        ours = fit(corr, 400, model, estimator=estimator, weights=w if estimator == "dwls" else None)
        reference = optimize.least_squares(residual_vector, np.full(10, .5), args=(w,), xtol=1e-15, ftol=1e-15,
                                           gtol=1e-15)
        np.testing.assert_allclose(np.abs(ours.theta), np.abs(reference.x), atol=1e-6)
        assert fit_indices(ours).chi2 != fit_indices(ours).chi2  # NaN: no test statistic without the full weights


def test_two_item_scale_alone_is_not_identified():
    # reference: counting rule, 3 moments < 4 parameters (common practice, no source)
    result = fit(np.array([[1.0, .5], [.5, 1.0]]), 100, factor_model({"f": ["a", "b"]}))
    assert not result.identified
    assert not result.fitted
    assert [n.code for n in result.notes] == ["not-identified"]
    assert np.isnan(fit_indices(result).chi2)


def test_heywood_case_is_noted():
    # reference: closed form, lambda_1^2 = r12 r13 / r23 = 1.28 > 1, so theta_1 = 1 - 1.28 < 0
    from scalewright.stats.cfa_result import summarize_fit

    corr = np.array([[1, .8, .8], [.8, 1, .5], [.8, .5, 1]])
    result = fit(corr, 1000, factor_model({"f": ["a", "b", "c"]}), ddof=0)
    assert result.matrices()[2][0] == pytest.approx(1 - 1.28, abs=1e-8)
    summary = summarize_fit(result, name="f", scales={"f": ["a", "b", "c"]})
    assert any(n.code == "heywood-case" and n.values["items"] == ("a",) for n in summary.notes)


def test_non_convergence_is_noted():
    # reference: an iteration budget of 2 cannot reach the gradient tolerance (common practice, no source)
    holzinger = pytest.importorskip("semopy.examples.holzinger39")
    x = holzinger.get_data()[HS_ITEMS].to_numpy(float)
    result = fit(np.cov(x, rowvar=False), len(x), factor_model(HS_FACTORS), max_iter=2)
    assert not result.converged
    assert result.notes[0].code == "not-converged"


def test_factor_signs_are_reflected_to_positive_loadings():
    # reference: a factor's sign is arbitrary; the loadings of a scale of positively related items sum > 0
    cov = population_cov(np.array([[-.7], [-.6], [-.5], [-.8]]), np.eye(1), np.array([.5, .6, .7, .4]))
    result = fit(cov, 1000, factor_model({"f": list("abcd")}), ddof=0)
    assert (result.matrices()[0] > 0).all()


def test_equal_loadings_within_a_group_match_the_tau_equivalent_closed_form():
    # reference: closed form of the tau-equivalent model with free residuals at a population matrix that it
    # reproduces exactly: lambda^2 = the common covariance (Joreskog 1971, congeneric models)
    cov = np.full((4, 4), 0.49) + np.diag([0.51, 0.3, 0.8, 0.6])
    p = 4
    parameters = (Parameter("loading", 0, 0, (0,)), *(Parameter("residual", i, -1, (0,)) for i in range(p)))
    model = CfaModel(items=tuple("abcd"), factors=("f",), parameters=parameters, groups=(GroupPattern(
        loading_index=np.zeros((p, 1), dtype=int), loading_value=np.zeros((p, 1)),
        factor_cov_index=np.full((1, 1), FIXED), factor_cov_value=np.eye(1),
        residual_index=np.arange(1, p + 1), residual_value=np.zeros(p)),))
    result = fit(cov, 1000, model, ddof=0)
    assert result.converged
    assert result.theta[0] == pytest.approx(0.7, abs=1e-8)
    np.testing.assert_allclose(result.theta[1:], [0.51, 0.3, 0.8, 0.6], atol=1e-8)


def test_ml_fit_is_invariant_to_the_units_of_the_items():
    # reference: scale invariance of ML factor analysis (Browne 1982; a property of the ML discrepancy):
    # rescaling items leaves chi2 and the standardized loadings unchanged
    rng = np.random.default_rng(12)
    loadings, phi, residuals = standardized_structure([4, 4], .65, np.array([[1, .3], [.3, 1]]))
    cov = np.cov(simulate(population_cov(loadings, phi, residuals), 500, rng), rowvar=False)
    units = np.diag([1, 2, .5, 3, 1, 10, .2, 4])
    items = [f"i{k}" for k in range(8)]
    model = factor_model({"f": items[:4], "g": items[4:]})
    plain, rescaled = fit(cov, 500, model), fit(units @ cov @ units, 500, model)
    assert fit_indices(rescaled).chi2 == pytest.approx(fit_indices(plain).chi2, rel=1e-8)
    np.testing.assert_allclose(standardized_solution(rescaled).loadings, standardized_solution(plain).loadings,
                               atol=1e-8)
