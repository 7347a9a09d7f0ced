"""Specification of confirmatory factor models: which parameters are free, fixed or shared between groups.

A model of ``p`` items and ``m`` factors has, in each group, the matrices of the common factor model

.. math::

    \\Sigma = \\Lambda \\Phi \\Lambda' + \\Theta, \\qquad \\mu = \\nu + \\Lambda \\alpha

with loadings :math:`\\Lambda` (p x m), factor covariances :math:`\\Phi` (m x m), diagonal residual variances
:math:`\\Theta`, and, with a mean structure, intercepts :math:`\\nu` and factor means :math:`\\alpha`. Every entry
of every matrix is either fixed at a value or points to one entry of a shared parameter vector; entries of
several groups pointing to the same entry are held equal (the invariance constraints). Nothing here fits
anything: :mod:`scalewright.stats.cfa_fit` does.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ..errors import UsageError

FIXED = -1
#: kinds of parameters, as named in ``CfaModel.parameters``
KINDS = ("loading", "factor_cov", "residual", "intercept", "factor_mean")
#: invariance levels, each adding constraints to the one before
LEVELS = ("configural", "metric", "scalar", "strict")


@dataclass(frozen=True)
class GroupPattern:
    """Where each parameter of one group sits: an index into the parameter vector (``-1`` = fixed) and values.

    ``*_value`` hold the fixed values (ignored where the index is free). ``intercept_index`` and
    ``factor_mean_index`` are ``None`` for a model without a mean structure.
    """

    loading_index: np.ndarray
    loading_value: np.ndarray
    factor_cov_index: np.ndarray
    factor_cov_value: np.ndarray
    residual_index: np.ndarray
    residual_value: np.ndarray
    intercept_index: np.ndarray | None = None
    intercept_value: np.ndarray | None = None
    factor_mean_index: np.ndarray | None = None
    factor_mean_value: np.ndarray | None = None


class ModelMatrices(NamedTuple):
    """The matrices of one group at one parameter vector; the mean parts are ``None`` without a mean structure."""

    loadings: np.ndarray
    factor_cov: np.ndarray
    residuals: np.ndarray
    intercepts: np.ndarray | None
    factor_means: np.ndarray | None


@dataclass(frozen=True)
class Parameter:
    """One free parameter: its kind, row and column in its matrix (column -1 for vectors), and its groups."""

    kind: str
    row: int
    column: int
    groups: tuple[int, ...]


@dataclass(frozen=True)
class CfaModel:
    """A confirmatory factor model of ``items`` on ``factors`` in one or more groups."""

    items: tuple[str, ...]
    factors: tuple[str, ...]
    groups: tuple[GroupPattern, ...]
    parameters: tuple[Parameter, ...]

    @property
    def n_parameters(self) -> int:
        return len(self.parameters)

    @property
    def n_groups(self) -> int:
        return len(self.groups)

    @property
    def mean_structure(self) -> bool:
        return self.groups[0].intercept_index is not None

    @property
    def n_moments(self) -> int:
        """Sample moments the model reproduces: p(p+1)/2 covariances (+ p means) per group."""
        p = len(self.items)
        return self.n_groups * (p * (p + 1) // 2 + (p if self.mean_structure else 0))

    @property
    def df(self) -> int:
        return self.n_moments - self.n_parameters

    def matrices(self, theta: np.ndarray, group: int = 0) -> ModelMatrices:
        """(loadings, factor covariances, residual variances, intercepts, factor means) of one group."""
        pattern = self.groups[group]
        theta = np.asarray(theta, dtype=np.float64)

        def fill(index: np.ndarray, value: np.ndarray) -> np.ndarray:
            return np.where(index >= 0, theta[np.maximum(index, 0)], value)

        def fill_mean(index: np.ndarray | None, value: np.ndarray | None) -> np.ndarray | None:
            return None if index is None or value is None else fill(index, value)

        return ModelMatrices(fill(pattern.loading_index, pattern.loading_value),
                             fill(pattern.factor_cov_index, pattern.factor_cov_value),
                             fill(pattern.residual_index, pattern.residual_value),
                             fill_mean(pattern.intercept_index, pattern.intercept_value),
                             fill_mean(pattern.factor_mean_index, pattern.factor_mean_value))

    def implied(self, theta: np.ndarray, group: int = 0) -> tuple[np.ndarray, np.ndarray | None]:
        """Model-implied covariance matrix and mean vector (``None`` without a mean structure) of one group."""
        loadings, phi, residuals, intercepts, factor_means = self.matrices(theta, group)
        sigma = loadings @ phi @ loadings.T + np.diag(residuals)
        mu = None if intercepts is None else intercepts + loadings @ factor_means
        return sigma, mu

    def membership(self) -> dict[str, tuple[str, ...]]:
        """Items allowed to load on each factor (free loading in any group)."""
        free = np.zeros((len(self.items), len(self.factors)), dtype=bool)
        for pattern in self.groups:
            free |= pattern.loading_index >= 0
        return {factor: tuple(item for i, item in enumerate(self.items) if free[i, j])
                for j, factor in enumerate(self.factors)}


class _Allocator:
    """Hands out parameter indices and records what each one is."""

    def __init__(self) -> None:
        self.parameters: list[Parameter] = []

    def new(self, kind: str, row: int, column: int, groups: Sequence[int]) -> int:
        self.parameters.append(Parameter(kind, row, column, tuple(groups)))
        return len(self.parameters) - 1


def factor_model(membership: Mapping[str, Sequence[str]], *, orthogonal: Sequence[tuple[str, str]] = (),
                 items: Sequence[str] | None = None) -> CfaModel:
    """One-group model: each factor loads its items, variances fixed at 1, covariances free unless listed.

    ``membership`` maps each factor to its items (an item may load on several factors, as in a bifactor
    model); ``orthogonal`` lists factor pairs whose covariance is fixed at 0. Identification fixes the
    factor variances at 1, so loadings are in the metric of the items and factor covariances are
    correlations.
    """
    factors = tuple(membership)
    if not factors:
        raise UsageError("a factor model needs at least one factor")
    if items is None:
        items = tuple(dict.fromkeys(item for factor in factors for item in membership[factor]))
    items = tuple(items)
    row = {item: i for i, item in enumerate(items)}
    p, m = len(items), len(factors)
    allocator = _Allocator()
    loading_index = np.full((p, m), FIXED)
    for j, factor in enumerate(factors):
        for item in membership[factor]:
            if item not in row:
                raise UsageError(f"factor {factor}: item {item} is not among the model's items")
            loading_index[row[item], j] = allocator.new("loading", row[item], j, (0,))
    zero_pairs = {frozenset(pair) for pair in orthogonal}
    phi_index = np.full((m, m), FIXED)
    for j in range(m):
        for k in range(j + 1, m):
            if frozenset((factors[j], factors[k])) not in zero_pairs:
                phi_index[j, k] = phi_index[k, j] = allocator.new("factor_cov", j, k, (0,))
    residual_index = np.array([allocator.new("residual", i, -1, (0,)) for i in range(p)], dtype=int)
    pattern = GroupPattern(loading_index=loading_index, loading_value=np.zeros((p, m)),
                           factor_cov_index=phi_index, factor_cov_value=np.eye(m),
                           residual_index=residual_index, residual_value=np.zeros(p))
    return CfaModel(items=items, factors=factors, groups=(pattern,), parameters=tuple(allocator.parameters))


def multigroup_model(base: CfaModel, n_groups: int, level: str, *,
                     free_intercepts: Sequence[str] = ()) -> CfaModel:
    """The one-group ``base`` model in ``n_groups`` groups with a mean structure, at an invariance ``level``.

    Identification (stated in the output): ``configural`` fixes every group's factor variances at 1 and
    factor means at 0, with loadings, intercepts and residual variances free in each group; ``metric``
    holds loadings equal and frees the factor variances of groups 2..G; ``scalar`` also holds intercepts
    equal (except the items in ``free_intercepts``, partial invariance) and frees the factor means of groups
    2..G; ``strict`` also holds residual variances equal. Fixed-zero factor covariances of the base stay zero.
    """
    if level not in LEVELS:
        raise UsageError(f"invariance level must be one of {', '.join(LEVELS)}, not {level!r}")
    if n_groups < 1:
        raise UsageError("a multi-group model needs at least one group")
    step = LEVELS.index(level)
    base_pattern = base.groups[0]
    p, m = len(base.items), len(base.factors)
    freed = {base.items.index(item) for item in free_intercepts}
    allocator = _Allocator()
    shared: dict[tuple[str, int, int], int] = {}

    def index(kind: str, row: int, column: int, group: int, equal: bool) -> int:
        key = (kind, row, column)
        if equal:
            if key not in shared:
                shared[key] = allocator.new(kind, row, column, tuple(range(n_groups)))
            return shared[key]
        return allocator.new(kind, row, column, (group,))

    patterns = []
    for g in range(n_groups):
        loading_index = np.full((p, m), FIXED)
        for i, j in zip(*np.nonzero(base_pattern.loading_index >= 0), strict=True):
            loading_index[i, j] = index("loading", int(i), int(j), g, step >= 1)
        phi_index = np.full((m, m), FIXED)
        for j in range(m):
            if step >= 1 and g > 0:
                phi_index[j, j] = index("factor_cov", j, j, g, False)
            for k in range(j + 1, m):
                if base_pattern.factor_cov_index[j, k] >= 0:
                    phi_index[j, k] = phi_index[k, j] = index("factor_cov", j, k, g, False)
        residual_index = np.array([index("residual", i, -1, g, step >= 3) for i in range(p)], dtype=int)
        intercept_index = np.array([index("intercept", i, -1, g, step >= 2 and i not in freed) for i in range(p)],
                                   dtype=int)
        mean_index = np.array([index("factor_mean", j, -1, g, False) if step >= 2 and g > 0 else FIXED
                               for j in range(m)], dtype=int)
        patterns.append(GroupPattern(
            loading_index=loading_index, loading_value=np.zeros((p, m)), factor_cov_index=phi_index,
            factor_cov_value=np.eye(m), residual_index=residual_index, residual_value=np.zeros(p),
            intercept_index=intercept_index, intercept_value=np.zeros(p), factor_mean_index=mean_index,
            factor_mean_value=np.zeros(m)))
    return CfaModel(items=base.items, factors=base.factors, groups=tuple(patterns),
                    parameters=tuple(allocator.parameters))


def with_candidate_loadings(model: CfaModel) -> tuple[CfaModel, list[tuple[int, int]]]:
    """The model with every fixed-zero loading of group 1 turned free (appended after the model's parameters).

    Used for modification indices: the derivatives of this larger model at (estimates, 0) give the score
    test of each fixed loading. Returns the larger model and the (item, factor) positions of the candidates.
    """
    if model.n_groups != 1:
        raise UsageError("modification indices are computed for one-group models")
    pattern = model.groups[0]
    parameters = list(model.parameters)
    loading_index = pattern.loading_index.copy()
    candidates = []
    for i, j in zip(*np.nonzero(pattern.loading_index < 0), strict=True):
        parameters.append(Parameter("loading", int(i), int(j), (0,)))
        loading_index[i, j] = len(parameters) - 1
        candidates.append((int(i), int(j)))
    extended = GroupPattern(loading_index=loading_index, loading_value=pattern.loading_value,
                            factor_cov_index=pattern.factor_cov_index, factor_cov_value=pattern.factor_cov_value,
                            residual_index=pattern.residual_index, residual_value=pattern.residual_value)
    return CfaModel(items=model.items, factors=model.factors, groups=(extended,),
                    parameters=tuple(parameters)), candidates


def scale_file_structure(scales: Mapping[str, Sequence[str]]) -> tuple[dict[str, tuple[str, ...]],
                                                                        list[tuple[str, str]], dict[str, list[str]]]:
    """Factors of the whole-file model from a scale file's scales, and the bifactor blocks in it.

    A scale whose items include every item of two or more other scales is a *total*: it becomes a general
    factor and those scales its group factors, all mutually orthogonal (the standard bifactor model).
    Returns the membership, the orthogonal pairs, and ``{total: [subscales]}``.
    """
    sets = {name: set(items) for name, items in scales.items()}
    totals: dict[str, list[str]] = {}
    for name, items in sets.items():
        inside = [other for other, o_items in sets.items() if other != name and o_items and o_items < items]
        if len(inside) >= 2:
            totals[name] = inside
    orthogonal: list[tuple[str, str]] = []
    for total, subscales in totals.items():
        block = [total, *subscales]
        orthogonal += [(a, b) for x, a in enumerate(block) for b in block[x + 1:]]
    # a subscale keeps correlations only with factors outside its bifactor block
    membership = {name: tuple(items) for name, items in scales.items()}
    return membership, orthogonal, totals
