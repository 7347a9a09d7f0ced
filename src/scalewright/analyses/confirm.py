"""Confirmatory factor models of a scale file: one per scale, one of the whole file, and invariance by subgroup."""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

# the fits multiply many small matrices, where waking BLAS threads costs more than it gives
from ..concurrency import one_blas_thread

WHOLE_FILE = "all"


def keyed_covariance(spec: Any, responses: Any, items: Sequence[str], *, pairwise: bool = False,
                     rows: np.ndarray | None = None) -> Any:
    """Means and covariances of the keyed ``items`` (each keyed as the first scale listing it), as
    :class:`~scalewright.stats.item_covariance.ItemCovariance`.

    Integer answers go through the exact one-byte route (reverse keying only flips the sign of an item's
    covariances and turns its mean), others through the float route.
    """
    from ..scoring import reverse_key
    from ..stats.coded import CodedAnswers, listwise_covariance, pairwise_covariance
    from ..stats.item_covariance import ItemCovariance, item_covariance

    owner = {}
    for scale in spec.scales.values():
        for item in scale.items:
            owner.setdefault(item, scale)
    lows = np.array([owner[item].response.min for item in items], dtype=np.float64)
    highs = np.array([owner[item].response.max for item in items], dtype=np.float64)
    reversed_mask = np.array([owner[item].is_reversed(item) for item in items], dtype=bool)
    codes = responses.codes(list(items))
    if codes is not None:
        coded = CodedAnswers(codes if rows is None else codes[rows])
        route = pairwise_covariance if pairwise else listwise_covariance
        raw = route(coded, low=0, high=0, reversed_mask=np.zeros(len(items), dtype=bool))
        sign = np.where(reversed_mask, -1.0, 1.0)
        means = np.where(reversed_mask, highs - raw.means, lows + raw.means)
        return ItemCovariance(cov=raw.cov * np.outer(sign, sign), means=means, n_used=raw.n_used,
                              n_rows=raw.n_rows, n_complete=raw.n_complete, pair_counts=raw.pair_counts,
                              pairwise=raw.pairwise)
    matrix = responses.matrix(list(items))
    if rows is not None:
        matrix = matrix[rows]
    for position in np.flatnonzero(reversed_mask):
        matrix[:, position] = reverse_key(matrix[:, position], lows[position], highs[position])
    return item_covariance(matrix, pairwise=pairwise)


@dataclass(frozen=True)
class ConfirmAnalysis:
    """Every model of one run: ``models`` (per scale and ``all``), latent and observed score correlations."""

    models: dict[str, Any]
    observed_correlations: dict[str, dict[str, float]]
    missing_handling: str
    n_rows: int
    invariance: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        from ..results import to_jsonable

        out: dict[str, Any] = {"models": {name: model.to_dict() for name, model in self.models.items()},
                               "observed_score_correlations": to_jsonable(self.observed_correlations),
                               "missing": self.missing_handling}
        if self.invariance:
            out["invariance"] = {column: {scale: result.to_dict() for scale, result in by_scale.items()}
                                 for column, by_scale in self.invariance.items()}
        return out


def observed_score_correlations(cov: np.ndarray, items: Sequence[str], scales: dict[str, Sequence[str]]) \
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


def one_factor_models(spec: Any, responses: Any, *, pairwise: bool = False) -> dict[str, Any]:
    """The confirmatory one-factor model of each scale (what ``reliability`` shows beside its own numbers)."""
    return analyse_confirm(spec, responses, pairwise=pairwise, whole_file=False).models


def analyse_confirm(spec: Any, responses: Any, *, pairwise: bool = False, confidence_level: float = 0.95,
                    scales: Sequence[str] | None = None, whole_file: bool = True) -> ConfirmAnalysis:
    """Fit the one-factor model of each scale and the whole-file model (correlated factors or bifactor)."""
    with one_blas_thread():
        return _analyse_confirm(spec, responses, pairwise=pairwise, confidence_level=confidence_level,
                                names=list(scales or spec.scales), whole_file=whole_file)


def _analyse_confirm(spec: Any, responses: Any, *, pairwise: bool, confidence_level: float, names: list[str],
                     whole_file: bool) -> ConfirmAnalysis:
    from ..concurrency import map_in_threads
    from ..stats.cfa_fit import fit
    from ..stats.cfa_model import factor_model, scale_file_structure
    from ..stats.cfa_result import summarize_fit

    memberships = {name: tuple(spec.scales[name].items) for name in names}

    def one_scale(name: str) -> Any:
        items = memberships[name]
        cov = keyed_covariance(spec, responses, items, pairwise=pairwise)
        fitted = fit(cov.cov, cov.n_used, factor_model({name: items}))
        return summarize_fit(fitted, name=name, scales={name: items}, confidence_level=confidence_level)

    models = dict(zip(names, map_in_threads(one_scale, names)))
    observed: dict[str, dict[str, float]] = {}
    if whole_file and len(names) >= 2:
        membership, orthogonal, totals = scale_file_structure(memberships)
        model = factor_model(membership, orthogonal=orthogonal)
        cov = keyed_covariance(spec, responses, model.items, pairwise=pairwise)
        fitted = fit(cov.cov, cov.n_used, model)
        models[WHOLE_FILE] = summarize_fit(fitted, name=WHOLE_FILE, scales=memberships, totals=totals, hints=True,
                                           confidence_level=confidence_level)
        observed = observed_score_correlations(cov.cov, model.items, memberships)
    return ConfirmAnalysis(models=models, observed_correlations=observed,
                           missing_handling="pairwise" if pairwise else "listwise", n_rows=responses.n)
