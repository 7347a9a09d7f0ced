"""Dimensionality: sampling adequacy (KMO), Bartlett's sphericity test, parallel analysis, and how the
factors of an exploratory factor analysis line up with the intended scales.

Every statistic is a function of n and the item correlation matrix of the complete cases. KMO and Bartlett
(:mod:`scalewright.stats.adequacy`) and parallel analysis (:mod:`scalewright.stats.parallel`) are written in the
project; the factor model comes from factor_analyzer through :mod:`scalewright.stats.factoring`.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import DataError, UsageError
from ..notes import note
from .adequacy import (
    BartlettResult,
    KMOResult,
    bartlett_sphericity,
    complete_cases,
    correlation_of,
    kmo,
    log_determinant,
)
from .factor_matching import assign_factors_to_scales, loading_flags
from .factoring import fit_factors
from .parallel import (
    DEFAULT_SEED,
    parallel_analysis,
)
from .structure_results import (
    MAX_CROSS_LOADING,
    MIN_EIGEN_RATIO,
    MIN_KMO,
    MIN_LOADING,
    StructureFlag,
    StructureResult,
    UnidimensionalityResult,
)
from .unidimensionality import unidimensionality_of_correlation

if TYPE_CHECKING:
    from .item_covariance import ItemCovariance

__all__ = ["StructureResult", "analyse_structure"]


# --------------------------------------------------------------------------- the whole analysis

def _ledermann_bound(p: int) -> int:
    """Largest number of factors with non-negative degrees of freedom: (p - m)^2 >= p + m."""
    m = 0
    while m + 1 < p and (p - (m + 1)) ** 2 >= p + (m + 1):
        m += 1
    return m


def _validate_names(keyed: np.ndarray, item_names: Sequence[str], item_scale: Mapping[str, str]) -> None:
    if keyed.ndim != 2:
        raise DataError(f"expected a respondents x items matrix, got an array with {keyed.ndim} dimension(s)")
    if len(item_names) != keyed.shape[1]:
        raise DataError(f"{len(item_names)} item name(s) given for a matrix of {keyed.shape[1]} column(s)")
    duplicates = sorted({name for name in item_names if list(item_names).count(name) > 1})
    if duplicates:
        raise DataError(f"item(s) {', '.join(duplicates)} appear more than once in the item matrix; "
                        "an item shared by several scales must be one column")
    unknown = [name for name in item_names if name not in item_scale]
    if unknown:
        raise DataError(f"item(s) {', '.join(unknown)} have no scale in item_scale")


def analyse_structure(keyed_matrix: np.ndarray | None, *, item_names: Sequence[str], item_scale: Mapping[str, str],
                      scale_items: Mapping[str, Sequence[str]] | None = None,
                      n_factors: int | str | None = None, rotation: str = "oblimin", method: str = "minres",
                      seed: int | np.random.Generator | None = DEFAULT_SEED, iterations: int = 100,
                      percentile: float = 95.0, min_loading: float = MIN_LOADING,
                      max_cross_loading: float = MAX_CROSS_LOADING, correlation: np.ndarray | None = None,
                      correlation_type: str = "pearson", correlation_notes: Sequence[Any] = (),
                      missing: str = "listwise", covariance: ItemCovariance | None = None,
                      missing_block: Any = None) -> StructureResult:
    """KMO, Bartlett, parallel analysis, an EFA and the loadings laid against the intended scales.

    Parameters
    ----------
    keyed_matrix : (n, p) array
        Keyed item answers (reverse items already reversed), NaN for missing; each item once.
    item_names : sequence of str
        Column names of ``keyed_matrix``.
    item_scale : mapping item -> scale
        The scale each item is meant to measure (for an item in a total and a subscale: the subscale).
        Factors are matched to these scales.
    scale_items : mapping scale -> items, optional
        Scales for the per-scale unidimensionality summary (may overlap, e.g. a total and its subscales).
        Default: the scales of ``item_scale``.
    n_factors : int, "scales" or None
        None: parallel analysis' suggestion (at least 1); "scales": the number of scales in ``item_scale``.
    rotation, method : str
        See :func:`scalewright.stats.factoring.fit_factors`.
    seed, iterations, percentile
        Parallel analysis settings.
    min_loading, max_cross_loading : float
        Thresholds of the ``weak-loading`` and ``cross-loading`` flags (common practice, no source).
    correlation, correlation_type, correlation_notes
        An item correlation matrix (of ``item_names``, over the same complete rows) to analyse instead of
        the Pearson correlations, e.g. polychoric ones, its name and notes (:class:`~scalewright.notes.Note`).
        Left without the items that are dropped, it is smoothed again if it is not positive definite.
    missing : {"listwise", "pairwise", "em"}
        How missing answers are handled (see Notes).
    covariance : ItemCovariance, optional
        The covariance of the keyed items by the ``missing`` method (from merged summaries, see
        ``scalewright.summaries``: listwise or pairwise cross-products, or the EM estimate with n the
        respondents answering at least one item) in place of ``keyed_matrix`` (then None): every statistic
        here is a function of it, n and the rows counted. With ``correlation`` (polychoric), the covariance
        gives n and the items without variance, as the rows would.
    missing_block : MissingHandling, optional
        With ``covariance``: the missing-data block of the result (made by the caller from the merged
        per-pattern statistics); None leaves the result without one.

    Returns
    -------
    StructureResult

    Notes
    -----
    Listwise (default): respondents with any missing answer are set aside and counted. Pairwise: each
    correlation from the respondents who answered both items; n is the smallest pair count. EM: the
    correlations of the maximum-likelihood covariance matrix of every item together
    (:func:`scalewright.stats.em.em_means_and_covariance`); n is the number of respondents who answered at
    least one item. Items with no variance among the rows used are left out and flagged.
    """
    if covariance is not None:  # sufficient statistics (merged summaries) instead of the rows
        from .missing import check_method

        check_method(missing)
        keyed_matrix = np.empty((0, covariance.k))
    keyed = np.asarray(keyed_matrix, dtype=float)
    supplied = None if correlation is None else np.asarray(correlation, dtype=float)
    item_names = [str(name) for name in item_names]
    _validate_names(keyed, item_names, item_scale)
    if supplied is not None and supplied.shape != (len(item_names), len(item_names)):
        raise DataError(f"a correlation matrix of shape {supplied.shape} given for {len(item_names)} items")
    if not 0 < min_loading <= 1 or not 0 < max_cross_loading <= 1:
        raise UsageError("loading thresholds must lie between 0 and 1")
    scales = list(dict.fromkeys(item_scale[name] for name in item_names))
    if scale_items is None:
        scale_items = {scale: [name for name in item_names if item_scale[name] == scale] for scale in scales}
    if isinstance(n_factors, str) and n_factors != "scales":
        raise UsageError(f"the number of factors is a whole number or 'scales', not {n_factors!r}")

    notes: list[Any] = []
    flags: list[StructureFlag] = []
    if covariance is None:
        n, set_aside, correlation_all, constant, handling = _correlation_by_method(keyed, missing, item_names)
        n_rows = keyed.shape[0]
    else:
        n, n_rows, handling = covariance.n_used, covariance.n_rows, missing_block
        if missing == "listwise":
            # n_used may be Kish's effective n (survey weights); the rows set aside are counted rows
            set_aside = n_rows - covariance.n_complete
            constant = ~(np.diag(covariance.cov) > 0) if n >= 2 else np.ones(len(item_names), dtype=bool)
            correlation_all = _correlation_of_covariance(covariance.cov, constant)
        else:  # as _correlation_by_method: pairwise sets no one aside, EM those without any answer
            from .item_covariance import correlation_from_cov

            set_aside = n_rows - n if missing == "em" else 0
            constant = ~(np.diag(covariance.cov) > 0)
            correlation_all = correlation_from_cov(covariance.cov)
    if set_aside and missing == "listwise":
        notes.append(note("listwise-set-aside", set_aside=int(set_aside), n_rows=int(n_rows)))
    dropped = [name for name, c in zip(item_names, constant, strict=True) if c]
    for name in dropped:
        flags.append(StructureFlag(name, "no-variance", "", item_scale[name]))
    if dropped:
        notes.append(note("items-left-out", count=len(dropped), items=tuple(dropped)))
    kept = [i for i, c in enumerate(constant) if not c]
    items = tuple(item_names[i] for i in kept)
    p = len(items)

    def empty(reason: Any) -> StructureResult:
        return StructureResult(items=items, item_scale={i: item_scale[i] for i in items}, n_used=n,
                               n_set_aside=set_aside, kmo=KMOResult(None, np.full(p, np.nan)),
                               bartlett=BartlettResult(None, p * (p - 1) // 2, None, n), parallel=None,
                               solution=None, n_factors_rule="none", factor_for_scale={s: None for s in scales},
                               unidimensionality={}, flags=tuple(flags), notes=tuple(notes + [reason]),
                               min_loading=min_loading, max_cross_loading=max_cross_loading,
                               dropped_items=tuple(dropped), correlation_type=correlation_type,
                               correlation_notes=tuple(correlation_notes), missing=handling)

    if n < 3:
        return empty(note("structure-too-few-respondents", n=int(n), needed=3))
    if p < 2:
        return empty(note("structure-too-few-items", p=p))

    correlation_notes = list(correlation_notes)
    if supplied is None:
        correlation = correlation_all[np.ix_(kept, kept)]
        if not np.isfinite(correlation).all():
            return empty(note("correlations-incomplete"))
    else:
        from .polychoric_matrix import smoothed_if_needed

        correlation, smoothing = smoothed_if_needed(supplied[np.ix_(kept, kept)])
        if smoothing is not None:
            correlation_notes.append(smoothing)
    sampling = kmo(correlation)
    sphericity = bartlett_sphericity(correlation, n)
    notes.extend(sampling.notes)
    notes.extend(sphericity.notes)
    if sampling.overall is not None and sampling.overall < MIN_KMO:
        notes.append(note("low-kmo-overall", kmo=float(sampling.overall), cutoff=MIN_KMO))
    for name, value in zip(items, sampling.per_item, strict=True):
        if np.isfinite(value) and value < MIN_KMO:
            flags.append(StructureFlag(name, "low-kmo", "", item_scale[name],
                                       values={"kmo": float(value), "cutoff": MIN_KMO}))
    if sphericity.p is not None and sphericity.p >= 0.05:
        notes.append(note("bartlett-not-rejected", pvalue=float(sphericity.p), alpha=0.05))
    parallel = parallel_analysis(correlation, n, iterations=iterations, percentile=percentile, seed=seed)

    singular = log_determinant(correlation) is None or n <= p
    bound = _ledermann_bound(p)
    if n_factors is None:
        chosen = max(1, parallel.suggested_factors)
        rule = "parallel analysis"
        if parallel.suggested_factors == 0:
            notes.append(note("parallel-no-factor"))
    elif n_factors == "scales":
        chosen = len(scales)
        rule = "number of scales"
    else:
        if isinstance(n_factors, bool) or not isinstance(n_factors, (int, np.integer)) or n_factors < 1:
            raise UsageError(f"the number of factors must be a whole number of at least 1, not {n_factors!r}")
        chosen = int(n_factors)
        rule = "requested"
        if chosen >= p:
            raise UsageError(f"{chosen} factor(s) cannot be extracted from {p} item(s); ask for fewer than {p}")
    if chosen > max(bound, 1):
        if rule == "requested":
            notes.append(note("factors-not-unique", n_factors=chosen, bound=bound, p=p))
        else:
            notes.append(note("factors-reduced", n_factors=chosen, rule=rule, bound=bound, p=p, fitted=max(bound, 1)))
            chosen = max(bound, 1)
    if chosen >= p:
        chosen = p - 1

    solution = None
    mapping: dict[str, int | None] = {scale: None for scale in scales}
    if singular:
        notes.append(note("correlation-singular", n=int(n), p=p))
    else:
        solution = fit_factors(correlation, chosen, method=method, rotation=rotation)
        notes.extend(solution.notes)
        for i in solution.heywood_items:
            flags.append(StructureFlag(items[i], "heywood-case", "", item_scale[items[i]]))
        own_scales = [item_scale[name] for name in items]
        present_scales = list(dict.fromkeys(own_scales))
        mapping.update(assign_factors_to_scales(solution.loadings, own_scales, present_scales))
        unmatched = [s for s in present_scales if mapping[s] is None]
        if unmatched:
            notes.append(note("scales-without-factor", n_factors=chosen, n_scales=len(present_scales),
                              scales=tuple(unmatched)))
        spare = sorted(set(range(chosen)) - {j for j in mapping.values() if j is not None})
        if spare:
            notes.append(note("factors-without-scale", factors=tuple(f"F{j + 1}" for j in spare)))
        flags.extend(loading_flags(solution.loadings, items, own_scales, mapping, min_loading=min_loading,
                                   max_cross_loading=max_cross_loading))

    per_scale: dict[str, UnidimensionalityResult] = {}
    positions = {name: i for i, name in enumerate(items)}
    for scale, members in scale_items.items():
        columns = [positions[name] for name in members if name in positions]
        missing_members = [name for name in members if name not in positions and name not in dropped]
        if missing_members:
            raise DataError(f"scale {scale}: item(s) {', '.join(missing_members)} are not in the item matrix")
        sub = correlation[np.ix_(columns, columns)]
        summary = unidimensionality_of_correlation(sub, n, method=method, n_set_aside=set_aside)
        per_scale[scale] = summary
        if summary.eigen_ratio is not None and summary.eigen_ratio < MIN_EIGEN_RATIO:
            flags.append(StructureFlag(None, "several-dimensions", "", scale,
                                       values={"eigen_ratio": float(summary.eigen_ratio), "cutoff": MIN_EIGEN_RATIO}))
    return StructureResult(items=items, item_scale={name: item_scale[name] for name in items}, n_used=n,
                           n_set_aside=set_aside, kmo=sampling, bartlett=sphericity, parallel=parallel,
                           solution=solution, n_factors_rule=rule, factor_for_scale=mapping,
                           unidimensionality=per_scale, flags=tuple(flags), notes=tuple(notes),
                           min_loading=min_loading, max_cross_loading=max_cross_loading, dropped_items=tuple(dropped),
                           correlation=correlation, correlation_type=correlation_type,
                           correlation_notes=tuple(correlation_notes), missing=handling)


def _correlation_of_covariance(cov: np.ndarray, constant: np.ndarray) -> np.ndarray:
    """Correlations of the items with variance (NaN for the others) from a covariance matrix."""
    p = cov.shape[0]
    correlation = np.full((p, p), np.nan)
    kept = ~constant
    if kept.any():
        kept_cov = cov[np.ix_(kept, kept)]
        scale = 1.0 / np.sqrt(np.diag(kept_cov))
        part = kept_cov * np.outer(scale, scale)
        np.clip(part, -1, 1, out=part)  # as numpy.corrcoef does
        np.fill_diagonal(part, 1.0)
        correlation[np.ix_(kept, kept)] = part
    return correlation


def _correlation_by_method(keyed: np.ndarray, missing: str,
                           item_names: Sequence[str]) -> tuple[int, int, np.ndarray, np.ndarray, Any]:
    """(n used, respondents set aside, correlation matrix, items without variance, MissingHandling)."""
    from .em import em_means_and_covariance
    from .item_covariance import correlation_from_cov, item_covariance
    from .missing import check_method, missing_handling
    from .missing_patterns import PatternSummary

    check_method(missing)
    summary = PatternSummary.from_values(keyed)
    p = keyed.shape[1]
    estimate = None
    if missing == "listwise":
        complete, set_aside = complete_cases(keyed)
        n = complete.shape[0]
        constant = np.ptp(complete, axis=0) == 0 if n else np.ones(p, dtype=bool)
        correlation = np.full((p, p), np.nan)
        if n:
            kept = ~constant
            correlation[np.ix_(kept, kept)] = correlation_of(complete[:, kept]) if kept.sum() > 1 else 1.0
    else:
        if missing == "em":
            estimate = em_means_and_covariance(summary)
            cov, n = estimate.cov, summary.n_used
        else:
            stats = item_covariance(keyed, pairwise=True)
            cov, n = stats.cov, stats.n_used
        set_aside = keyed.shape[0] - n if missing == "em" else 0
        variances = np.diag(cov)
        constant = ~(variances > 0)
        correlation = correlation_from_cov(cov)
    handling = missing_handling(summary, missing, n_used=n, estimate=estimate, scope="file",
                                item_names=tuple(item_names))
    return int(n), int(set_aside), correlation, constant, handling
