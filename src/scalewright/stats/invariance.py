"""Measurement invariance across groups: configural, metric, scalar and strict multi-group models.

Steps are compared by the likelihood-ratio test and by the changes in CFI and RMSEA, judged against the
cut-offs of Chen (2007, Struct. Eq. Modeling 14:464-504): a step holds when CFI drops by no more than .010
and RMSEA rises by no more than .015 (conventions, not tests; with large samples the LR test rejects
trivial differences, so it is reported but the verdict follows the changes in fit). The configural model
holds when it meets at least two of the three cut-offs of Hu & Bentler (1999). RMSEA with G groups is
multiplied by sqrt(G) (Steiger 1998).
"""
from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import special

from ..errors import UsageError
from ..notes import Note, note
from ..results import ResultMixin, to_jsonable
from .cfa_fit import CfaFit, fit
from .cfa_fit_indices import FitIndices, fit_indices
from .cfa_model import CfaModel, multigroup_model
from .cfa_result import CUTOFFS, fit_indices_not_computable

#: Chen (2007): the largest drop of CFI and rise of RMSEA for a step to hold (conventions, not tests)
DELTA_CFI_MIN = -0.010
DELTA_RMSEA_MAX = 0.015
IDENTIFICATION = {
    "configural": "every group: factor variances 1, factor means 0; loadings, intercepts, residual variances free",
    "metric": "loadings equal; factor variances 1 in the first group, free in the others",
    "scalar": "loadings and intercepts equal; factor means 0 in the first group, free in the others",
    "strict": "loadings, intercepts and residual variances equal",
    "partial_scalar": "as scalar, with the intercepts listed under 'freed' free in every group",
}


@dataclass(frozen=True)
class InvarianceStep(ResultMixin):
    chi2: float
    df: int
    cfi: float
    rmsea: float
    srmr: float
    converged: bool


@dataclass(frozen=True)
class StepChange(ResultMixin):
    """The change from the previous step: LR test and changes in CFI and RMSEA, and whether it holds."""

    delta_chi2: float
    delta_df: int
    pvalue: float
    delta_cfi: float
    delta_rmsea: float
    holds: bool | None


