"""Confirmatory factor models of a scale file: one per scale, one of the whole file, and invariance by subgroup."""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

# the fits multiply many small matrices, where waking BLAS threads costs more than it gives
from ..concurrency import one_blas_thread

if TYPE_CHECKING:
    from ..notes import Note
    from ..responses import Responses
    from ..spec_model import Scale, ScaleSpec
    from ..stats.cfa_fit import CfaFit
    from ..stats.cfa_model import CfaModel
    from ..stats.cfa_result import ConfirmedModel
    from ..stats.invariance import InvarianceResult
    from ..stats.item_covariance import ItemCovariance
    from ..stats.missing import MissingHandling
    from ..stats.missing_patterns import PatternSummary

WHOLE_FILE = "all"


def _keying(spec: ScaleSpec, items: Sequence[str]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Lows, highs and reverse mask of ``items``, each keyed as the first scale listing it."""
    owner: dict[str, Scale] = {}
    for scale in spec.scales.values():
        for item in scale.items:
            owner.setdefault(item, scale)
    lows = np.array([owner[item].response.min for item in items], dtype=np.float64)
    highs = np.array([owner[item].response.max for item in items], dtype=np.float64)
    reversed_mask = np.array([owner[item].is_reversed(item) for item in items], dtype=bool)
    return lows, highs, reversed_mask


def keyed_covariance(spec: ScaleSpec, responses: Responses, items: Sequence[str], *, pairwise: bool = False,
                     rows: np.ndarray | None = None) -> ItemCovariance:
    """Means and covariances of the keyed ``items`` (each keyed as the first scale listing it), as
    :class:`~scalewright.stats.item_covariance.ItemCovariance`.

    Integer answers go through the exact one-byte route (reverse keying only flips the sign of an item's
    covariances and turns its mean), others through the float route.
    """
    from ..answer_codes import ItemAnswers
    from ..stats.coded import listwise_covariance, pairwise_covariance
    from ..stats.item_covariance import ItemCovariance, item_covariance

    lows, highs, reversed_mask = _keying(spec, items)
    codes = responses.codes(list(items))
    if codes is not None:
        coded = ItemAnswers.from_codes(codes if rows is None else codes[rows], lows, highs)
        route = pairwise_covariance if pairwise else listwise_covariance
        raw = route(coded, low=0, high=0, reversed_mask=np.zeros(len(items), dtype=bool))
        sign = np.where(reversed_mask, -1.0, 1.0)
        means = np.where(reversed_mask, highs - raw.means, lows + raw.means)
        return ItemCovariance(cov=raw.cov * np.outer(sign, sign), means=means, n_used=raw.n_used,
                              n_rows=raw.n_rows, n_complete=raw.n_complete, pair_counts=raw.pair_counts,
                              pairwise=raw.pairwise)
    return item_covariance(_keyed_matrix(spec, responses, items, rows), pairwise=pairwise)


def _keyed_matrix(spec: ScaleSpec, responses: Responses, items: Sequence[str],
                  rows: np.ndarray | None = None) -> np.ndarray:
    from ..scoring import reverse_key

    lows, highs, reversed_mask = _keying(spec, items)
    matrix = responses.matrix(list(items))
    if rows is not None:
        matrix = matrix[rows]
    for position in np.flatnonzero(reversed_mask):
        matrix[:, position] = reverse_key(matrix[:, position], lows[position], highs[position])
    return matrix


def pattern_summary(spec: ScaleSpec, responses: Responses, items: Sequence[str]) -> tuple[PatternSummary, bool]:
    """:class:`~scalewright.stats.missing_patterns.PatternSummary` of ``items`` (of the one-byte codes when
    there are codes, else of the keyed answers) and whether it is of the codes."""
    from ..stats.missing_patterns import PatternSummary

    codes = responses.codes(list(items))
    if codes is not None:
        return PatternSummary.from_codes(np.asarray(codes)), True
    return PatternSummary.from_values(_keyed_matrix(spec, responses, items)), False


@dataclass(frozen=True)
class ModelInput:
    """What one model is fitted to: the matrix, its n, DWLS weights (ordinal only) and the missing block."""

    matrix: np.ndarray
    n: float  # a count, or Kish's effective n with survey weights
    weights: np.ndarray | None
    missing: MissingHandling
    #: with survey weights: the weighted-block keys of the JSON contract
    weighted: dict[str, Any] | None = None


def weighted_model_input(spec: ScaleSpec, responses: Responses, items: Sequence[str], *, scope: str = "scale") -> ModelInput:
    """The weighted covariance matrix of the keyed ``items`` (listwise: every item answered, positive weight;
    divisor sum(w) - sum(w^2)/sum(w)) with Kish's effective sample size as n.

    The estimates equal those of the rows repeated w times (integer weights); the chi-square, the fit
    indices that use N and the standard errors use n_eff, which is approximate unless the weights are the
    whole design (no strata, no clusters).
    """
    from ..stats.missing import missing_handling
    from ..stats.weighted import design_effect, kish_effective_n, weighted_covariance

    items = list(items)
    matrix = _keyed_matrix(spec, responses, items)
    w = responses.weights.values
    used = np.isfinite(matrix).all(axis=1) & (w > 0)
    summary, _ = pattern_summary(spec, responses, items)
    handling = missing_handling(summary, "listwise", n_used=int(used.sum()), scope=scope, item_names=tuple(items))
    n_eff = kish_effective_n(w[used]) if used.any() else 0.0
    cov = weighted_covariance(matrix, w)
    codes = responses.codes(items)
    if codes is not None:
        # whole answer levels: the exact weighted sums the streaming and Dask routes merge, so the fits are the
        # same on every route (the iterative fit would carry a last-bit difference into its results)
        from ..summaries.exact_weighted import ExactWeightedCrossProducts

        cross = ExactWeightedCrossProducts.from_codes(np.asarray(codes), np.asarray(w, dtype=np.float64))
        cov, n_eff = cross.covariance(_keying(spec, items)[2]), cross.effective_n
    block = {"weighted": True, "weight_column": responses.weights.column, "n": int(used.sum()),
             "n_zero_weight": int(np.count_nonzero(np.isfinite(matrix).all(axis=1) & (w == 0))),
             "n_effective": n_eff, "sum_of_weights": float(w[used].sum()), "design_effect": design_effect(w[used]),
             "fit_n": "n_effective"}
    return ModelInput(matrix=cov, n=n_eff, weights=None, missing=handling, weighted=block)


def model_input(spec: ScaleSpec, responses: Responses, items: Sequence[str], *, missing: str = "listwise",
                ordinal: bool = False, em_items: Sequence[str] | None = None, scope: str = "scale") -> ModelInput:
    """The matrix a model of ``items`` is fitted to, by the missing-answer method.

    ``em``: the EM covariance (Dempster, Laird & Rubin 1977) of ``em_items`` (default ``items``; every item
    of the file for the whole-file model), cut to ``items``, with n = respondents who answered at least one
    of ``em_items``. With nothing missing the EM fixed point is the complete-data estimate, and the listwise
    matrix is used so both agree exactly (its n - 1 divisor instead of n is the one difference EM would add).
    ``ordinal``: the keyed polychoric matrix with DWLS weights 1/SE^2 (listwise or pairwise only).
    """
    from ..errors import UsageError
    from ..stats.em import em_means_and_covariance
    from ..stats.missing import check_method, keyed_estimate, missing_handling

    check_method(missing)
    items = list(items)
    pool = list(em_items) if em_items is not None else items
    summary, from_codes = pattern_summary(spec, responses, pool)
    if ordinal:
        if missing == "em":
            raise UsageError("--ordinal works with --missing listwise or pairwise: the polychoric correlations are "
                             "estimated from the answer tables, not by EM")
        from .ordinal import dwls_inputs

        _, _, reversed_mask = _keying(spec, items)
        corr, weights, n_used, _ = dwls_inputs(responses, items, [i for i, r in zip(items, reversed_mask, strict=True) if r],
                                               pairwise=missing == "pairwise")
        # the unit diagonal carries no information and has no SE (weight 0), but with weight 0 the residual
        # variances are left free of any equation. Each residual variance enters only its own diagonal cell,
        # so ANY positive weight there makes the fit set it to 1 - common variance exactly and leaves the
        # off-diagonal (DWLS) solution unchanged: the usual DWLS on correlations, with a unit implied diagonal
        weights = np.array(weights, dtype=np.float64)
        off = weights[~np.eye(len(items), dtype=bool)]
        np.fill_diagonal(weights, float(off.max()) if off.size and off.max() > 0 else 1.0)
        handling = missing_handling(summary, missing, n_used=n_used, scope=scope, item_names=tuple(pool))
        return ModelInput(matrix=corr, n=int(n_used), weights=weights, missing=handling)
    estimate = None
    if missing == "em" and summary.anything_missing:
        estimate = em_means_and_covariance(summary)
        lows, highs, reversed_mask = _keying(spec, pool)
        _, cov_all = keyed_estimate(estimate, lows=lows, highs=highs, reversed_mask=reversed_mask,
                                    from_codes=from_codes)
        where = [pool.index(item) for item in items]
        cov, n_used = cov_all[np.ix_(where, where)], summary.n_used
    else:
        stats = keyed_covariance(spec, responses, items, pairwise=missing == "pairwise")
        cov, n_used = stats.cov, stats.n_used
        if missing == "em":
            n_used = summary.n_used
    handling = missing_handling(summary, missing, n_used=n_used, estimate=estimate, scope=scope,
                                item_names=tuple(pool))
    return ModelInput(matrix=np.asarray(cov, dtype=np.float64), n=int(n_used), weights=None, missing=handling)


@dataclass(frozen=True)
class ConfirmAnalysis:
    """Every model of one run: ``models`` (per scale and ``all``), latent and observed score correlations."""

    models: dict[str, ConfirmedModel]
    observed_correlations: dict[str, dict[str, float]]
    missing_handling: str
    n_rows: int
    invariance: dict[str, dict[str, InvarianceResult]] = field(default_factory=dict)
    estimator: str = "ml"
    correlation_type: str = "covariance"
    missing_by_model: dict[str, MissingHandling] = field(default_factory=dict)
    notes: tuple[Note, ...] = ()
    #: with survey weights: per model the weighted-block keys (``weighted``, ``weight_column``, ``n``, ...)
    weighted_by_model: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        from ..results import to_jsonable

        models = {}
        for name, model in self.models.items():
            models[name] = model.to_dict()
            if name in self.missing_by_model:
                models[name].update(self.missing_by_model[name].to_dict())
                models[name]["missing_notes"] = self.missing_by_model[name].note_dicts
            if name in self.weighted_by_model:
                # n_used stays a count of respondents; the fit's N (chi-square, RMSEA, SEs) is n_effective
                models[name]["n_used"] = self.weighted_by_model[name]["n"]
                models[name]["weighted"] = to_jsonable(self.weighted_by_model[name])
        out: dict[str, Any] = {"models": models,
                               "observed_score_correlations": to_jsonable(self.observed_correlations),
                               "missing": self.missing_handling, "estimator": self.estimator,
                               "correlation_type": self.correlation_type,
                               "notes": [n.to_dict() for n in self.notes]}
        if self.invariance:
            out["invariance"] = {column: {scale: result.to_dict() for scale, result in by_scale.items()}
                                 for column, by_scale in self.invariance.items()}
        return out


def observed_score_correlations(cov: np.ndarray, items: Sequence[str], scales: Mapping[str, Sequence[str]]) \
        -> dict[str, dict[str, float]]:
    """Correlations of the raw composites (unweighted sums of keyed items) from the same covariance matrix."""
    position = {item: i for i, item in enumerate(items)}
    indicators = {name: np.isin(np.arange(len(items)), [position[i] for i in members]).astype(float)
                  for name, members in scales.items()}
    out: dict[str, dict[str, float]] = {}
    for a, u in indicators.items():
        out[a] = {}
        for b, v in indicators.items():
            if a != b:
                variances = float((u @ cov @ u) * (v @ cov @ v))
                out[a][b] = float(u @ cov @ v) / np.sqrt(variances) if variances > 0 else float("nan")
    return out


def one_factor_models(spec: ScaleSpec, responses: Responses, *, pairwise: bool = False) -> dict[str, Any]:
    """The confirmatory one-factor model of each scale (what ``reliability`` shows beside its own numbers)."""
    return analyse_confirm(spec, responses, pairwise=pairwise, whole_file=False).models


def analyse_confirm(spec: ScaleSpec, responses: Responses, *, pairwise: bool = False, confidence_level: float = 0.95,
                    scales: Sequence[str] | None = None, whole_file: bool = True, missing: str | None = None,
                    ordinal: bool = False, weighted: bool = False) -> ConfirmAnalysis:
    """Fit the one-factor model of each scale and the whole-file model (correlated factors or bifactor).

    ``missing``: listwise, pairwise or em (default: pairwise if ``pairwise`` else listwise). ``ordinal``:
    fit by diagonally weighted least squares on the polychoric correlations (Muthen 1984). ``weighted``:
    fit by ML to the weighted covariance matrix with Kish's n_eff as N (:func:`weighted_model_input`; the
    responses carry the survey weights; listwise and not ordinal only).
    """
    from ..errors import UsageError

    method = missing or ("pairwise" if pairwise else "listwise")
    if weighted and (ordinal or method != "listwise"):
        raise UsageError("survey weights: confirmatory models are fitted to the weighted covariance matrix of "
                         "complete answers; use them without --ordinal and with --missing listwise")
    with one_blas_thread():
        return _analyse_confirm(spec, responses, missing=method, ordinal=ordinal, confidence_level=confidence_level,
                                names=list(scales or spec.scales), whole_file=whole_file, weighted=weighted)


def confirmed_model(given: ModelInput, model: CfaModel, *, ordinal: bool, name: str,
                    scales: Mapping[str, Sequence[str]], totals: Mapping[str, Sequence[str]] | None = None,
                    hints: bool = False, confidence_level: float = 0.95) -> ConfirmedModel:
    """``model`` fitted to ``given`` (DWLS on polychoric correlations when ``ordinal``, else ML) and summarised."""
    from ..stats.cfa_fit import fit
    from ..stats.cfa_result import summarize_fit

    fitted: CfaFit = (fit(given.matrix, given.n, model, estimator="dwls", weights=given.weights) if ordinal else
                      fit(given.matrix, given.n, model))
    return summarize_fit(fitted, name=name, scales=scales, totals=totals, hints=hints,
                         confidence_level=confidence_level)


def _analyse_confirm(spec: ScaleSpec, responses: Responses, *, missing: str, ordinal: bool, confidence_level: float,
                     names: list[str], whole_file: bool, weighted: bool = False) -> ConfirmAnalysis:
    from ..concurrency import map_in_threads
    from ..notes import note
    from ..stats.cfa_model import factor_model, scale_file_structure

    memberships = {name: tuple(spec.scales[name].items) for name in names}
    estimator = "dwls" if ordinal else "ml"

    def one_scale(name: str) -> tuple[ConfirmedModel, ModelInput]:
        items = memberships[name]
        given = (weighted_model_input(spec, responses, items, scope="confirm-scale") if weighted else
                 model_input(spec, responses, items, missing=missing, ordinal=ordinal, scope="confirm-scale"))
        return confirmed_model(given, factor_model({name: items}), ordinal=ordinal, name=name,
                               scales={name: items}, confidence_level=confidence_level), given

    done = dict(zip(names, map_in_threads(one_scale, names), strict=True))
    models = {name: pair[0] for name, pair in done.items()}
    missing_by_model = {name: pair[1].missing for name, pair in done.items()}
    weighted_by_model = {name: pair[1].weighted for name, pair in done.items() if pair[1].weighted}
    observed: dict[str, dict[str, float]] = {}
    if whole_file and len(names) >= 2:
        membership, orthogonal, totals = scale_file_structure(memberships)
        model = factor_model(membership, orthogonal=orthogonal)
        given = (weighted_model_input(spec, responses, model.items, scope="confirm-file") if weighted else
                 model_input(spec, responses, model.items, missing=missing, ordinal=ordinal, scope="confirm-file",
                             em_items=list(spec.items) if missing == "em" else None))
        models[WHOLE_FILE] = confirmed_model(given, model, ordinal=ordinal, name=WHOLE_FILE, scales=memberships,
                                             totals=totals, hints=True, confidence_level=confidence_level)
        missing_by_model[WHOLE_FILE] = given.missing
        if given.weighted:
            weighted_by_model[WHOLE_FILE] = given.weighted
        if not ordinal:  # observed score correlations need the covariances, not the polychoric correlations
            observed = observed_score_correlations(given.matrix, model.items, memberships)
    notes: tuple[Note, ...] = (note("dwls-polychoric", estimator="dwls"),) if ordinal else ()
    if weighted:
        notes += (note("confirm-weighted", weight_column=responses.weights.column),)
    return ConfirmAnalysis(models=models, observed_correlations=observed, missing_handling=missing,
                           n_rows=responses.n, estimator=estimator,
                           correlation_type="polychoric" if ordinal else "covariance",
                           missing_by_model=missing_by_model, notes=notes, weighted_by_model=weighted_by_model)
