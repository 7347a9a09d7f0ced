"""Reliability of one scale per subgroup: the statistics per level and Feldt's tests between the levels."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..answer_codes import ItemAnswers
from ..notes import Note, note, notes_to_json
from ..results import ResultMixin
from .reliability import ScaleReliability, scale_reliability
from .reliability_coefficients import alpha_difference_test
from .subgroups import SubgroupSplit, subgroup_blocks


@dataclass(frozen=True)
class AlphaComparison(ResultMixin):
    """Feldt's (1969) test of two subgroup alphas, with the Holm-adjusted p across all pairs of a column."""

    JSON_KEYS = {"p": "pvalue", "p_holm": "pvalue_holm"}

    level_a: str
    level_b: str
    alpha_a: float
    alpha_b: float
    n_a: int
    n_b: int
    w: float
    df1: int
    df2: int
    p: float
    p_holm: float


def compare_alphas(results: dict[str, ScaleReliability]) -> tuple[AlphaComparison, ...]:
    """Feldt's test for every pair of independent subgroups, Holm-corrected across the pairs.

    References
    ----------
    .. [1] Feldt, L. S. (1969). Psychometrika, 34, 363-373.
    .. [2] Holm, S. (1979). A simple sequentially rejective multiple test procedure. Scandinavian Journal
       of Statistics, 6, 65-70.
    """
    levels = list(results)
    rows = []
    for i, a in enumerate(levels):
        for b in levels[i + 1:]:
            ra, rb = results[a], results[b]
            w, p = alpha_difference_test(ra.alpha, ra.n_used, rb.alpha, rb.n_used)
            rows.append((a, b, ra, rb, w, p))
    p_values = np.array([row[5] for row in rows], dtype=np.float64)
    from .multiplicity import holm_adjusted

    adjusted = holm_adjusted(p_values)
    return tuple(AlphaComparison(level_a=a, level_b=b, alpha_a=ra.alpha, alpha_b=rb.alpha, n_a=ra.n_used,
                                 n_b=rb.n_used, w=w, df1=ra.n_used - 1, df2=rb.n_used - 1, p=p,
                                 p_holm=float(adjusted[index]))
                 for index, (a, b, ra, rb, w, p) in enumerate(rows))


@dataclass(frozen=True)
class GroupReliability(ResultMixin):
    """The statistics of one scale per level of one subgroup column, and the tests between the levels."""

    column: str
    levels: dict[str, ScaleReliability]
    too_small: dict[str, int]
    missing: int
    min_group: int
    comparisons: tuple[AlphaComparison, ...]
    notes: tuple[Note, ...]

    def to_dict(self) -> dict[str, Any]:
        return {"column": self.column, "levels": {k: v.to_dict() for k, v in self.levels.items()},
                "too_small": dict(self.too_small), "missing": self.missing, "min_group": self.min_group,
                "comparisons": [c.to_dict() for c in self.comparisons], "notes": notes_to_json(self.notes)}


def _rows(data: np.ndarray | ItemAnswers, positions: np.ndarray) -> np.ndarray | ItemAnswers:
    return data.subset(positions) if isinstance(data, ItemAnswers) else data[positions]


def reliability_by_group(keyed: np.ndarray | ItemAnswers, split: SubgroupSplit, **options: Any) -> GroupReliability:
    """:func:`scale_reliability` for each analysable level of ``split`` and Feldt tests between them.

    ``split`` comes from :func:`scalewright.stats.subgroups.split_by`; its levels below the minimum size
    are named in ``too_small`` but not analysed. ``options`` are passed to :func:`scale_reliability`.
    """
    data = keyed if isinstance(keyed, ItemAnswers) else np.asarray(keyed, dtype=np.float64)
    levels = {level: scale_reliability(_rows(data, positions), **options) for level, positions in split.levels.items()}
    notes: list[Note] = list(split.notes())
    if len(levels) < 2:
        notes.append(note("alphas-not-compared", column=split.column, min_size=int(split.min_size)))
    return GroupReliability(column=split.column, levels=levels, too_small=dict(split.too_small),
                            missing=split.missing, min_group=split.min_size,
                            comparisons=compare_alphas(levels) if len(levels) >= 2 else (), notes=tuple(notes))


@dataclass(frozen=True)
class ScaleReliabilityReport(ResultMixin):
    """One scale: the whole sample and its subgroups. ``to_dict`` is the contract block ``scales.<name>``.

    ``by.<column>.<level>`` holds the statistics of that subgroup, ``too_small.<column>`` the levels too small
    to analyse with their row counts, ``group_notes.<column>`` the column's notes (see
    :func:`scalewright.stats.subgroups.subgroup_blocks`); ``alpha_comparisons.<column>`` the Feldt tests.
    """

    name: str
    title: str
    overall: ScaleReliability
    groups: tuple[GroupReliability, ...] = ()
    #: ordinal reliability (``--ordinal``) and the note on whether the answers call for it
    ordinal: Any = None
    ordinal_advice: tuple[Any, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        out = {"title": self.title, **self.overall.to_dict()}
        if self.ordinal is not None:
            out["ordinal"] = self.ordinal.to_dict()
        if self.ordinal_advice:
            out["ordinal_advice"] = [advice.to_dict() for advice in self.ordinal_advice]
        if self.groups:
            out.update(subgroup_blocks(self.groups))
            out["alpha_comparisons"] = {g.column: [c.to_dict() for c in g.comparisons] for g in self.groups}
        return out
