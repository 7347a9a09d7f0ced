"""The results of the dimensionality analysis: per-scale unidimensionality, item flags, the whole structure."""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..notes import not_computable, notes_to_json
from ..results import ResultMixin, to_jsonable
from .adequacy import (
    BartlettResult,
    KMOResult,
)
from .factoring import FactorSolution
from .parallel import (
    ParallelAnalysisResult,
)

#: common practice, no source: a salient loading is at least .40; a cross-loading above .30 muddies an item
MIN_LOADING = 0.40
MAX_CROSS_LOADING = 0.30
#: Kaiser (1974) calls a KMO below .50 unacceptable
MIN_KMO = 0.50
#: common practice, no source: a first-to-second eigenvalue ratio of 3 or more reads as one dominant dimension
MIN_EIGEN_RATIO = 3.0


# --------------------------------------------------------------------------- result objects

@dataclass(frozen=True)
class UnidimensionalityResult(ResultMixin):
    """How strongly one dimension dominates a scale's items.

    ``eigen_ratio`` is the first eigenvalue of the item correlation matrix over the second;
    ``variance_one_factor`` the share of the items' total variance a one-factor model explains.
    """

    k: int
    n_used: int
    n_set_aside: int
    eigenvalues: np.ndarray
    eigen_ratio: float | None
    variance_one_factor: float | None
    loadings_one_factor: np.ndarray
    #: :class:`~scalewright.notes.Note` values (and plain texts from the factoring library's messages)
    notes: tuple[Any, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        out = {"k": self.k, "n_used": self.n_used, "n_set_aside": self.n_set_aside,
               "eigen_ratio": to_jsonable(self.eigen_ratio),
               "variance_one_factor_pct": to_jsonable(None if self.variance_one_factor is None
                                                      else 100 * self.variance_one_factor),
               "eigenvalues": to_jsonable(self.eigenvalues)}
        unavailable = [not_computable(key, self._reason(key)) for key in ("eigen_ratio", "variance_one_factor_pct")
                       if out[key] is None]
        return {**out, "notes": [*notes_to_json(self.notes), *(n.to_dict() for n in unavailable)]}

    def _reason(self, key: str) -> str:
        """Why ``key`` is None, from what the result holds (the order of the checks that set it so)."""
        if self.k < 2:
            return "fewer-than-2-items"
        if self.n_used < 3:
            return "fewer-than-3-rows"
        if not np.isfinite(np.asarray(self.eigenvalues, dtype=float)).all():
            return "no-variance"
        if key == "eigen_ratio":
            return "zero-second-eigenvalue"
        return "fewer-than-3-items" if self.k < 3 else "one-factor-fit-failed"


@dataclass(frozen=True)
class StructureFlag(ResultMixin):
    """Something about one item (or, with ``item`` None, one scale) a researcher should look at."""

    item: str | None
    code: str
    #: left empty: ``scalewright.present.messages`` words the flag from ``code`` and ``values``
    message: str
    scale: str | None = None
    values: Mapping[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {"item": self.item, "scale": self.scale, "code": self.code, "message": self.message}
        if self.values:
            out["values"] = to_jsonable(dict(self.values))
        return out


@dataclass(frozen=True)
class StructureResult(ResultMixin):
    """Everything ``scalewright structure`` reports. ``to_dict`` is the JSON contract."""

    items: tuple[str, ...]
    item_scale: dict[str, str]
    n_used: int
    n_set_aside: int
    kmo: KMOResult
    bartlett: BartlettResult
    parallel: ParallelAnalysisResult | None
    solution: FactorSolution | None
    n_factors_rule: str
    factor_for_scale: dict[str, int | None]
    unidimensionality: dict[str, UnidimensionalityResult]
    flags: tuple[StructureFlag, ...]
    notes: tuple[Any, ...]
    min_loading: float = MIN_LOADING
    max_cross_loading: float = MAX_CROSS_LOADING
    dropped_items: tuple[str, ...] = field(default=())
    #: the item correlation matrix analysed (of ``items``), ``pearson`` or ``polychoric``, and its notes
    correlation: np.ndarray | None = None
    correlation_type: str = "pearson"
    correlation_notes: tuple[Any, ...] = ()
    missing: Any = None  # stats.missing.MissingHandling

    @property
    def factor_names(self) -> tuple[str, ...]:
        m = 0 if self.solution is None else self.solution.n_factors
        return tuple(f"F{j + 1}" for j in range(m))

    def to_dict(self) -> dict[str, Any]:
        names = self.factor_names
        solution = self.solution
        return {
            "n_used": self.n_used,
            "n_set_aside": self.n_set_aside,
            "items": list(self.items),
            "dropped_items": list(self.dropped_items),
            "kmo": to_jsonable(self.kmo.overall),
            "kmo_items": {item: to_jsonable(v) for item, v in zip(self.items, self.kmo.per_item, strict=True)},
            "bartlett": self.bartlett.to_dict(),
            "parallel": None if self.parallel is None else self.parallel.to_dict(),
            "n_factors": len(names),
            "n_factors_rule": self.n_factors_rule,
            "method": None if solution is None else solution.method,
            "rotation": None if solution is None else solution.rotation,
            "factors": list(names),
            "loadings": {} if solution is None else
            {item: to_jsonable(row) for item, row in zip(self.items, solution.loadings, strict=True)},
            "communalities": {} if solution is None else
            {item: to_jsonable(v) for item, v in zip(self.items, solution.communalities, strict=True)},
            "variance_explained_pct": [] if solution is None else to_jsonable(100 * solution.variance_explained),
            "factor_correlations": [] if solution is None else to_jsonable(solution.factor_correlations),
            "factor_for_scale": {scale: (None if j is None else names[j]) for scale, j in self.factor_for_scale.items()},
            "unidimensionality": {scale: u.to_dict() for scale, u in self.unidimensionality.items()},
            "thresholds": {"min_loading": self.min_loading, "max_cross_loading": self.max_cross_loading,
                           "min_kmo": MIN_KMO, "min_eigen_ratio": MIN_EIGEN_RATIO},
            "flags": [f.to_dict() for f in self.flags],
            "notes": [*notes_to_json(self.notes), *([] if self.missing is None else self.missing.note_dicts)],
            "correlation_type": self.correlation_type,
            "correlation": {} if self.correlation is None else
            {a: {b: to_jsonable(self.correlation[i, j]) for j, b in enumerate(self.items)}
             for i, a in enumerate(self.items)},
            "correlation_notes": [n.to_dict() for n in self.correlation_notes],
            **({} if self.missing is None else self.missing.to_dict()),
        }
