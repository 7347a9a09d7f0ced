"""`confirm` from merged summaries: the models of :func:`~scalewright.analyses.confirm.analyse_confirm`.

Each model is fitted to a matrix that is a function of mergeable summaries of its items' answer codes:
the listwise or pairwise keyed covariance (exact integer cross-products), the EM covariance (per-pattern
sums, :func:`~scalewright.stats.em.em_means_and_covariance` takes them as they are), or the polychoric
correlations (per-pair contingency tables). The whole-file model's items are summarised as one more
"scale" of the plan (:data:`WHOLE_FILE_KEY`), so its listwise rows are those answering all of them, as on
the whole-file route.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import Any

import numpy as np

from .confirm import (
    WHOLE_FILE,
    ConfirmAnalysis,
    ModelInput,
    _keying,
    confirmed_model,
    observed_score_correlations,
)
from .summarised_groups import invariance_from_summaries, keyed_from_cross_products

#: the key of the whole-file model's items among the per-scale summaries (no scale name starts with a space)
WHOLE_FILE_KEY = " whole file"


def whole_file_items(spec: Any, *, missing: str) -> tuple[str, ...]:
    """The items summarised for the whole-file model: the model's items, or every item of the file for EM."""
    from ..stats.cfa_model import factor_model, scale_file_structure

    if missing == "em":
        return tuple(spec.items)
    membership, orthogonal, _ = scale_file_structure({name: tuple(s.items) for name, s in spec.scales.items()})
    return tuple(factor_model(membership, orthogonal=orthogonal).items)


def confirm_plan(spec: Any, *, missing: str, ordinal: bool, by: Sequence[str] = ()) -> Any:
    """The summary plan of ``confirm``: per scale (and for the whole-file model's items) the cross-products
    of the missing-answer method, the per-pattern statistics and, with ``ordinal``, the pair tables."""
    from ..engine.plan import plan_for

    plan = plan_for(spec, cross_products="pairwise" if missing == "pairwise" else "listwise", answers=False,
                    by=tuple(by), patterns=True)
    if ordinal:
        plan = replace(plan, pair_tables="pairwise" if missing == "pairwise" else "listwise")
    # with survey weights: exact weighted sums, so the fits equal the whole-file route's (which sums them so)
    return with_whole_file_items(replace(plan, weighted_exact=True), spec, missing=missing)


def with_whole_file_items(plan: Any, spec: Any, *, missing: str) -> Any:
    """``plan`` with the whole-file model's items as one more "scale" (:data:`WHOLE_FILE_KEY`), when the
    scale file has two scales or more (otherwise there is no whole-file model)."""
    from ..engine.plan import ScalePlan

    if len(spec.scales) < 2:
        return plan
    index = {name: position for position, name in enumerate(spec.items)}
    items = whole_file_items(spec, missing=missing)
    span = int(max(s.response.max - s.response.min for s in spec.scales.values()))
    whole = ScalePlan(name=WHOLE_FILE_KEY, positions=tuple(index[item] for item in items), low=0, high=span,
                      reversed_mask=(False,) * len(items), method="mean", required=len(items))
    return replace(plan, scales=(*plan.scales, whole))


def model_input_from_summary(spec: Any, part: Any, pool: Sequence[str], items: Sequence[str], *, missing: str,
                             ordinal: bool, scope: str, weight_column: str | None = None) -> ModelInput:
    """:func:`~scalewright.analyses.confirm.model_input` from the summary ``part`` of the items ``pool``
    (``items`` among them), by the same steps; with ``weight_column``
    :func:`~scalewright.analyses.confirm.weighted_model_input` (listwise, not ordinal) from the weighted
    cross-products ``w_cross_products``."""
    from ..stats.em import em_means_and_covariance
    from ..stats.missing import check_method, keyed_estimate, missing_handling
    from ..stats.polychoric_matrix import polychoric_matrix

    check_method(missing)
    pool, items = list(pool), list(items)
    where = [pool.index(item) for item in items]
    patterns = part["patterns"]
    if weight_column is not None:
        return _weighted_model_input(spec, part, pool, where, scope=scope, weight_column=weight_column)
    if ordinal:
        _, _, reversed_mask = _keying(spec, items)
        tables = part["pair_tables"]
        matrix = polychoric_matrix(tables.take(where) if where != list(range(len(pool))) else tables,
                                   item_names=items, pairwise=missing == "pairwise").keyed(reversed_mask)
        weights = np.array(matrix.dwls_weights(), dtype=np.float64)
        # the unit diagonal's weight, as model_input sets it (see there why any positive weight will do)
        off = weights[~np.eye(len(items), dtype=bool)]
        np.fill_diagonal(weights, float(off.max()) if off.size and off.max() > 0 else 1.0)
        handling = missing_handling(patterns, missing, n_used=matrix.n_used, scope=scope, item_names=tuple(pool))
        return ModelInput(matrix=matrix.correlation, n=int(matrix.n_used), weights=weights, missing=handling)
    estimate = None
    if missing == "em" and patterns.anything_missing:
        estimate = em_means_and_covariance(patterns)
        lows, highs, reversed_mask = _keying(spec, pool)
        _, cov_all = keyed_estimate(estimate, lows=lows, highs=highs, reversed_mask=reversed_mask, from_codes=True)
        cov, n_used = cov_all[np.ix_(where, where)], patterns.n_used
    else:
        stats = keyed_from_cross_products(spec, part["cross_products"], pool)
        cov, n_used = stats.cov[np.ix_(where, where)], stats.n_used
        if missing == "em":
            n_used = patterns.n_used
    handling = missing_handling(patterns, missing, n_used=n_used, estimate=estimate, scope=scope,
                                item_names=tuple(pool))
    return ModelInput(matrix=np.asarray(cov, dtype=np.float64), n=int(n_used), weights=None, missing=handling)


