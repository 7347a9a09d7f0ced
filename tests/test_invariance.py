"""Measurement invariance (stats/invariance) on generated data with a known truth."""
from __future__ import annotations

import logging

import numpy as np
import pandas as pd
import pytest

from scalewright.stats.cfa_fit import fit
from scalewright.stats.cfa_fit_indices import fit_indices
from scalewright.stats.cfa_model import factor_model, multigroup_model
from scalewright.stats.invariance import measurement_invariance

from .cfa_data import population_cov, simulate, standardized_structure

ITEMS = list("abcdef")
LOADINGS = [.7, .6, .5, .6, .7, .5]


def groups(rng: np.random.Generator, *, n: int = 1000, intercept_shift: int | None = None,
           loading_shift: int | None = None, n_groups: int = 3):
    """Samples of a one-factor model in several groups; factor means 0, .3, .6; optional non-invariance in the last."""
    loadings, phi, residuals = standardized_structure([6], LOADINGS, np.eye(1))
    covs, ns, means, rows = [], [], [], []
    for g in range(n_groups):
        lam, nu = loadings.copy(), np.zeros(6)
        if g == n_groups - 1 and intercept_shift is not None:
            nu[intercept_shift] = 0.5
        if g == n_groups - 1 and loading_shift is not None:
            lam[loading_shift, 0] = 0.15
        x = simulate(population_cov(lam, phi, residuals), n, rng, means=nu + lam[:, 0] * 0.3 * g)
        covs.append(np.cov(x, rowvar=False))
        ns.append(n)
        means.append(x.mean(axis=0))
        rows.append(x)
    return covs, ns, means, rows


def invariance(covs, ns, means, **options):
    names = [f"g{k}" for k in range(len(covs))]
    return measurement_invariance(factor_model({"f": ITEMS}), covs, ns, means, names, name="f", column="group",
                                  **options)


def test_invariant_groups_reach_scalar_with_latent_means_recovered():
    # reference: the generating model (same loadings and intercepts; factor means .3 and .6 above the first)
    covs, ns, means, _ = groups(np.random.default_rng(1))
    result = invariance(covs, ns, means, strict=True)
    assert result.level in ("scalar", "strict")
    assert result.partial_scalar is None
    assert result.freed == []
    assert result.latent_mean_differences["g1"]["f"]["value"] == pytest.approx(0.3, abs=0.1)
    assert result.latent_mean_differences["g2"]["f"]["value"] == pytest.approx(0.6, abs=0.1)
    low, high = result.latent_mean_differences["g2"]["f"]["ci"]
    assert low < 0.6 < high


def test_shifted_intercept_fails_scalar_and_that_item_is_freed():
    # reference: the generating model shifts the intercept of item c (position 2) in the last group
    covs, ns, means, _ = groups(np.random.default_rng(2), intercept_shift=2)
    result = invariance(covs, ns, means)
    assert result.changes["scalar"].holds is False
    assert result.freed[0] == {"item": "c", "parameter": "intercept"}
    assert result.partial_scalar is True
    assert result.level == "metric"
    assert result.notes[0].code == "invariance-partial-scalar"


def test_shifted_loading_fails_metric():
    # reference: the generating model lowers the loading of item b in the last group from .6 to .15
    covs, ns, means, _ = groups(np.random.default_rng(3), loading_shift=1)
    result = invariance(covs, ns, means)
    assert result.changes["metric"].holds is False
    assert result.level == "configural"
    assert result.latent_mean_differences == {}


def test_one_group_configural_model_equals_the_single_group_model():
    # reference: with one group, the configural model (free intercepts) is the one-group model of `confirm`
    covs, ns, means, _ = groups(np.random.default_rng(4), n_groups=1)
    single = fit(covs[0], ns[0], factor_model({"f": ITEMS}))
    configural = fit(covs, ns, multigroup_model(factor_model({"f": ITEMS}), 1, "configural"), means=means)
    assert fit_indices(configural).chi2 == pytest.approx(fit_indices(single).chi2, abs=1e-8)
    np.testing.assert_allclose(configural.matrices()[0], single.matrices()[0], atol=1e-7)


def test_configural_chi2_is_the_sum_of_semopy_per_group_chi2():
    # reference: semopy computed live on each group; the configural chi2 is the sum of the per-group chi2
    # (an identity of ML estimation, each chi2 = n_g F_g)
    semopy = pytest.importorskip("semopy")
    logging.getLogger().setLevel(logging.ERROR)
    covs, ns, means, rows = groups(np.random.default_rng(5), n=300)
    configural = fit(covs, ns, multigroup_model(factor_model({"f": ITEMS}), 3, "configural"), means=means)
    total = 0.0
    for x in rows:
        model = semopy.Model("eta =~ " + " + ".join(ITEMS))  # a factor name that is no item name
        model.fit(pd.DataFrame(x, columns=ITEMS), options={"ftol": 1e-14, "maxiter": 20000})
        total += semopy.calc_stats(model).T["Value"]["chi2"]
    assert fit_indices(configural).chi2 == pytest.approx(total, abs=1e-3)
    assert fit_indices(configural).df == 3 * 9


def test_fewer_than_two_levels_is_a_note_not_a_crash():
    # reference: invariance needs two groups (common practice, no source)
    covs, ns, means, _ = groups(np.random.default_rng(6), n_groups=1)
    result = invariance(covs, ns, means)
    assert result.level is None
    assert result.notes[0].code == "too-few-levels"


@pytest.mark.slow
def test_lr_test_of_metric_invariance_has_its_nominal_size():
    # reference: under true invariance the LR test of the metric step rejects at about its nominal .05
    # (chi-square theory, Joreskog 1971); 400 simulated pairs of groups of 300
    rng = np.random.default_rng(7)
    rejections = 0
    for _ in range(400):
        covs, ns, means, _ = groups(rng, n=300, n_groups=2)
        base = factor_model({"f": ITEMS})
        configural = fit_indices(fit(covs, ns, multigroup_model(base, 2, "configural"), means=means))
        metric = fit_indices(fit(covs, ns, multigroup_model(base, 2, "metric"), means=means))
        from scalewright.stats.invariance import step_change

        rejections += step_change(configural, metric).pvalue < 0.05
    assert rejections / 400 == pytest.approx(0.05, abs=0.03)
