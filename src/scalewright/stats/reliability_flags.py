"""The flags of one scale's reliability analysis: mis-keyed, weak and redundant items, low or excess alpha.

Flags are codes with the numbers behind them; :mod:`scalewright.present.messages` words them.
"""
from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..notes import Note
from ..results import ResultMixin, to_jsonable
from .reliability_coefficients import cronbach_alpha_from_cov


@dataclass(frozen=True)
class ReliabilityThresholds(ResultMixin):
    """Cut-offs of the flags; every one is a default that a caller may override.

    Sources (see docs/reliability.md): item-rest r below .30 and alpha below .70 are common practice,
    usually traced to Nunnally & Bernstein (1994); alpha above .95 suggests redundant items (Streiner,
    2003); an inter-item r above .85 as "the same question twice" is common practice, no single source.
    """

    weak_item_rest_r: float = 0.30
    redundant_r: float = 0.85
    low_alpha: float = 0.70
    excess_alpha: float = 0.95


#: the default cut-offs, one shared instance (a frozen dataclass, so safe as a default argument)
DEFAULT_THRESHOLDS = ReliabilityThresholds()


@dataclass(frozen=True)
class ReliabilityFlag(ResultMixin):
    """A finding worth a look: ``item`` is None for scale-level flags; ``items`` names both of a pair."""

    item: str | None
    code: str
    message: str
    value: float = math.nan
    items: tuple[str, ...] = ()
    values: Mapping[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        # ``message`` is left empty here and worded by scalewright.present.messages (see ``as_note``) when
        # a document is rendered; ``values`` are the numbers behind it
        out: dict[str, Any] = {"item": self.item, "code": self.code, "message": self.message,
                               "value": to_jsonable(self.value)}
        if self.items:
            out["items"] = list(self.items)
        if self.values:
            out["values"] = to_jsonable(dict(self.values))
        return out

    def as_note(self) -> Note:
        """The flag as a code with values, for :func:`scalewright.present.messages.describe`."""
        return Note(code=self.code, values=dict(self.values))


#: a correlation or loading this close to zero is zero up to rounding, and has no sign to flag
#: (numerical tolerance, common practice, no source)
_ROUNDING_NOISE = 1e-9
#: a first-factor loading must be at least this far below zero for the item to be called mis-keyed; a loading
#: nearer zero says the item measures little of the factor, not that it points the other way (it gets the
#: weak-item flag instead). Common practice, no source: loadings below .10 in size are read as negligible.
MISKEY_MIN_LOADING = 0.10


def first_factor_signs(loadings: np.ndarray, corr: np.ndarray) -> np.ndarray:
    """Loadings on the scale's first factor, signed so that most of the scale's items load positively.

    The one-factor fit's standardized loadings when they are defined; otherwise (the fit failed or was not
    possible) the first principal axis of the correlation matrix, scaled by the square root of its
    eigenvalue. A factor's sign is arbitrary; it is chosen so that most items load positively (on a tie,
    so that the loadings sum to a positive number), so the items keyed against the majority of the scale
    load negatively. When half the items point each way the data cannot say which half is mis-keyed.
    NaN where undefined.
    """
    loadings = np.asarray(loadings, dtype=np.float64)
    k = loadings.size
    if np.isfinite(loadings).all() or k < 3:
        values = loadings.copy()
    elif np.isfinite(corr).all():
        eigenvalues, vectors = np.linalg.eigh(corr)
        values = vectors[:, -1] * math.sqrt(max(float(eigenvalues[-1]), 0.0))
    else:
        return np.full(k, np.nan)
    if np.isfinite(values).all():
        positive, negative = int((values > 0).sum()), int((values < 0).sum())
        if negative > positive or (negative == positive and values.sum() < 0):
            values = -values
    return values


def reliability_flags(*, item_names: Sequence[str], alpha: float, item_rest_r: np.ndarray,
                      loadings: np.ndarray, alpha_reversed: np.ndarray, corr: np.ndarray,
                      reversed_items: Sequence[str] = (),
                      thresholds: ReliabilityThresholds = DEFAULT_THRESHOLDS,
                      cov: np.ndarray | None = None) -> tuple[ReliabilityFlag, ...]:
    """The flags of one scale: codes of the JSON contract with the numbers behind them.

    ``miskey-suspect`` rests on the sign of the item's loading on the scale's first factor
    (:func:`first_factor_signs`): below ``-MISKEY_MIN_LOADING`` the item runs against the scale. Item-rest r
    is given as support but does not decide: when two of five items point the other way, the rest of a
    correctly keyed item holds both of them and its item-rest r can be near zero or negative. With two items
    (no factor to speak of) a negative correlation flags both. ``alpha_reversed`` in a miskey flag's values is
    alpha with *every* flagged item reversed at once (from ``cov``), the scale the advice leads to.
    The sentences are written by :mod:`scalewright.present.messages`.
    """
    flags: list[ReliabilityFlag] = []
    declared = set(reversed_items)
    k = len(item_names)
    signed = first_factor_signs(loadings, corr)
    suspect = np.zeros(k, dtype=bool)
    for j in range(k):
        r, loading = float(item_rest_r[j]), float(signed[j])
        if k >= 3 and math.isfinite(loading):
            suspect[j] = loading < -MISKEY_MIN_LOADING
        elif k == 2:
            suspect[j] = math.isfinite(r) and r < -_ROUNDING_NOISE
    joint_alpha = float(alpha_reversed[int(np.flatnonzero(suspect)[0])]) if suspect.sum() == 1 else math.nan
    if suspect.sum() > 1 and cov is not None and k >= 3:
        sign = np.where(suspect, -1.0, 1.0)
        joint_alpha = cronbach_alpha_from_cov(np.asarray(cov, dtype=np.float64) * np.outer(sign, sign))
    if k == 2:
        joint_alpha = math.nan  # reversing both items of a pair changes nothing
    flagged = tuple(name for name, is_suspect in zip(item_names, suspect, strict=True) if is_suspect)
    for j, name in enumerate(item_names):
        r = float(item_rest_r[j])
        if suspect[j]:
            flags.append(ReliabilityFlag(
                item=name, code="miskey-suspect", value=r, message="",
                values={"item": name, "loading": float(signed[j]), "item_rest_r": r,
                        "declared_reversed": name in declared, "alpha": alpha, "alpha_reversed": joint_alpha,
                        "reversed_together": flagged, "min_loading": MISKEY_MIN_LOADING}))
        elif math.isfinite(r) and r < thresholds.weak_item_rest_r:
            flags.append(ReliabilityFlag(
                item=name, code="weak-item", value=r, message="",
                values={"item": name, "item_rest_r": r, "cutoff": thresholds.weak_item_rest_r}))
    for i in range(k):
        for j in range(i + 1, k):
            r = float(corr[i, j])
            if math.isfinite(r) and r > thresholds.redundant_r:
                a, b = item_names[i], item_names[j]
                flags.append(ReliabilityFlag(
                    item=a, code="redundant-pair", value=r, items=(a, b), message="",
                    values={"item": a, "other": b, "r": r, "cutoff": thresholds.redundant_r}))
    if math.isfinite(alpha) and alpha < thresholds.low_alpha:
        flags.append(ReliabilityFlag(item=None, code="low-reliability", value=alpha, message="",
                                     values={"alpha": alpha, "cutoff": thresholds.low_alpha}))
    if math.isfinite(alpha) and alpha > thresholds.excess_alpha:
        flags.append(ReliabilityFlag(item=None, code="excess-reliability", value=alpha, message="",
                                     values={"alpha": alpha, "cutoff": thresholds.excess_alpha}))
    return tuple(flags)