def _weighted_model_input(spec: Any, part: Any, pool: list[str], where: list[int], *, scope: str,
                          weight_column: str) -> ModelInput:
    """The weighted covariance of the keyed items (complete answers, positive weight; divisor
    sum(w) - sum(w^2)/sum(w)) with Kish's n_eff as n, and the weighted block, as ``weighted_model_input``."""
    import math

    from ..stats.missing import missing_handling

    cross = part["w_cross_products"]
    _, _, reversed_mask = _keying(spec, pool)
    n_used, v1, v2, n_eff = cross.n_used, cross.sum_w, cross.sum_w2, cross.effective_n
    cov = cross.covariance(reversed_mask)[np.ix_(where, where)]
    handling = missing_handling(part["patterns"], "listwise", n_used=n_used, scope=scope, item_names=tuple(pool))
    block = {"weighted": True, "weight_column": weight_column, "n": n_used, "n_zero_weight": cross.n_zero_weight,
             "n_effective": n_eff, "sum_of_weights": v1 if n_used else 0.0,
             "design_effect": n_used * v2 / v1**2 if n_used else math.nan, "fit_n": "n_effective"}
    return ModelInput(matrix=cov, n=n_eff, weights=None, missing=handling, weighted=block)


def confirm_from_summaries(spec: Any, summary: Any, *, n_rows: int, missing: str = "listwise", ordinal: bool = False,
                           confidence_level: float = 0.95, weight_column: str | None = None) -> ConfirmAnalysis:
    """:func:`~scalewright.analyses.confirm.analyse_confirm` from a summary made by :func:`confirm_plan`;
    with ``weight_column`` (the plan's weight; listwise, not ordinal) the weighted fits of
    ``analyse_confirm(weighted=True)``."""
    from ..concurrency import map_in_threads, one_blas_thread
    from ..notes import note
    from ..stats.cfa_model import factor_model, scale_file_structure

    names = list(spec.scales)
    memberships = {name: tuple(spec.scales[name].items) for name in names}

    def one_scale(name: str) -> tuple[Any, Any]:
        items = memberships[name]
        given = model_input_from_summary(spec, summary["scales"][name], items, items, missing=missing,
                                         ordinal=ordinal, scope="confirm-scale", weight_column=weight_column)
        return confirmed_model(given, factor_model({name: items}), ordinal=ordinal, name=name,
                               scales={name: items}, confidence_level=confidence_level), given

    with one_blas_thread():
        done = dict(zip(names, map_in_threads(one_scale, names), strict=True))
        models = {name: pair[0] for name, pair in done.items()}
        missing_by_model = {name: pair[1].missing for name, pair in done.items()}
        weighted_by_model = {name: pair[1].weighted for name, pair in done.items() if pair[1].weighted}
        observed: dict[str, dict[str, float]] = {}
        if len(names) >= 2:
            membership, orthogonal, totals = scale_file_structure(memberships)
            model = factor_model(membership, orthogonal=orthogonal)
            given = model_input_from_summary(spec, summary["scales"][WHOLE_FILE_KEY],
                                             whole_file_items(spec, missing=missing), model.items, missing=missing,
                                             ordinal=ordinal, scope="confirm-file", weight_column=weight_column)
            models[WHOLE_FILE] = confirmed_model(given, model, ordinal=ordinal, name=WHOLE_FILE, scales=memberships,
                                                 totals=totals, hints=True, confidence_level=confidence_level)
            missing_by_model[WHOLE_FILE] = given.missing
            if given.weighted:
                weighted_by_model[WHOLE_FILE] = given.weighted
            if not ordinal:
                observed = observed_score_correlations(given.matrix, model.items, memberships)
    notes: tuple[Any, ...] = (note("dwls-polychoric", estimator="dwls"),) if ordinal else ()
    if weight_column is not None:
        notes += (note("confirm-weighted", weight_column=weight_column),)
    return ConfirmAnalysis(models=models, observed_correlations=observed, missing_handling=missing, n_rows=n_rows,
                           estimator="dwls" if ordinal else "ml",
                           correlation_type="polychoric" if ordinal else "covariance",
                           missing_by_model=missing_by_model, notes=notes, weighted_by_model=weighted_by_model)


def confirm_invariance_from_summaries(spec: Any, summary: Any, analysis: ConfirmAnalysis, *, by: Sequence[str],
                                      min_group: int = 30, strict: bool = False,
                                      confidence_level: float = 0.95) -> ConfirmAnalysis:
    """``analysis`` with the invariance of every scale and the whole-file model across ``by`` (as
    :func:`~scalewright.analyses.invariance.analyse_invariance`), from each level's cross-products."""
    from ..stats.cfa_model import factor_model, scale_file_structure

    memberships = {name: tuple(scale.items) for name, scale in spec.scales.items()}
    targets: dict[str, Any] = {name: factor_model({name: items}) for name, items in memberships.items()}
    if len(memberships) >= 2:
        membership, orthogonal, _ = scale_file_structure(memberships)
        targets[WHOLE_FILE] = factor_model(membership, orthogonal=orthogonal)

    def cross_products_of(part: Any, name: str) -> Any:
        return part[WHOLE_FILE_KEY if name == WHOLE_FILE else name]["cross_products"]

    results = invariance_from_summaries(spec, summary, targets, by=by, min_group=min_group, strict=strict,
                                        confidence_level=confidence_level, cross_products_of=cross_products_of)
    return replace(analysis, invariance=results)
