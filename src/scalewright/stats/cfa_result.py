"""One fitted confirmatory model, summarized for the JSON contract: fit, standardized estimates, omegas, hints."""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..notes import Note, not_computable, note
from ..results import to_jsonable
from .cfa_fit import CfaFit
from .cfa_fit_indices import FitIndices, fit_indices
from .cfa_reliability import BifactorIndices, ModelOmega, bifactor_indices, model_omega
from .cfa_solution import ModificationHint, largest_residual_correlations, modification_hints, standardized_solution

#: the chi-square convention, stated in every model's JSON
CHI2_CONVENTION = "N x F_ML (covariances with divisor N; as lavaan and semopy)"
HEYWOOD_LOADING = 1.0
#: conventional cut-offs of Hu & Bentler (1999, Struct. Eq. Modeling 6:1-55): conventions, not tests
CUTOFFS = {"cfi": 0.95, "rmsea": 0.06, "srmr": 0.08}


def fit_verdict(indices: FitIndices, name: str) -> Note:
    """``fit-meets-cutoffs`` (all three met), ``fit-mixed`` (some) or ``fit-misses-cutoffs`` (none), with values.

    A saturated model (df = 0) fits perfectly by construction: ``fit-saturated``. Missing indices:
    ``fit-unknown``.
    """
    values = {"model": name, "cfi": indices.cfi, "rmsea": indices.rmsea, "srmr": indices.srmr,
              "cfi_min": CUTOFFS["cfi"], "rmsea_max": CUTOFFS["rmsea"], "srmr_max": CUTOFFS["srmr"]}
    if indices.df == 0 and math.isfinite(indices.srmr):
        return Note("fit-saturated", values)
    checks = [indices.cfi >= CUTOFFS["cfi"], indices.rmsea <= CUTOFFS["rmsea"], indices.srmr <= CUTOFFS["srmr"]]
    if not all(math.isfinite(v) for v in (indices.cfi, indices.rmsea, indices.srmr)):
        return Note("fit-unknown", values)
    met = sum(checks)
    code = "fit-meets-cutoffs" if met == 3 else ("fit-misses-cutoffs" if met == 0 else "fit-mixed")
    return Note(code, {**values, "met": met})


@dataclass(frozen=True)
class ConfirmedModel:
    """A fitted model in the terms a reader needs (``to_dict`` is the ``models.<name>`` JSON contract)."""

    name: str
    structure: str  # one-factor | correlated-factors | bifactor
    indices: FitIndices
    items: tuple[str, ...]
    factors: tuple[str, ...]
    loadings: dict[str, dict[str, float]]
    loading_se: dict[str, dict[str, float]]
    residual_variances: dict[str, float]
    factor_correlations: dict[str, dict[str, float]]
    factor_correlation_ci: dict[str, dict[str, tuple[float, float]]]
    residual_correlations: list[dict[str, Any]]
    modification_hints: list[ModificationHint]
    omega: dict[str, ModelOmega]
    bifactor: BifactorIndices | None
    converged: bool
    identified: bool
    verdict: Note | None = None
    notes: tuple[Note, ...] = field(default=())
    #: not-computable notes of the fit indices left NaN: in the JSON's ``notes``, not in the tables' (a dash says it)
    unavailable: tuple[Note, ...] = field(default=())

    @property
    def fitted(self) -> bool:
        return self.identified and math.isfinite(self.indices.srmr)

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {"structure": self.structure, **self.indices.to_dict(),
                               "chi2_convention": CHI2_CONVENTION, "converged": self.converged,
                               "identified": self.identified, "items": list(self.items),
                               "factors": list(self.factors)}
        out["loadings"] = to_jsonable(self.loadings)
        out["loading_se"] = to_jsonable(self.loading_se)
        out["residual_variances"] = to_jsonable(self.residual_variances)
        out["factor_correlations"] = to_jsonable(self.factor_correlations)
        out["factor_correlation_ci"] = to_jsonable(self.factor_correlation_ci)
        out["omega"] = {name: {"omega_total": to_jsonable(value.omega_total),
                               "omega_ci": to_jsonable(value.omega_ci), "omega_ci_method": "delta"}
                        for name, value in self.omega.items()}
        out["residual_correlations"] = to_jsonable(self.residual_correlations)
        out["modification_hints"] = [hint.to_dict() for hint in self.modification_hints]
        if self.bifactor is not None:
            out.update(self.bifactor.to_dict())
        out["verdict"] = self.verdict.to_dict() if self.verdict else None
        out["notes"] = [n.to_dict() for n in (*self.notes, *self.unavailable)]
        return out


