"""Measurement invariance of every scale (and the whole file) across the levels of subgroup columns."""
from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import replace
from typing import TYPE_CHECKING, Any

from ..concurrency import map_in_threads, one_blas_thread
from .confirm import WHOLE_FILE, ConfirmAnalysis, keyed_covariance

if TYPE_CHECKING:
    import numpy as np

    from ..responses import Responses
    from ..spec_model import ScaleSpec
    from ..stats.cfa_model import CfaModel
    from ..stats.invariance import InvarianceResult
    from ..stats.subgroups import SubgroupSplit


def analyse_invariance(spec: ScaleSpec, responses: Responses, analysis: ConfirmAnalysis, *, by: Sequence[str],
                       min_group: int = 30, pairwise: bool = False, strict: bool = False,
                       confidence_level: float = 0.95, whole_file: bool = True) -> ConfirmAnalysis:
    """``analysis`` with ``invariance.<column>.<scale>`` filled in.

    A level is left out (and named) when it has fewer than ``min_group`` respondents, or fewer
    respondents with usable answers than the free parameters of one group's configural model.
    """
    from ..stats.cfa_model import factor_model, scale_file_structure
    from ..stats.subgroups import split_by

    memberships = {name: tuple(scale.items) for name, scale in spec.scales.items()}
    targets: dict[str, CfaModel] = {name: factor_model({name: items}) for name, items in memberships.items()}
    if whole_file and len(memberships) >= 2:
        membership, orthogonal, _ = scale_file_structure(memberships)
        targets[WHOLE_FILE] = factor_model(membership, orthogonal=orthogonal)
    results: dict[str, dict[str, InvarianceResult]] = {}
    for column in by:
        split = split_by(responses.column(column), min_size=min_group, column=column)

        def levels_of(name: str, split: SubgroupSplit = split) -> Iterable[tuple[str, Any]]:
            return ((level, keyed_covariance(spec, responses, targets[name].items, pairwise=pairwise, rows=rows))
                    for level, rows in split.levels.items())

        results[column] = invariance_of_targets(targets, levels_of, too_small=split.too_small, min_group=min_group,
                                                column=column, strict=strict, confidence_level=confidence_level)
    return replace(analysis, invariance=results)


def invariance_of_targets(targets: Mapping[str, CfaModel],
                          levels_of: Callable[[str], Iterable[tuple[str, Any]]], *, too_small: dict[str, int],
                          min_group: int, column: str, strict: bool = False,
                          confidence_level: float = 0.95) -> dict[str, InvarianceResult]:
    """:func:`invariance_across_levels` of every target model across one column's levels, the targets side by
    side on threads (each with one BLAS thread: their matrices are small). ``levels_of(name)`` gives the
    ``(level, keyed covariance)`` pairs of the target ``name``, from the rows or from summaries."""
    def one(name: str) -> InvarianceResult:
        return invariance_across_levels(targets[name], levels_of(name), too_small=too_small, min_group=min_group,
                                        name=name, column=column, strict=strict, confidence_level=confidence_level)

    names = list(targets)
    with one_blas_thread():
        return dict(zip(names, map_in_threads(one, names), strict=True))


def invariance_across_levels(base: CfaModel, level_covariances: Iterable[tuple[str, Any]], *,
                             too_small: dict[str, int], min_group: int, name: str, column: str,
                             strict: bool = False, confidence_level: float = 0.95) -> InvarianceResult:
    """Invariance of ``base`` across the levels given as ``(level, keyed covariance)`` pairs.

    A level is left out (and named with its usable rows, beside ``too_small``) when it has fewer usable rows
    than ``min_group`` or than the free parameters of one group's configural model.
    """
    from ..stats.invariance import measurement_invariance

    per_group = base.n_parameters + len(base.items)  # loadings, covariances, residuals + intercepts
    covs: list[np.ndarray] = []
    ns: list[int] = []
    means: list[np.ndarray] = []
    names: list[str] = []
    left_out = dict(too_small)
    for level, cov in level_covariances:
        if cov.n_used < max(min_group, per_group):
            left_out[level] = int(cov.n_used)
            continue
        covs.append(cov.cov)
        ns.append(cov.n_used)
        means.append(cov.means)
        names.append(level)
    # the search for partial invariance refits the model once per item and round: per scale only
    return measurement_invariance(base, covs, ns, means, names, name=name, column=column, strict=strict,
                                  left_out=left_out, confidence_level=confidence_level,
                                  partial_search=name != WHOLE_FILE)


def invariance_by_scale(spec: ScaleSpec, responses: Responses, *, by: Sequence[str],
                        min_group: int = 30) -> dict[str, dict[str, InvarianceResult]]:
    """``column -> scale -> InvarianceResult`` of each scale's one-factor model (what ``compare`` shows)."""
    empty = ConfirmAnalysis(models={}, observed_correlations={}, missing_handling="listwise", n_rows=responses.n)
    return analyse_invariance(spec, responses, empty, by=by, min_group=min_group, whole_file=False).invariance