@dataclass(frozen=True)
class InvarianceResult:
    """Invariance of one scale (or the whole file) across the levels of one column."""

    name: str
    column: str
    levels: dict[str, int]
    left_out: dict[str, int]
    steps: dict[str, InvarianceStep]
    changes: dict[str, StepChange]
    level: str | None
    freed: list[dict[str, str]]
    partial_scalar: bool | None
    latent_mean_differences: dict[str, dict[str, dict[str, Any]]]
    observed_differences: dict[str, dict[str, float]]
    notes: tuple[Note, ...] = field(default=())
    #: not-computable notes of the steps' fit indices left NaN: in the JSON only (a dash says it in the tables)
    unavailable: tuple[Note, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {step: value.to_dict() for step, value in self.steps.items()}
        out.update({
            "levels": dict(self.levels), "too_small": dict(self.left_out),
            "steps": {step: change.to_dict() for step, change in self.changes.items()},
            "level": self.level, "freed": list(self.freed), "partial_scalar": self.partial_scalar,
            "latent_mean_differences": to_jsonable(self.latent_mean_differences),
            "observed_differences": to_jsonable(self.observed_differences),
            "identification": {step: IDENTIFICATION[step] for step in self.steps},
            "conventions": {"delta_cfi_min": DELTA_CFI_MIN, "delta_rmsea_max": DELTA_RMSEA_MAX,
                            "rmsea": "multi-group RMSEA multiplied by sqrt(number of groups) (Steiger 1998)"},
            "notes": [n.to_dict() for n in (*self.notes, *self.unavailable)]})
        return out


def _step(indices: FitIndices, result: CfaFit) -> InvarianceStep:
    return InvarianceStep(chi2=indices.chi2, df=indices.df, cfi=indices.cfi, rmsea=indices.rmsea,
                          srmr=indices.srmr, converged=result.converged)


def step_change(before: FitIndices, after: FitIndices) -> StepChange:
    """LR test of the added constraints and the changes in CFI and RMSEA, judged by Chen's (2007) cut-offs."""
    delta_chi2, delta_df = after.chi2 - before.chi2, after.df - before.df
    pvalue = float(special.chdtrc(delta_df, max(delta_chi2, 0.0))) if delta_df > 0 else math.nan
    # a saturated model (df 0) reproduces the data exactly: its RMSEA is 0 for the comparison
    before_rmsea = 0.0 if before.df == 0 and math.isfinite(before.chi2) else before.rmsea
    delta_cfi, delta_rmsea = after.cfi - before.cfi, after.rmsea - before_rmsea
    known = math.isfinite(delta_cfi) and math.isfinite(delta_rmsea)
    holds = (delta_cfi >= DELTA_CFI_MIN and delta_rmsea <= DELTA_RMSEA_MAX) if known else None
    return StepChange(delta_chi2=delta_chi2, delta_df=delta_df, pvalue=pvalue, delta_cfi=delta_cfi,
                      delta_rmsea=delta_rmsea, holds=holds)


def _configural_holds(indices: FitIndices) -> bool:
    if indices.df == 0 and math.isfinite(indices.chi2):
        return True
    met = [indices.cfi >= CUTOFFS["cfi"], indices.rmsea <= CUTOFFS["rmsea"], indices.srmr <= CUTOFFS["srmr"]]
    return sum(met) >= 2


def _fit_level(base: CfaModel, data: tuple, level: str, free_intercepts: Sequence[str] = ()) \
        -> tuple[CfaFit, FitIndices]:
    covs, ns, means = data
    model = multigroup_model(base, len(covs), level, free_intercepts=free_intercepts)
    result = fit(covs, ns, model, means=means)
    return result, fit_indices(result)


def _latent_means(result: CfaFit, level_names: Sequence[str], confidence_level: float) -> dict:
    """Factor means of groups 2..G against the first (its mean 0, variance 1: standard-deviation units)."""
    z = float(special.ndtri(0.5 + confidence_level / 2))
    out: dict[str, dict[str, dict[str, Any]]] = {}
    se = result.standard_errors
    for g in range(1, result.model.n_groups):
        index = result.model.groups[g].factor_mean_index
        if index is None:
            raise UsageError("latent means need a model with a mean structure")
        out[level_names[g]] = {}
        for j, factor in enumerate(result.model.factors):
            value, error = result.theta[index[j]], se[index[j]]
            out[level_names[g]][factor] = {"value": float(value), "se": float(error),
                                           "ci": (float(value - z * error), float(value + z * error)),
                                           "against": level_names[0]}
    return out


def observed_differences(base: CfaModel, covs: Sequence[np.ndarray], means: Sequence[np.ndarray],
                         level_names: Sequence[str]) -> dict[str, dict[str, float]]:
    """Per factor: raw sum score mean of each level minus the first level's, in the first level's score SD."""
    out: dict[str, dict[str, float]] = {level_names[g]: {} for g in range(1, len(means))}
    for factor, members in base.membership().items():
        ones = np.isin(np.array(base.items), members).astype(float)
        reference_mean, reference_variance = ones @ means[0], float(ones @ covs[0] @ ones)
        for g in range(1, len(means)):
            difference = float(ones @ means[g] - reference_mean)
            usable = reference_variance > 0 and math.isfinite(difference)
            out[level_names[g]][factor] = difference / math.sqrt(reference_variance) if usable else math.nan
    return out


def measurement_invariance(base: CfaModel, covs: Sequence[np.ndarray], ns: Sequence[int],
                           means: Sequence[np.ndarray], level_names: Sequence[str], *, name: str, column: str,
                           strict: bool = False, left_out: dict[str, int] | None = None,
                           confidence_level: float = 0.95, partial_search: bool = True) -> InvarianceResult:
    """Configural, metric, scalar (and strict) models of ``base`` across groups, with the verdict.

    ``covs`` are covariance matrices with divisor n - 1, one per level, with their ``ns`` and ``means``.
    When scalar invariance fails after metric holds, intercepts are freed one at a time (each time the
    one whose freeing lowers chi-square most: the likelihood-ratio counterpart of the score test), up to
    half of the items, until partial scalar invariance holds (``partial_search=False`` skips that search,
    with a note: each round refits the model once per item).
    """
    notes: list[Note] = []
    left_out = dict(left_out or {})
    levels = dict(zip(level_names, (int(n) for n in ns), strict=True))
    if len(covs) < 2:
        return InvarianceResult(name=name, column=column, levels=levels, left_out=left_out, steps={}, changes={},
                                level=None, freed=[], partial_scalar=None, latent_mean_differences={},
                                observed_differences={},
                                notes=(note("too-few-levels", model=name, column=column, levels=len(covs)),))
    data = (list(covs), list(ns), list(means))
    order = ["configural", "metric", "scalar"] + (["strict"] if strict else [])
    fits: dict[str, tuple[CfaFit, FitIndices]] = {step: _fit_level(base, data, step) for step in order}
    for step, (result, _) in fits.items():
        notes += [Note(n.code, {"model": name, "step": step, **n.values}) for n in result.notes]
    steps = {step: _step(indices, result) for step, (result, indices) in fits.items()}
    changes = {after: step_change(fits[before][1], fits[after][1]) for before, after in zip(order, order[1:], strict=False)}
    level: str | None = "configural" if _configural_holds(fits["configural"][1]) else "none"
    if level == "configural":
        for step in order[1:]:
            if not changes[step].holds:
                break
            level = step
    freed: list[dict[str, str]] = []
    partial: bool | None = None
    mean_model = fits["scalar"][0] if level in ("scalar", "strict") else None
    if level == "metric" and not partial_search:
        notes.append(note("partial-search-skipped", model=name, column=column))
    elif level == "metric":
        partial = False
        free_items: list[str] = []
        metric_indices = fits["metric"][1]
        for _ in range(len(base.items) // 2):
            trials = [(item, *_fit_level(base, data, "scalar", [*free_items, item]))
                      for item in base.items if item not in free_items]
            item, result, indices = min(trials, key=lambda trial: trial[2].chi2)
            free_items.append(item)
            freed.append({"item": item, "parameter": "intercept"})
            if step_change(metric_indices, indices).holds:
                partial, mean_model = True, result
                changes["partial_scalar"] = step_change(metric_indices, indices)
                steps["partial_scalar"] = _step(indices, result)
                break
    latent = _latent_means(mean_model, level_names, confidence_level) if mean_model is not None else {}
    unavailable = tuple(Note(n.code, {**n.values, "model": name, "step": step})
                        for step, (result, indices) in fits.items()
                        for n in fit_indices_not_computable(indices, fitted=result.fitted)
                        if n.values["statistic"] in ("chi2", "cfi", "rmsea", "srmr"))
    return InvarianceResult(
        name=name, column=column, levels=levels, left_out=left_out,
        steps=steps, changes=changes, level=level, freed=freed, partial_scalar=partial,
        latent_mean_differences=latent, observed_differences=observed_differences(base, covs, means, level_names),
        notes=tuple([verdict_note(name, column, level, partial, freed), *notes]), unavailable=unavailable)


def verdict_note(name: str, column: str, level: str | None, partial: bool | None, freed: list[dict[str, str]]) \
        -> Note:
    """``invariance-<level>`` (``invariance-partial-scalar`` when freeing intercepts made scalar hold)."""
    code = "invariance-partial-scalar" if partial else f"invariance-{level}"
    return note(code, model=name, column=column, items=tuple(f["item"] for f in freed))
