"""The polychoric correlation matrix of a set of items: pair estimates, smoothing and weights for DWLS.

The matrix comes from :class:`~scalewright.stats.pair_tables.PairTables` (counts, so it can be built per
block of rows, per partition or per subgroup and merged first); each pair is estimated by
:func:`~scalewright.stats.polychoric.polychoric_pairs`, all pairs in one vectorised pass.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..answer_codes import MISSING
from ..errors import DataError
from ..notes import Note, note
from ..results import to_jsonable
from .pair_tables import PairTables, pair_tables
from .polychoric import polychoric_pairs, thresholds_from_counts

__all__ = ["PolychoricMatrix", "nearest_correlation", "polychoric_matrix", "polychoric_of_codes",
           "smoothed_if_needed", "SMOOTHING_FLOOR"]

#: smallest eigenvalue a smoothed matrix is given: positive definite, yet as near the estimate as possible
SMOOTHING_FLOOR = 1e-6


@dataclass(frozen=True)
class PolychoricMatrix:
    """Polychoric correlations of k items and what goes with them.

    ``correlation`` is the matrix to analyse (smoothed to positive definite when the pairwise estimates
    are not, see ``smoothed``); ``estimated`` holds the pairwise estimates as they came; ``se`` their
    standard errors (NaN on the diagonal); ``pair_n`` the rows behind each pair; ``thresholds`` each
    item's thresholds from its own answers in the rows used. ``n_used``: the rows used (listwise) or
    the smallest pair count (pairwise).
    """

    items: tuple[str, ...]
    correlation: np.ndarray
    estimated: np.ndarray
    se: np.ndarray
    pair_n: np.ndarray
    thresholds: tuple[np.ndarray, ...]
    n_used: int
    pairwise: bool
    smoothed: bool
    notes: tuple[Note, ...] = ()

    @property
    def k(self) -> int:
        return len(self.items)

    def keyed(self, reversed_mask: Sequence[bool] | np.ndarray) -> PolychoricMatrix:
        """The matrix of the reverse-keyed items: reversing an item's order of answers flips the sign of its
        correlations and mirrors its thresholds (the estimator is symmetric in the order of the levels)."""
        reversed_mask = np.asarray(reversed_mask, dtype=bool)
        if reversed_mask.shape != (self.k,):
            raise DataError(f"{reversed_mask.size} keying flags given for {self.k} items")
        sign = np.where(reversed_mask, -1.0, 1.0)
        flip = np.outer(sign, sign)
        thresholds = tuple(-t[::-1] if turned else t for t, turned in zip(self.thresholds, reversed_mask, strict=True))
        return replace(self, correlation=self.correlation * flip, estimated=self.estimated * flip,
                       thresholds=thresholds)

    def dwls_weights(self) -> np.ndarray:
        r"""Diagonal weights of diagonally weighted least squares, :math:`1/\mathrm{SE}^2` per pair (k x k).

        The diagonal is 0 (a correlation matrix's diagonal is fixed, not fitted); a pair without a
        standard error (at the bound, or undefined) weighs 0.
        """
        with np.errstate(divide="ignore"):
            weights = 1.0 / self.se**2
        weights[~np.isfinite(weights)] = 0.0
        np.fill_diagonal(weights, 0.0)
        return weights

    def to_dict(self) -> dict[str, Any]:
        def by_item(matrix: np.ndarray) -> dict[str, dict[str, Any]]:
            return {a: {b: to_jsonable(matrix[i, j]) for j, b in enumerate(self.items)}
                    for i, a in enumerate(self.items)}

        return {"items": list(self.items), "n_used": self.n_used,
                "missing": "pairwise" if self.pairwise else "listwise", "smoothed": self.smoothed,
                "correlation": by_item(self.correlation), "se": by_item(self.se),
                "thresholds": {item: to_jsonable(t) for item, t in zip(self.items, self.thresholds, strict=True)},
                "notes": [n.to_dict() for n in self.notes]}


def nearest_correlation(matrix: np.ndarray, *, floor: float = SMOOTHING_FLOOR, tolerance: float = 1e-10,
                        max_iter: int = 2000) -> np.ndarray:
    r"""The correlation matrix nearest to ``matrix`` (Frobenius norm) with every eigenvalue >= ``floor``.

    Alternating projections with Dykstra's correction (Higham, 2002): onto the matrices with eigenvalues
    at least ``floor`` (eigenvalues clipped) and onto those with unit diagonal, until the two agree.

    Hand-written because statsmodels' ``corr_nearest`` stops at its iteration limit with a warning before
    it converges on Higham's own 3 x 3 example.

    References
    ----------
    .. [1] Higham, N. J. (2002). Computing the nearest correlation matrix - a problem from finance.
       IMA Journal of Numerical Analysis, 22, 329-343.
    """
    y = np.array(matrix, dtype=float)
    correction = np.zeros_like(y)
    for _ in range(max_iter):
        r = y - correction
        values, vectors = np.linalg.eigh((r + r.T) / 2.0)
        x = (vectors * np.maximum(values, floor)) @ vectors.T
        correction = x - r
        previous, y = y, x.copy()
        np.fill_diagonal(y, 1.0)
        if float(np.linalg.norm(y - previous)) <= tolerance * max(float(np.linalg.norm(y)), 1.0):
            break
    # the last projection restored the unit diagonal; rescale so eigenvalues stay >= floor / 2 exactly
    values, vectors = np.linalg.eigh(y)
    if values.min() < floor / 2.0:
        y = (vectors * np.maximum(values, floor)) @ vectors.T
        scale = np.sqrt(np.diag(y))
        y = y / np.outer(scale, scale)
    return (y + y.T) / 2.0


def smoothed_if_needed(correlation: np.ndarray) -> tuple[np.ndarray, Note | None]:
    """The matrix itself when positive definite (smallest eigenvalue >= :data:`SMOOTHING_FLOOR`), else
    :func:`nearest_correlation` and a ``polychoric-smoothed`` note; a matrix with NaN is left as it is."""
    correlation = np.asarray(correlation, dtype=float)
    if correlation.shape[0] < 2 or not np.isfinite(correlation).all():
        return correlation.copy(), None
    smallest = float(np.linalg.eigvalsh(correlation)[0])
    if smallest >= SMOOTHING_FLOOR:
        return correlation.copy(), None
    nearest = nearest_correlation(correlation)
    return nearest, note("polychoric-smoothed", min_eigenvalue=smallest,
                         max_change=float(np.abs(nearest - correlation).max()), floor=SMOOTHING_FLOOR)


def _pair_names(items: Sequence[str], pairs: np.ndarray) -> tuple[str, ...]:
    return tuple(f"{items[i]}/{items[j]}" for i, j in pairs)


def polychoric_matrix(tables: PairTables, *, item_names: Sequence[str], pairwise: bool = False,
                      smooth: bool = True) -> PolychoricMatrix:
    """Polychoric correlations of every pair of the tables' items (:func:`polychoric_pairs`).

    Parameters
    ----------
    tables : PairTables
        Counts of the rows to use: built from the complete rows only for listwise deletion, from every
        row for pairwise (each pair then uses the rows answering both).
    item_names : sequence of str
    pairwise : bool
        Only how ``n_used`` is counted: the smallest pair count (pairwise) or the rows (listwise).
    smooth : bool
        Replace a matrix that is not positive definite by :func:`nearest_correlation` (and say so).

    Notes
    -----
    Notes (codes): ``polychoric-undefined`` (pairs with an item answered at one level only: NaN),
    ``polychoric-empty-cells-corrected`` (pairs refitted after adding 0.5 to their empty cells),
    ``polychoric-at-bound`` (pairs whose estimate stays at +-RHO_BOUND), ``polychoric-smoothed`` (smallest
    eigenvalue before, largest change of a correlation).
    """
    items = tuple(str(name) for name in item_names)
    k = tables.k
    if len(items) != k:
        raise DataError(f"{len(items)} item name(s) given for pair tables of {k} item(s)")
    answered = tables.answered()
    upper = np.transpose(np.triu_indices(k, 1))
    estimates = polychoric_pairs(answered[upper[:, 0], upper[:, 1]]) if len(upper) else None
    estimated = np.eye(k)
    se = np.full((k, k), np.nan)
    notes: list[Note] = []
    if estimates is not None:
        for target, values in ((estimated, estimates.rho), (se, estimates.se)):
            target[upper[:, 0], upper[:, 1]] = values
            target[upper[:, 1], upper[:, 0]] = values
        for status, code in ((3, "polychoric-undefined"), (1, "polychoric-empty-cells-corrected"),
                             (2, "polychoric-at-bound")):
            hit = upper[estimates.status == status]
            if len(hit):
                notes.append(note(code, pairs=_pair_names(items, hit), n_pairs=len(hit)))
    tallies = tables.item_tallies()
    single = (tallies > 0).sum(axis=1) < 2
    estimated[single, single] = np.nan
    pair_n = tables.pair_counts()
    n_used = int(pair_n.min()) if pairwise and k else tables.n_rows if k else 0
    correlation, smoothing = smoothed_if_needed(estimated) if smooth else (estimated.copy(), None)
    smoothed = smoothing is not None
    if smoothing is not None:
        notes.append(smoothing)
    thresholds = tuple(thresholds_from_counts(row) for row in tallies)
    return PolychoricMatrix(items=items, correlation=correlation, estimated=estimated, se=se, pair_n=pair_n,
                            thresholds=thresholds, n_used=n_used, pairwise=pairwise, smoothed=smoothed,
                            notes=tuple(notes))


def polychoric_of_codes(codes: np.ndarray, n_levels: int, *, item_names: Sequence[str],
                        pairwise: bool = False, smooth: bool = True) -> PolychoricMatrix:
    """:func:`polychoric_matrix` straight from one-byte answer codes (n x k, 255 = missing).

    Listwise (default): the rows answering every item; pairwise: every row, each pair on the rows
    answering both.
    """
    codes = np.asarray(codes)
    if codes.dtype != np.uint8 or codes.ndim != 2:
        raise DataError("answer codes must be a respondents x items matrix of uint8")
    if not pairwise and codes.shape[1]:
        complete = np.ones(codes.shape[0], dtype=bool)
        for j in range(codes.shape[1]):
            complete &= codes[:, j] != MISSING
        if not complete.all():
            codes = codes[complete]
    return polychoric_matrix(pair_tables(codes, n_levels), item_names=item_names, pairwise=pairwise,
                             smooth=smooth)