def fit_indices_not_computable(indices: FitIndices, *, fitted: bool) -> list[Note]:
    """A ``not-computable`` note for each fit index that is NaN, with the reason it is.

    A model with no degrees of freedom reproduces the covariances exactly, so the test and the indices built on
    it (p-value, TLI, RMSEA and its interval) do not exist; a least-squares fit (ULS, DWLS) has no likelihood,
    so no chi-square test; a model that was not fitted has no indices at all.
    """
    reason = ("model-not-fitted" if not fitted else "least-squares-estimator" if indices.estimator != "ml"
              else "no-degrees-of-freedom" if indices.df <= 0 else "not-finite")
    found = []
    for key, value in indices.to_dict().items():
        empty = value is None or (isinstance(value, list) and any(v is None for v in value))
        if empty:
            found.append(not_computable(key, reason, df=indices.df))
    return found


def summarize_fit(fit_result: CfaFit, *, name: str, scales: Mapping[str, Sequence[str]],
                  totals: Mapping[str, Sequence[str]] | None = None, hints: bool = False,
                  confidence_level: float = 0.95) -> ConfirmedModel:
    """Summarize a one-group fit whose factors are named after ``scales`` (scale -> its items)."""
    model = fit_result.model
    totals = dict(totals or {})
    items, factors = model.items, model.factors
    structure = "bifactor" if totals else ("one-factor" if len(factors) == 1 else "correlated-factors")
    notes = list(fit_result.notes)
    indices = fit_indices(fit_result)
    free = model.groups[0].loading_index >= 0
    loadings: dict[str, dict[str, float]] = {}
    loading_se: dict[str, dict[str, float]] = {}
    residual_variances: dict[str, float] = {}
    correlations: dict[str, dict[str, float]] = {}
    correlation_ci: dict[str, dict[str, tuple[float, float]]] = {}
    omega: dict[str, ModelOmega] = {}
    bifactor = None
    if fit_result.fitted:
        solution = standardized_solution(fit_result, confidence_level=confidence_level)
        for i, item in enumerate(items):
            loadings[item] = {factors[j]: float(solution.loadings[i, j]) for j in np.flatnonzero(free[i])}
            loading_se[item] = {factors[j]: float(solution.loading_se[i, j]) for j in np.flatnonzero(free[i])}
            residual_variances[item] = float(solution.residual_variances[i])
        for j, a in enumerate(factors):
            correlations[a] = {b: float(solution.factor_correlations[j, k]) for k, b in enumerate(factors) if k != j}
            correlation_ci[a] = {b: (float(solution.factor_correlation_ci[j, k, 0]),
                                     float(solution.factor_correlation_ci[j, k, 1]))
                                 for k, b in enumerate(factors) if k != j}
        raw_residuals = fit_result.matrices(0)[2]
        negative = [items[i] for i in np.flatnonzero(raw_residuals < 0)]
        beyond = [items[i] for i in np.flatnonzero(np.nanmax(np.abs(np.where(free, solution.loadings, 0)), axis=1)
                                                   > HEYWOOD_LOADING)]
        if negative or beyond:
            notes.append(note("heywood-case", model=name, items=tuple(dict.fromkeys(negative + beyond))))
        position = {item: i for i, item in enumerate(items)}
        for scale, members in scales.items():
            omega[scale] = model_omega(fit_result, [position[item] for item in members],
                                       confidence_level=confidence_level)
        if totals:
            total, subscales = next(iter(totals.items()))
            bifactor = bifactor_indices(
                fit_result, factors.index(total), {s: factors.index(s) for s in subscales},
                [position[item] for item in scales[total]],
                {s: [position[item] for item in scales[s]] for s in subscales})
    elif not any(n.code.startswith("not-identified") for n in notes):
        notes.append(note("model-not-fitted", model=name))
    if not fit_result.converged and fit_result.identified and not any(n.code == "not-converged" for n in notes):
        notes.append(note("not-converged", iterations=fit_result.iterations))
    return ConfirmedModel(
        name=name, structure=structure, indices=indices, items=items, factors=factors, loadings=loadings,
        loading_se=loading_se, residual_variances=residual_variances, factor_correlations=correlations,
        factor_correlation_ci=correlation_ci, residual_correlations=largest_residual_correlations(fit_result),
        modification_hints=modification_hints(fit_result) if hints else [], omega=omega, bifactor=bifactor,
        converged=fit_result.converged, identified=fit_result.identified, verdict=fit_verdict(indices, name),
        notes=tuple(n if n.values.get("model") else Note(n.code, {"model": name, **n.values}) for n in notes),
        unavailable=tuple(Note(n.code, {**n.values, "model": name})
                          for n in (*fit_indices_not_computable(indices, fitted=fit_result.fitted),
                                    *([] if fit_result.fitted else [not_computable("omega", "model-not-fitted")]))))
