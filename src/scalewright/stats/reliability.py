"""Reliability and item analysis of one scale, as functions of n and the item covariance matrix.

Every statistic here is a function of sufficient statistics (row count and covariance matrix), so it gives
the same answer whether the matrix came from one array, from chunks of a large file or from a distributed
engine. :func:`scale_reliability` is the one entry point that starts from the keyed item matrix;
:func:`reliability_from_cov` the one that starts from a covariance matrix. The coefficients live in
:mod:`.reliability_coefficients`, the item statistics in :mod:`.item_analysis`, the flags in
:mod:`.reliability_flags` and the subgroup comparisons in :mod:`.reliability_groups`.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..answer_codes import ItemAnswers
from ..errors import DataError
from ..notes import Note, not_computable, note, notes_to_json
from ..results import ResultMixin
from .bootstrap import AlphaBootstrap
from .item_analysis import (
    ItemDescriptives,
    ItemStatistics,
    alpha_if_deleted_from_cov,
    alpha_with_item_reversed_from_cov,
    item_descriptives,
    item_descriptives_from_tally,
    item_rest_correlations_from_cov,
)
from .item_covariance import correlation_from_cov, is_invertible
from .missing import MissingHandling
from .reliability_coefficients import (
    as_cov_matrix,
    cronbach_alpha_from_cov,
    feldt_alpha_ci,
    guttman_lambda2_from_cov,
    guttman_lambda6_from_cov,
    inter_item_correlations,
    standardized_alpha_from_cov,
)
from .reliability_flags import DEFAULT_THRESHOLDS, ReliabilityFlag, ReliabilityThresholds, reliability_flags

#: the scale-level statistics of :class:`ScaleReliability` that a not-computable note may name
_STATISTICS = ("alpha", "alpha_ci", "alpha_standardized", "omega_total", "lambda2", "lambda6", "mean_inter_item_r",
               "min_inter_item_r", "max_inter_item_r")


def _unavailable_reasons(*, k: int, n_used: int, complete: bool, constant: bool, alpha: float, singular: bool,
                         fitted: bool, has_descriptives: bool) -> dict[str, str]:
    """Why each statistic of :func:`reliability_from_cov` would be NaN, as a reason code by its JSON key."""
    everything = (*_STATISTICS, "item_rest_r", "alpha_if_deleted", "omega_if_deleted", "loading")
    if k < 2:
        return dict.fromkeys(everything, "fewer-than-2-items")
    if n_used < 3:
        return dict.fromkeys(everything, "fewer-than-3-rows")
    if not complete:
        return dict.fromkeys(everything, "incomplete-covariance")
    reasons = dict.fromkeys(("sd", "mean", "missing_pct", "floor_pct", "ceiling_pct"),
                            "fewer-than-2-answers" if has_descriptives else "item-answers-not-given")
    if not math.isfinite(alpha):
        reasons.update(dict.fromkeys(("alpha", "alpha_ci"), "no-variance"))
    if constant:
        reasons.update(dict.fromkeys(("item_rest_r", "alpha_standardized", "mean_inter_item_r", "min_inter_item_r",
                                      "max_inter_item_r", "lambda6"), "no-variance"))
    factor_reason = ("fewer-than-3-items" if k < 3 else "no-variance" if constant else
                     "singular-covariance" if singular else "" if fitted else "one-factor-fit-failed")
    if singular:
        reasons["lambda6"] = "singular-covariance"
    if factor_reason:
        reasons.update(dict.fromkeys(("omega_total", "loading"), factor_reason))
    reasons["omega_if_deleted"] = factor_reason or ("fewer-than-4-items" if k < 4 else "one-factor-fit-failed")
    return reasons


@dataclass(frozen=True)
class ScaleReliability(ResultMixin):
    """Reliability and item analysis of one scale in one sample (the contract block ``scales.<name>``)."""

    n_rows: int
    n_used: int
    n_set_aside: int
    k: int
    missing_handling: str
    confidence_level: float
    alpha: float
    alpha_ci: tuple[float, float]
    alpha_standardized: float
    omega_total: float
    omega_method: str | None
    omega_converged: bool | None
    heywood_items: tuple[str, ...]
    lambda2: float
    lambda6: float
    mean_inter_item_r: float
    min_inter_item_r: float
    max_inter_item_r: float
    items: dict[str, ItemStatistics]
    flags: tuple[ReliabilityFlag, ...]
    thresholds: ReliabilityThresholds
    bootstrap: AlphaBootstrap | None
    notes: tuple[Note, ...]  # codes with values, worded by present/messages
    missing: MissingHandling | None = None
    #: why a statistic is NaN, by its JSON key (see :func:`_unavailable_reasons`); "" when it is not
    unavailable: Mapping[str, str] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        out = super().to_dict()
        out["items"] = {name: item.to_dict() for name, item in self.items.items()}
        out.pop("missing")
        out["notes"] = notes_to_json(self.notes)
        out.pop("unavailable")
        if self.missing is not None:
            out.update(self.missing.to_dict())
            out["notes"] = [*out["notes"], *self.missing.note_dicts]
        out["notes"] = [*out["notes"], *(n.to_dict() for n in self.not_computable_notes(out))]
        return out

    def not_computable_notes(self, out: Mapping[str, Any]) -> list[Note]:
        """A ``not-computable`` note for each statistic that is null in ``out``, naming the items it concerns."""
        found: dict[str, list[str]] = {}
        for key, value in out.items():
            if key in _STATISTICS and (value is None or (isinstance(value, list) and None in value)):
                found.setdefault(key, [])
        for item, record in out["items"].items():
            for key, value in record.items():
                if value is None:
                    found.setdefault(key, []).append(item)
        return [not_computable(key, self.unavailable.get(key) or "not-finite",
                               **({"items": tuple(items)} if items else {})) for key, items in found.items()]

    def flag_codes(self) -> set[tuple[str | None, str]]:
        return {(flag.item, flag.code) for flag in self.flags}


def deletion_notes(stats: Any, method: str) -> list[Note]:
    """How missing answers were handled, as notes: the pair counts under pairwise deletion, or the rows set
    aside listwise (``stats`` an :class:`~scalewright.stats.item_covariance.ItemCovariance`)."""
    if method == "pairwise":
        return [note("pairwise-deletion", n_min=int(stats.n_used), n_max=int(stats.pair_counts.max()) if stats.k else 0)]
    if method == "listwise" and stats.n_rows > stats.n_used:
        return [note("reliability-listwise-set-aside", set_aside=int(stats.n_rows - stats.n_used),
                     n_rows=int(stats.n_rows))]
    return []


def reliability_from_cov(cov: np.ndarray, n_used: int, *, item_names: Sequence[str],
                         confidence_level: float = 0.95,
                         thresholds: ReliabilityThresholds = DEFAULT_THRESHOLDS,
                         reversed_items: Sequence[str] = (),
                         descriptives: ItemDescriptives | None = None,
                         n_rows: int | None = None, missing_handling: str = "listwise",
                         bootstrap: AlphaBootstrap | None = None,
                         notes: Sequence[Note] = ()) -> ScaleReliability:
    """Every reliability statistic of one scale from its sufficient statistics (n and covariance matrix).

    This is the function to call with a covariance matrix accumulated elsewhere (chunks of a large file,
    a distributed engine). Item descriptives are optional; without them those fields are NaN.
    """
    from .omega import fit_one_factor, omega_if_deleted_from_cov, omega_total_from_fit

    cov = as_cov_matrix(cov)
    k = cov.shape[0]
    names = tuple(str(name) for name in item_names)
    if len(names) != k:
        raise DataError(f"{len(names)} item name(s) given for a {k} x {k} covariance matrix")
    if len(set(names)) != k:
        raise DataError(f"item names must be unique: {', '.join(names)}")
    out_notes: list[Note] = list(notes)
    nan2 = (math.nan, math.nan)
    usable = k >= 2 and n_used >= 3 and np.isfinite(cov).all()
    if k < 2:
        out_notes.append(note("reliability-one-item"))
    elif n_used < 3:
        out_notes.append(note("reliability-too-few-rows", n_used=int(n_used), needed=3))
    elif not np.isfinite(cov).all():
        out_notes.append(note("covariance-incomplete"))
    if not usable:
        cov_used = np.full((k, k), np.nan)
    else:
        cov_used = cov
    variances = np.diag(cov_used)
    constant = [names[j] for j in range(k) if usable and not variances[j] > 0]
    if constant:
        out_notes.append(note("items-no-variance", items=tuple(constant)))
    alpha = cronbach_alpha_from_cov(cov_used) if usable else math.nan
    if usable and not math.isfinite(alpha):
        out_notes.append(note("total-no-variance"))
    singular = usable and not constant and not is_invertible(cov_used)
    if singular:
        out_notes.append(note("covariance-singular"))
    if usable and missing_handling == "pairwise" and np.linalg.eigvalsh(cov_used).min() < -1e-10 * abs(cov_used).max():
        out_notes.append(note("pairwise-not-positive-semidefinite"))
    fit = fit_one_factor(cov_used) if usable and not constant and not singular and k >= 3 else None
    if usable and k == 2:
        out_notes.append(note("omega-needs-three-items"))
    elif fit is not None and k == 3:
        out_notes.append(note("omega-if-deleted-needs-four-items"))
    elif usable and not constant and not singular and k >= 3 and fit is None:
        out_notes.append(note("omega-not-fitted"))
    if fit is not None:
        out_notes.extend(fit.notes)
        if fit.heywood_items:
            out_notes.append(note("omega-heywood", items=tuple(names[j] for j in fit.heywood_items)))
    corr = correlation_from_cov(cov_used)
    mean_r, min_r, max_r = inter_item_correlations(cov_used) if usable else (math.nan,) * 3
    item_rest_r = item_rest_correlations_from_cov(cov_used) if usable else np.full(k, np.nan)
    if_deleted = alpha_if_deleted_from_cov(cov_used) if usable else np.full(k, np.nan)
    # each reduced fit starts afresh from its own squared multiple correlations: a start from the full
    # fit's uniquenesses saved a fifth of the steps but, on small samples with a Heywood case, ended in a
    # worse local optimum in 11 of 105 fits (docs/performance.md)
    omega_deleted = (omega_if_deleted_from_cov(cov_used)
                     if fit is not None and k >= 4
                     else np.full(k, np.nan))
    loadings = fit.standardized_loadings if fit is not None else np.full(k, np.nan)
    alpha_reversed = alpha_with_item_reversed_from_cov(cov_used) if usable else np.full(k, np.nan)
    declared = set(reversed_items)
    items: dict[str, ItemStatistics] = {}
    for j, name in enumerate(names):
        d = descriptives
        items[name] = ItemStatistics(
            name=name, reversed=name in declared,
            n=int(d.n[j]) if d is not None else n_used,
            mean=float(d.mean[j]) if d is not None else math.nan,
            sd=float(d.sd[j]) if d is not None else math.nan,
            missing_pct=float(d.missing_pct[j]) if d is not None else math.nan,
            floor_pct=float(d.floor_pct[j]) if d is not None else math.nan,
            ceiling_pct=float(d.ceiling_pct[j]) if d is not None else math.nan,
            item_rest_r=float(item_rest_r[j]), alpha_if_deleted=float(if_deleted[j]),
            omega_if_deleted=float(omega_deleted[j]), loading=float(loadings[j]),
            counts=dict(d.counts[j]) if d is not None else {})
    flags = reliability_flags(item_names=names, alpha=alpha, item_rest_r=item_rest_r, loadings=loadings,
                              alpha_reversed=alpha_reversed, corr=corr, reversed_items=reversed_items,
                              thresholds=thresholds, cov=cov_used) if usable else ()
    n_rows = n_used if n_rows is None else n_rows
    return ScaleReliability(
        n_rows=n_rows, n_used=n_used, n_set_aside=max(0, n_rows - n_used) if missing_handling == "listwise" else 0,
        k=k, missing_handling=missing_handling, confidence_level=confidence_level, alpha=alpha,
        alpha_ci=feldt_alpha_ci(alpha, n_used, k, confidence_level=confidence_level) if usable else nan2,
        alpha_standardized=standardized_alpha_from_cov(cov_used) if usable else math.nan,
        omega_total=omega_total_from_fit(fit), omega_method=fit.method if fit else None,
        omega_converged=fit.converged if fit else None,
        heywood_items=tuple(names[j] for j in fit.heywood_items) if fit else (),
        lambda2=guttman_lambda2_from_cov(cov_used) if usable else math.nan,
        lambda6=guttman_lambda6_from_cov(cov_used) if usable and not constant else math.nan,
        mean_inter_item_r=mean_r, min_inter_item_r=min_r, max_inter_item_r=max_r,
        items=items, flags=flags, thresholds=thresholds, bootstrap=bootstrap, notes=tuple(out_notes),
        unavailable=_unavailable_reasons(k=k, n_used=n_used, complete=bool(np.isfinite(cov).all()),
                                         constant=bool(constant), alpha=alpha, singular=bool(singular),
                                         fitted=fit is not None, has_descriptives=descriptives is not None))


def scale_reliability(keyed: np.ndarray | ItemAnswers, *, item_names: Sequence[str], low: float, high: float,
                      confidence_level: float = 0.95, pairwise: bool = False,
                      thresholds: ReliabilityThresholds = DEFAULT_THRESHOLDS,
                      reversed_items: Sequence[str] = (), n_resamples: int = 0,
                      seed: int | None = None, missing: str | None = None) -> ScaleReliability:
    """Reliability and item analysis of one scale from its keyed item matrix.

    Parameters
    ----------
    keyed : (n, k) array or ItemAnswers
        Answers after reverse keying, NaN for missing; or the answers as given, as one-byte codes
        (:class:`~scalewright.answer_codes.ItemAnswers`), which this function keys itself. Codes make the
        statistics several times cheaper on large samples; the results are the same up to rounding.
    item_names : sequence of str
        The k item names, in column order.
    low, high : float
        Ends of the answer range (for floor/ceiling shares and the answer counts).
    confidence_level : float
        Coverage of the Feldt (and bootstrap) intervals.
    pairwise : bool
        Pairwise instead of listwise deletion of missing answers.
    thresholds : ReliabilityThresholds
        Cut-offs of the flags.
    reversed_items : sequence of str
        Items that were reverse-keyed (their answer counts are reported on the codes as given).
    n_resamples, seed : int
        Bootstrap resamples (0 = no bootstrap) and the seed of the generator.
    missing : {"listwise", "pairwise", "em"}, optional
        How missing answers are handled; overrides ``pairwise``. ``em``: the maximum-likelihood means and
        covariance matrix under missing at random (EM, :mod:`scalewright.stats.em`), computed from the
        per-pattern sufficient statistics; every reliability statistic comes from that matrix (Enders,
        2003) and ``n_used`` counts the respondents who gave at least one answer.

    Returns
    -------
    ScaleReliability

    Notes
    -----
    Listwise (default): every statistic uses the rows that answered all k items; the others are counted in
    ``n_set_aside``. Pairwise: each covariance uses the rows answering both items and the confidence
    interval uses the smallest pairwise count. Item descriptives use every answer given to the item.
    EM: Feldt's interval with ``n_used``, the respondents who answered at least one item (a note says so:
    with much missing it is too narrow, since the information is less than that many complete rows).
    Whatever the method, the result carries the missingness patterns and Little's MCAR test.

    References
    ----------
    .. [1] Enders, C. K. (2003). Using the expectation maximization algorithm to estimate coefficient
       alpha for scales with item-level missing data. Psychological Methods, 8, 322-337.
    """
    from ..errors import UsageError
    from .bootstrap import bootstrap_alpha
    from .coded import answer_tally, pairwise_covariance
    from .em import em_means_and_covariance
    from .item_covariance import item_covariance
    from .missing import check_method, keyed_estimate, listwise_from_summary, missing_handling
    from .missing_patterns import PatternSummary

    method = check_method(missing or ("pairwise" if pairwise else "listwise"))
    pairwise = method == "pairwise"
    if method == "em" and n_resamples:
        raise UsageError("the bootstrap of alpha is not available with the em method: it would rerun EM on "
                         "every resample; the interval under em is Feldt's (see the note)")

    names = tuple(item_names)
    if isinstance(keyed, ItemAnswers) and keyed.shape[1] != len(names):
        raise DataError(f"{len(names)} item name(s) given for {keyed.shape[1]} column(s)")
    if isinstance(keyed, ItemAnswers) and not (float(low).is_integer() and float(high).is_integer()):
        raise DataError(f"answer codes need a whole-number answer range, got {low} to {high}")
    unknown = set(reversed_items) - set(names)
    if unknown:
        raise DataError(f"reversed items not in the scale: {', '.join(sorted(unknown))}")
    if not low < high:
        raise DataError(f"answer range must have low < high, got {low} and {high}")
    if not 0 < confidence_level < 1:
        raise DataError(f"confidence_level must lie strictly between 0 and 1, got {confidence_level}")
    reversed_mask = np.array([name in set(reversed_items) for name in names], dtype=bool)
    summary = None
    if isinstance(keyed, ItemAnswers) and not n_resamples:
        summary = PatternSummary.from_codes(keyed.codes)
        if pairwise:
            stats = pairwise_covariance(keyed, low=int(low), high=int(high), reversed_mask=reversed_mask)
        else:  # the summary's complete pattern holds the listwise statistics (no second pass over the codes)
            stats = listwise_from_summary(summary, low=int(low), high=int(high), reversed_mask=reversed_mask)
        descriptives = item_descriptives_from_tally(answer_tally(keyed, int(high - low) + 1), n_rows=keyed.shape[0],
                                                    low=low, high=high, reversed_mask=reversed_mask)
        matrix = None
    else:
        if isinstance(keyed, ItemAnswers):  # the bootstrap resamples the keyed values
            keyed = keyed.keyed_values(low=int(low), high=int(high), reversed_mask=reversed_mask)
        stats = item_covariance(keyed, pairwise=pairwise)  # validates the matrix
        matrix = np.asarray(keyed, dtype=np.float64)
        if matrix.shape[1] != len(names):
            raise DataError(f"{len(names)} item name(s) given for {matrix.shape[1]} column(s)")
        descriptives = item_descriptives(matrix, low=low, high=high, reversed_mask=reversed_mask)
        # the answers as given (offsets from low), as the codes route sees them: same numbers
        summary = PatternSummary.from_values(np.where(reversed_mask, high - matrix, matrix - low))
    estimate = None
    cov, n_used = stats.cov, stats.n_used
    if method == "em" and summary.anything_missing:
        estimate = em_means_and_covariance(summary)
        _, cov = keyed_estimate(estimate, lows=np.full(len(names), low), highs=np.full(len(names), high),
                                reversed_mask=reversed_mask, from_codes=True)
        n_used = summary.n_used
    # with nothing missing the EM fixed point is the complete-data estimate: the listwise matrix (its n - 1
    # divisor cancels in every statistic here), so em and listwise agree exactly
    handling = missing_handling(summary, method, n_used=n_used, estimate=estimate, item_names=names)
    notes: list[Note] = list(deletion_notes(stats, method))
    if descriptives.off_level:
        notes.append(note("off-level-answers", count=int(descriptives.off_level), low=float(low), high=float(high)))
    boot = None
    if n_resamples and matrix is not None:  # resampling always takes the float route, which sets the matrix
        boot = bootstrap_alpha(matrix, n_resamples=n_resamples, confidence_level=confidence_level, seed=seed,
                               pairwise=pairwise)
    result = reliability_from_cov(cov, n_used, item_names=names, confidence_level=confidence_level,
                                  thresholds=thresholds, reversed_items=reversed_items, descriptives=descriptives,
                                  n_rows=stats.n_rows, missing_handling=method, bootstrap=boot, notes=notes)
    return replace(result, missing=handling)
